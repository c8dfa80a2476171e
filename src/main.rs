//! The `radforce` command: parses the arguments, hands them to the library, prints what comes
//! back and sets the exit code.

mod cli;

use clap::{CommandFactory, Parser};
use cli::{Cli, Command};
use radforce::engine;
use radforce::run::commands;
use std::io::{IsTerminal, Write};
use std::process::ExitCode;

/// Text for a terminal: control characters other than newline and tab shown as `?`, so that
/// nothing a user supplied (a file name, a title) acts as a terminal command.
fn for_terminal(text: &str) -> String {
    text.chars()
        .map(|c| {
            if c.is_control() && c != '\n' && c != '\t' {
                '?'
            } else {
                c
            }
        })
        .collect()
}

/// Print on stdout (made safe for a terminal when it is one); a closed pipe (`| head`) is not
/// an error of the run.
fn write_stdout(bytes: &[u8]) {
    let mut out = std::io::stdout().lock();
    let safe;
    let bytes = match std::str::from_utf8(bytes) {
        Ok(text) if out.is_terminal() => {
            safe = for_terminal(text);
            safe.as_bytes()
        }
        _ => bytes,
    };
    let _ = out.write_all(bytes).and_then(|()| out.flush());
}

fn warn(message: &str) {
    eprintln!("warning: {}", for_terminal(message));
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    // Ctrl-C asks the run to stop: the trials stop, nothing is published, the exit code is 130.
    // A second Ctrl-C leaves at once, removing the temporary files being written.
    let _ = ctrlc::set_handler(|| {
        if engine::progress::interrupted() {
            radforce::run::output::remove_pending();
            std::process::exit(130);
        }
        engine::progress::interrupt();
    });
    let result = match &cli.command {
        Command::Run(args) => commands::run(args, &warn),
        Command::Rank(args) => commands::rank(args, &warn),
        Command::Compare(args) => commands::compare(args, &warn),
        Command::Merge(args) => commands::merge(args),
        Command::Plan(args) => commands::plan(args, &warn),
        Command::Export(args) => commands::export(args, &warn),
        Command::Schema => Ok(commands::schema()),
        Command::Completions { shell } => {
            let mut out = Vec::new();
            clap_complete::generate(*shell, &mut Cli::command(), "radforce", &mut out);
            Ok(out)
        }
        Command::Manual => {
            let mut out = Vec::new();
            let _ = clap_mangen::Man::new(Cli::command()).render(&mut out);
            Ok(out)
        }
        Command::Check { file } => commands::check(file),
        Command::New { name, chain, force } => commands::new_scenario(name, chain, *force),
    };
    match result {
        Ok(bytes) => {
            write_stdout(&bytes);
            ExitCode::SUCCESS
        }
        Err(e) => {
            // Colour only on a terminal, and never with NO_COLOR (https://no-color.org).
            let colour = std::io::stderr().is_terminal()
                && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty());
            let message = for_terminal(&e.to_string());
            if colour {
                eprintln!("\x1b[1;31merror:\x1b[0m {message}");
            } else {
                eprintln!("error: {message}");
            }
            ExitCode::from(e.exit_code() as u8)
        }
    }
}
