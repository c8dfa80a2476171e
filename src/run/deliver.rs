//! Delivering a report: the figures into `--plots`, the report into `--output` or back to the
//! caller for stdout. Output paths are checked before any work, so a run never ends unable to
//! write what it made.

use super::options::OutputArgs;
use super::output;
use crate::error::{Error, InputError, RunError};
use crate::report::{self, Context, Report};

/// Refuse before any work what could not be written afterwards.
pub(crate) fn check_outputs(out: &OutputArgs) -> Result<(), Error> {
    if let Some(path) = &out.output {
        output::check_writable(path, out.force)?;
    }
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

/// Write the figures and the report; the report's bytes come back when they go to stdout.
pub(crate) fn deliver(report: Report<'_>, out: &OutputArgs) -> Result<Vec<u8>, Error> {
    let context = Context {
        figures: out.plots.as_ref().map(|d| d.display().to_string()),
        plot_format: out.plot_format,
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
