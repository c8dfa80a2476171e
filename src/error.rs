//! Error types. Bad input ([`InputError`], exit code 2) always names the file, the place and the
//! key, and shows a valid example; a failed run ([`RunError`], exit code 1) says what failed and,
//! for a model value that is not finite, the input values of the first such trial.

use std::fmt;

/// Where in a file an error is: 1-based line and column, the line's text, and how many
/// characters to mark.
#[derive(Clone, Debug, PartialEq)]
pub struct Location {
    /// 1-based line.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
    /// The text of that line.
    pub source_line: String,
    /// Characters to underline (at least 1).
    pub width: usize,
}

/// A problem with what the user supplied: the scenario file, a command-line value, a path.
#[derive(Clone, Debug, PartialEq)]
pub struct InputError {
    /// The file (or "command line").
    pub file: String,
    /// Where in the file, when known.
    pub location: Option<Box<Location>>,
    /// The key, as a dotted path (`inputs.reflectance.max`).
    pub key: Option<String>,
    /// What is wrong.
    pub message: String,
    /// A valid way to write it.
    pub example: Option<String>,
}

impl InputError {
    /// An error about a file as a whole (missing, unreadable, not UTF-8).
    pub fn file(file: impl Into<String>, message: impl Into<String>) -> Self {
        InputError {
            file: file.into(),
            location: None,
            key: None,
            message: message.into(),
            example: None,
        }
    }

    /// Attach an example of a valid value.
    pub fn with_example(mut self, example: impl Into<String>) -> Self {
        self.example = Some(example.into());
        self
    }
}

/// A character as a message may show it: a control character (other than tab) as `?`, so that
/// no escape sequence from a user's file reaches the terminal.
fn visible(c: char) -> char {
    if c.is_control() && c != '\t' { '?' } else { c }
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(loc) = &self.location {
            write!(f, ":{}:{}", loc.line, loc.column)?;
        }
        write!(f, ": ")?;
        if let Some(key) = &self.key {
            write!(f, "`{key}`: ")?;
        }
        write!(f, "{}", self.message)?;
        if let Some(loc) = &self.location {
            let gutter = loc.line.to_string().len();
            let pad = " ".repeat(gutter);
            // A window of the line around the column (a long line is cut on both sides), with
            // control characters shown as escapes, never sent to the terminal raw.
            let from = loc.column.saturating_sub(1).saturating_sub(80);
            let shown: String = loc
                .source_line
                .chars()
                .skip(from)
                .take(160)
                .map(visible)
                .collect();
            write!(f, "\n{pad} |\n{} | {shown}\n{pad} | ", loc.line)?;
            let lead: String = loc
                .source_line
                .chars()
                .skip(from)
                .take(loc.column.saturating_sub(1) - from)
                .map(|c| if c == '\t' { '\t' } else { ' ' })
                .collect();
            write!(f, "{lead}{}", "^".repeat(loc.width.clamp(1, 80)))?;
        }
        if let Some(example) = &self.example {
            write!(f, "\n  valid example: {example}")?;
        }
        Ok(())
    }
}

impl std::error::Error for InputError {}

/// A run that could not finish.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// A model value was NaN or infinite in some trial.
    #[error(
        "measurand `{measurand}` is not finite ({value}) in trial {trial}; the inputs of that \
         trial were: {inputs}. {hint}"
    )]
    NonFinite {
        /// The measurand.
        measurand: String,
        /// 0-based trial index (the first such trial in trial order).
        trial: u64,
        /// The value (NaN or an infinity), as text.
        value: String,
        /// `name = value` for every input of that trial.
        inputs: String,
        /// The likely cause, from the inputs of that trial.
        hint: String,
    },
    /// The samples would not fit in the memory budget.
    #[error(
        "{trials} trials need {needed} (the coverage-interval tails of one measurand and a working \
         reserve), even streamed in two passes, more than the memory budget of {budget}; lower `trials`, or \
         raise the budget with --memory-budget (e.g. --memory-budget 8GiB)"
    )]
    MemoryBudget {
        /// Trials asked for.
        trials: u64,
        /// Bytes needed, formatted.
        needed: String,
        /// The budget, formatted.
        budget: String,
    },
    /// A result was not finite where the report needs a number.
    #[error("{0}")]
    Numerical(String),
    /// Writing an output failed.
    #[error("cannot write {path}: {message}")]
    Output {
        /// The path.
        path: String,
        /// What went wrong.
        message: String,
    },
    /// The run was stopped (Ctrl-C) before it finished; nothing was written.
    #[error("stopped before the run finished; no output was written")]
    Interrupted,
    /// The thread pool could not be built.
    #[error("cannot start {threads} worker threads: {message}")]
    Threads {
        /// Threads asked for.
        threads: usize,
        /// The reason.
        message: String,
    },
}

/// Any error of the library.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// Bad input: exit code 2.
    #[error("{0}")]
    Input(#[from] InputError),
    /// Failed run: exit code 1 (2 for a request the memory budget cannot hold, 130 for an
    /// interrupted run, the shell's code for Ctrl-C).
    #[error("{0}")]
    Run(#[from] RunError),
}

impl Error {
    /// The process exit code for this error: 2 for bad input (and for more trials than the
    /// memory budget holds), 130 for an interrupted run, 1 for any other failed run.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) | Error::Run(RunError::MemoryBudget { .. }) => 2,
            Error::Run(RunError::Interrupted) => 130,
            Error::Run(_) => 1,
        }
    }
}
