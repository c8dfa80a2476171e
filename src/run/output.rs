//! Writing output files safely: to a temporary file in the same folder, then moved onto the
//! target, so a failed or interrupted run never leaves a half-written file, and an existing file
//! is replaced only when asked.
//!
//! The temporary file is created exclusively (`O_CREAT | O_EXCL`, which also refuses a planted
//! symbolic link) under an unpredictable name. Without `--force` it is published by a hard link,
//! which fails if the target appeared meanwhile (another run writing the same file), so the
//! check and the write are one atomic step; with `--force` by a rename, which replaces. A stop
//! asked for (Ctrl-C) before the publish leaves the old file as it was. Temporary files still
//! open when the process is told to leave at once are removed by [`remove_pending`].

use crate::engine::progress;
use crate::error::{Error, InputError, RunError};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// Temporary files being written, removed if the process has to leave at once.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Remove every temporary file or folder still being written (from the second Ctrl-C, before
/// exiting).
pub fn remove_pending() {
    if let Ok(pending) = PENDING.lock() {
        for p in pending.iter() {
            if p.is_dir() {
                let _ = std::fs::remove_dir_all(p);
            } else {
                let _ = std::fs::remove_file(p);
            }
        }
    }
}

fn register(path: &Path) {
    if let Ok(mut pending) = PENDING.lock() {
        pending.push(path.to_path_buf());
    }
}

fn unregister(path: &Path) {
    if let Ok(mut pending) = PENDING.lock() {
        pending.retain(|p| p != path);
    }
}

/// A temporary name beside `path`: hidden, with 64 random bits from the operating system.
fn temporary_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "output".into(), |n| n.to_string_lossy().into_owned());
    // Keep the whole name within the usual 255-byte limit.
    let name: String = name.chars().take(180).collect();
    path.with_file_name(format!(".{name}.{:016x}.partial", rand::random::<u64>()))
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

/// Refuse, before any work, an output file whose folder does not exist or cannot be written
/// there (the check creates and removes a temporary file, as the real write will).
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
    if path.file_name().is_some_and(|n| n.len() > 255) {
        return Err(InputError::file(
            path.display().to_string(),
            "cannot be written: its name is longer than the 255 bytes file systems allow",
        )
        .with_example("--output results/study.json")
        .into());
    }
    let probe = temporary_path(path);
    match std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(_) => {
            let _ = std::fs::remove_file(&probe);
            Ok(())
        }
        Err(e) => Err(InputError::file(
            path.display().to_string(),
            format!("cannot be written there: {e}"),
        )
        .with_example("--output results/study.json")
        .into()),
    }
}

/// Refuse two outputs that are one file, or an output that is an input of the run, before any
/// trial: one would silently replace the other.
pub(crate) fn check_distinct(outputs: &[&Path], inputs: &[&Path]) -> Result<(), Error> {
    // Compare what the paths name: the canonical folder and the file name.
    let key = |p: &Path| -> Option<PathBuf> {
        let parent = p.parent().filter(|d| !d.as_os_str().is_empty());
        let dir = parent.map_or_else(|| PathBuf::from("."), Path::to_path_buf);
        Some(dir.canonicalize().ok()?.join(p.file_name()?))
    };
    for (i, a) in outputs.iter().enumerate() {
        let ka = key(a);
        for b in &outputs[i + 1..] {
            if ka.is_some() && ka == key(b) {
                return Err(InputError::file(
                    a.display().to_string(),
                    format!(
                        "is given as two outputs (also as {}); one would replace the other",
                        b.display()
                    ),
                )
                .with_example("--output study.json --samples study-samples.csv")
                .into());
            }
        }
        for b in inputs {
            let same_file = match (std::fs::canonicalize(a), std::fs::canonicalize(b)) {
                (Ok(x), Ok(y)) => x == y,
                _ => false,
            };
            if same_file || (ka.is_some() && ka == key(b)) {
                return Err(InputError::file(
                    a.display().to_string(),
                    format!(
                        "is the input {} of this run; writing the report there would destroy it",
                        b.display()
                    ),
                )
                .with_example("radforce run study.toml --output study-report.txt")
                .into());
            }
        }
    }
    Ok(())
}

/// Write `bytes` to `path` through an exclusive temporary file, published without replacing a
/// file that is there (unless `force`).
pub(crate) fn write_atomic(path: &Path, bytes: &[u8], force: bool) -> Result<(), Error> {
    check_writable(path, force)?;
    if progress::interrupted() {
        return Err(RunError::Interrupted.into());
    }
    let tmp = temporary_path(path);
    let output_error = |e: std::io::Error| -> Error {
        RunError::Output {
            path: path.display().to_string(),
            message: e.to_string(),
        }
        .into()
    };
    let mut file = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&tmp)
        .map_err(output_error)?;
    register(&tmp);
    let cleanup = |e: Error| -> Error {
        let _ = std::fs::remove_file(&tmp);
        unregister(&tmp);
        e
    };
    file.write_all(bytes)
        .and_then(|()| file.sync_all())
        .map_err(|e| cleanup(output_error(e)))?;
    drop(file);
    if progress::interrupted() {
        return Err(cleanup(RunError::Interrupted.into()));
    }
    let published = if force {
        std::fs::rename(&tmp, path)
    } else {
        // A hard link is created only if nothing has the name: atomic check and publish. Where
        // the file system has no hard links, check and rename (the race then remains).
        match std::fs::hard_link(&tmp, path) {
            Ok(()) => std::fs::remove_file(&tmp),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => Err(e),
            Err(_) if path.exists() => Err(std::io::ErrorKind::AlreadyExists.into()),
            Err(_) => std::fs::rename(&tmp, path),
        }
    };
    match published {
        Ok(()) => {
            unregister(&tmp);
            Ok(())
        }
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => Err(cleanup(
            InputError::file(
                path.display().to_string(),
                "appeared while this run was working (another run writing the same file?); \
                 it was left as it is; add --force to replace it",
            )
            .with_example("--force")
            .into(),
        )),
        Err(e) => Err(cleanup(output_error(e))),
    }
}

/// Write a set of files (relative names, with subfolders) into `dir` as one step: all are
/// written into a hidden staging folder beside `dir` first, so a failure leaves nothing of the
/// new set behind; then the staging folder becomes `dir` (when `dir` does not exist) or each file
/// is moved into place. Every name is checked first: a file in the way of a folder, or an
/// existing file without `force`, is refused before anything is written.
pub(crate) fn write_folder(
    dir: &Path,
    files: &[(String, Vec<u8>)],
    force: bool,
) -> Result<(), Error> {
    let refuse = |path: &Path, why: &str| -> Error {
        InputError::file(path.display().to_string(), why.to_string())
            .with_example("radforce export data/torsion-vacuum-20w.toml bundle --force")
            .into()
    };
    for (name, _) in files {
        let path = dir.join(name);
        let mut folder = path.parent();
        while let Some(f) = folder.filter(|f| f.starts_with(dir) && f != &dir) {
            if f.exists() && !f.is_dir() {
                return Err(refuse(
                    f,
                    "is a file where the bundle needs a folder; move it away",
                ));
            }
            folder = f.parent();
        }
        check_writable(&path, force)?;
    }
    if progress::interrupted() {
        return Err(RunError::Interrupted.into());
    }
    let output_error = |path: &Path, e: std::io::Error| -> Error {
        RunError::Output {
            path: path.display().to_string(),
            message: e.to_string(),
        }
        .into()
    };
    let stage = temporary_path(dir);
    std::fs::create_dir(&stage).map_err(|e| output_error(&stage, e))?;
    register(&stage);
    let cleanup = |e: Error| -> Error {
        let _ = std::fs::remove_dir_all(&stage);
        unregister(&stage);
        e
    };
    for (name, bytes) in files {
        let path = stage.join(name);
        let written = path
            .parent()
            .map_or(Ok(()), std::fs::create_dir_all)
            .and_then(|()| std::fs::write(&path, bytes));
        written.map_err(|e| cleanup(output_error(&dir.join(name), e)))?;
    }
    if progress::interrupted() {
        return Err(cleanup(RunError::Interrupted.into()));
    }
    if !dir.exists() {
        std::fs::rename(&stage, dir).map_err(|e| cleanup(output_error(dir, e)))?;
        unregister(&stage);
        return Ok(());
    }
    for (name, _) in files {
        let (from, to) = (stage.join(name), dir.join(name));
        let moved = to
            .parent()
            .map_or(Ok(()), std::fs::create_dir_all)
            .and_then(|()| std::fs::rename(&from, &to));
        moved.map_err(|e| cleanup(output_error(&to, e)))?;
    }
    let _ = std::fs::remove_dir_all(&stage);
    unregister(&stage);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!(
            "radforce-output-{name}-{}-{:x}",
            std::process::id(),
            rand::random::<u32>()
        ));
        std::fs::create_dir_all(&dir).unwrap();
        dir
    }

    #[test]
    fn a_file_that_appears_is_not_replaced_and_nothing_is_left_behind() {
        let dir = scratch("appear");
        let path = dir.join("r.txt");
        write_atomic(&path, b"first", false).unwrap();
        // Without --force an existing file is refused, with it replaced.
        assert!(write_atomic(&path, b"second", false).is_err());
        assert_eq!(std::fs::read(&path).unwrap(), b"first");
        write_atomic(&path, b"third", true).unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"third");
        // Only the report is in the folder: no temporary file left.
        let names: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
        assert_eq!(names.len(), 1);
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn temporary_names_are_unpredictable_and_never_follow_a_link() {
        let dir = scratch("link");
        let path = dir.join("r.txt");
        let (a, b) = (temporary_path(&path), temporary_path(&path));
        assert_ne!(a, b);
        assert!(
            a.file_name()
                .unwrap()
                .to_string_lossy()
                .starts_with(".r.txt.")
        );
        // A link planted at the temporary name is refused, its target untouched.
        let target = dir.join("precious");
        std::fs::write(&target, b"keep").unwrap();
        std::os::unix::fs::symlink(&target, &a).unwrap();
        let opened = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&a);
        assert!(opened.is_err());
        assert_eq!(std::fs::read(&target).unwrap(), b"keep");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn outputs_that_are_one_file_or_an_input_are_refused() {
        let dir = scratch("same");
        let scenario = dir.join("s.toml");
        std::fs::write(&scenario, b"title = \"x\"").unwrap();
        let dotted = dir.join(".").join("s.toml");
        assert!(check_distinct(&[&dotted], &[&scenario]).is_err());
        let a = dir.join("x.csv");
        assert!(check_distinct(&[&a, &dir.join("./x.csv")], &[]).is_err());
        assert!(check_distinct(&[&a, &dir.join("y.csv")], &[&scenario]).is_ok());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}

#[cfg(test)]
mod races {
    use super::*;

    // Racing writers (200 rounds of 8 threads writing one new file without --force): exactly
    // one wins, the file holds the winner's bytes whole, and no temporary file is left.
    #[test]
    fn racing_writers_never_both_win() {
        let dir = std::env::temp_dir().join(format!(
            "radforce-races-{}-{:x}",
            std::process::id(),
            rand::random::<u32>()
        ));
        std::fs::create_dir_all(&dir).unwrap();
        for round in 0..200 {
            let path = dir.join(format!("r{round}.txt"));
            let winners: Vec<usize> = std::thread::scope(|s| {
                let handles: Vec<_> = (0..8)
                    .map(|t| {
                        let path = path.clone();
                        s.spawn(move || {
                            let bytes = vec![b'a' + t as u8; 4096];
                            write_atomic(&path, &bytes, false).ok().map(|()| t)
                        })
                    })
                    .collect();
                handles
                    .into_iter()
                    .filter_map(|h| h.join().unwrap())
                    .collect()
            });
            assert_eq!(winners.len(), 1, "round {round}: {winners:?}");
            let content = std::fs::read(&path).unwrap();
            assert_eq!(content, vec![b'a' + winners[0] as u8; 4096]);
        }
        let left = std::fs::read_dir(&dir)
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .contains("partial")
            })
            .count();
        assert_eq!(left, 0);
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
