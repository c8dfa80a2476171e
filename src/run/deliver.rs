//! Delivering a report: the figures into `--plots`, the report into `--output` or back to the
//! caller for stdout. Output paths are checked before any work, so a run never ends unable to
//! write what it made.

use super::options::OutputArgs;
use super::output;
use crate::error::{Error, InputError, RunError};
use crate::report::{self, Context, Report};
use std::path::{Component, Path, PathBuf};

/// Refuse before any work what could not be written afterwards: an existing file without
/// `--force`, a missing or unwritable folder, a report that is one of the run's `inputs` or is
/// also one of its `others` outputs.
pub(crate) fn check_outputs(
    out: &OutputArgs,
    inputs: &[&Path],
    others: &[&Path],
) -> Result<(), Error> {
    for path in out
        .output
        .iter()
        .map(PathBuf::as_path)
        .chain(others.iter().copied())
    {
        output::check_writable(path, out.force)?;
        output::check_folder(path)?;
    }
    let outputs: Vec<&Path> = out
        .output
        .iter()
        .map(PathBuf::as_path)
        .chain(others.iter().copied())
        .collect();
    output::check_distinct(&outputs, inputs)?;
    if let Some(dir) = &out.plots
        && dir.exists()
        && !dir.is_dir()
    {
        return Err(
            InputError::file(dir.display().to_string(), "exists and is not a folder")
                .with_example("--plots figures")
                .into(),
        );
    }
    Ok(())
}

fn numerical(m: String) -> Error {
    Error::Run(RunError::Numerical(m))
}

/// The width of the terminal on stdout, when stdout is one (from the kernel's window size,
/// else `COLUMNS`), kept within 60 to 240 columns.
fn terminal_width() -> Option<usize> {
    use std::io::IsTerminal;
    if !std::io::stdout().is_terminal() {
        return None;
    }
    #[cfg(target_os = "linux")]
    {
        let mut size = libc::winsize {
            ws_row: 0,
            ws_col: 0,
            ws_xpixel: 0,
            ws_ypixel: 0,
        };
        // SAFETY: TIOCGWINSZ fills the winsize it is given; fd 1 is open (it is a terminal).
        let ok = unsafe { libc::ioctl(1, libc::TIOCGWINSZ, &mut size) } == 0;
        if ok && size.ws_col > 0 {
            return Some(usize::from(size.ws_col).clamp(60, 240));
        }
    }
    std::env::var("COLUMNS")
        .ok()
        .and_then(|c| c.trim().parse::<usize>().ok())
        .map(|c| c.clamp(60, 240))
}

/// Write the figures and the report; the report's bytes come back when they go to stdout.
pub(crate) fn deliver(report: Report<'_>, out: &OutputArgs) -> Result<Vec<u8>, Error> {
    let context = Context {
        figures: out
            .plots
            .as_ref()
            .map(|d| figure_link(out.output.as_deref(), d)),
        plot_format: out.plot_format,
        text_width: match out.output {
            None => terminal_width().unwrap_or(report::TEXT_WIDTH),
            Some(_) => report::TEXT_WIDTH,
        },
    };
    // Render first: a report that cannot be written leaves no figure behind either.
    let bytes = report::exporter(out.format, &context)
        .render(&report)
        .map_err(numerical)?;
    if let Some(dir) = &out.plots {
        let figures = report::plots::report_figures(&report, out.plot_format).map_err(numerical)?;
        std::fs::create_dir_all(dir).map_err(|e| RunError::Output {
            path: dir.display().to_string(),
            message: e.to_string(),
        })?;
        for figure in &figures {
            output::write_atomic(&dir.join(&figure.file), &figure.bytes, out.force)?;
        }
    }
    match &out.output {
        Some(path) => {
            output::write_atomic(path, &bytes, out.force)?;
            Ok(Vec::new())
        }
        None => Ok(bytes),
    }
}

/// The folder of the figures as a report links to it: relative to the report's own folder (the
/// working folder when the report goes to stdout), with '/' separators and spaces as %20, so
/// that the links resolve wherever the report and the figures are moved together.
fn figure_link(report: Option<&Path>, plots: &Path) -> String {
    let cwd = std::env::current_dir().unwrap_or_default();
    let base = match report {
        Some(r) => lexical(&cwd.join(r))
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default(),
        None => lexical(&cwd),
    };
    let target = lexical(&cwd.join(plots));
    relative_link(&base, &target)
}

/// A path with `.` and `..` resolved by its text alone (symbolic links are not followed: the
/// link must be right for the folders as the user named them).
fn lexical(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other),
        }
    }
    out
}

/// The relative link from folder `base` to `target`, both absolute and lexical.
fn relative_link(base: &Path, target: &Path) -> String {
    let b: Vec<Component> = base.components().collect();
    let t: Vec<Component> = target.components().collect();
    let common = b.iter().zip(&t).take_while(|(x, y)| x == y).count();
    let mut parts: Vec<String> = vec!["..".to_string(); b.len() - common];
    parts.extend(t[common..].iter().map(|c| {
        c.as_os_str()
            .to_string_lossy()
            .replace('%', "%25")
            .replace(' ', "%20")
    }));
    if parts.is_empty() {
        ".".to_string()
    } else {
        parts.join("/")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // The figures' folder seen from the report's folder (common practice for relative links).
    #[test]
    fn links_are_relative_to_the_report() {
        let l = |b: &str, t: &str| relative_link(&lexical(Path::new(b)), &lexical(Path::new(t)));
        assert_eq!(l("/w/out/report", "/w/out/figs"), "../figs");
        assert_eq!(l("/w", "/w/figs"), "figs");
        assert_eq!(l("/w/a/b", "/w/a/b"), ".");
        assert_eq!(l("/w/a/./b/../c", "/w/x y"), "../../x%20y");
        assert_eq!(l("/w/r", "/w/r/figs/sub"), "figs/sub");
    }
}
