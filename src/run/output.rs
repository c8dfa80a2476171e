//! Writing output files safely: to a temporary file in the same folder, then renamed over the
//! target, so a failed or interrupted run never leaves a half-written file, and an existing file
//! is replaced only when asked.

use crate::error::{Error, InputError, RunError};
use std::io::Write;
use std::path::{Path, PathBuf};

/// The temporary name used while `path` is written.
pub(crate) fn temporary_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "output".into(), |n| n.to_string_lossy().into_owned());
    path.with_file_name(format!(".{name}.partial-{}", std::process::id()))
}

/// Refuse to replace an existing file unless `force`.
pub(crate) fn check_writable(path: &Path, force: bool) -> Result<(), Error> {
    if path.is_dir() {
        return Err(InputError::file(
            path.display().to_string(),
            "is a directory; give a file name",
        )
        .with_example("--output results/study.json")
        .into());
    }
    if path.exists() && !force {
        return Err(InputError::file(
            path.display().to_string(),
            "already exists; add --force to replace it",
        )
        .with_example("--force")
        .into());
    }
    Ok(())
}

/// Refuse, before any work, an output file whose folder does not exist.
pub(crate) fn check_folder(path: &Path) -> Result<(), Error> {
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty())
        && !parent.is_dir()
    {
        return Err(InputError::file(
            path.display().to_string(),
            format!(
                "cannot be written: its folder {} does not exist (create it first)",
                parent.display()
            ),
        )
        .with_example("mkdir -p results && radforce run study.toml -o results/study.json")
        .into());
    }
    Ok(())
}

/// Write `bytes` to `path` through a temporary file and a rename.
pub(crate) fn write_atomic(path: &Path, bytes: &[u8], force: bool) -> Result<(), Error> {
    check_writable(path, force)?;
    let tmp = temporary_path(path);
    let fail = |e: std::io::Error| -> Error {
        let _ = std::fs::remove_file(&tmp);
        RunError::Output {
            path: path.display().to_string(),
            message: e.to_string(),
        }
        .into()
    };
    let mut file = std::fs::File::create(&tmp).map_err(fail)?;
    file.write_all(bytes).map_err(fail)?;
    file.sync_all().map_err(fail)?;
    drop(file);
    std::fs::rename(&tmp, path).map_err(fail)?;
    Ok(())
}
