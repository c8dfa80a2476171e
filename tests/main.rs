//! The integration tests, one binary (one link): each module checks one side of radforce
//! against the outside world (standards, reference tables, analytic results) or the promises of
//! the README (exit codes, nothing lost, reproducibility). Shared helpers are in `common`.

mod common;

mod architecture;
mod bad_inputs;
mod budgets;
mod chains;
mod cli;
mod coverage;
mod designs;
mod determinism;
mod distributions;
mod dynamics;
mod exports;
mod forecast;
mod generated;
mod gum;
mod hostile;
mod html;
mod nothing_lost;
mod scale;
mod sensitivity;
mod validation;
