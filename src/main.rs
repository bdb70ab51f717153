//! The `radnorm` command: parse, dispatch, map the outcome to an exit code.

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    match cli::run(cli::Cli::parse()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("radnorm: error: {}", cli::error_line(&e));
            ExitCode::from(2)
        }
    }
}
