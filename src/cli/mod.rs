//! The command-line interface: argument parsing, one file per command, rendering.
//!
//! Only this layer uses clap and anyhow; it does no physics, only calls the library.

/// `println!` that ignores a closed standard output (`radnorm demo | head`), instead of
/// panicking as `println!` does.
macro_rules! say {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stdout(), $($arg)*);
    }};
}

mod alpha;
mod born;
mod correct;
mod demo;
mod isr;
mod lumi;
pub mod output;
mod table;

use anyhow::{Context, Result, anyhow};
use clap::{Parser, Subcommand};

use radnorm::numeric::Grid;
use radnorm::{ParamError, shown};

/// radnorm: Born cross-sections, running α, ISR corrections and luminosity for e⁺e⁻ colliders.
#[derive(Debug, Parser)]
#[command(name = "radnorm", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Born cross-section of a process at one energy or on a grid.
    Born(born::BornArgs),
    /// Running α at q² (spacelike or timelike): Δα_lep, Δα_had with its uncertainty, 1/α.
    Alpha(alpha::AlphaArgs),
    /// ISR-corrected (observed) cross-section and 1 + δ with cuts, VP, a radiator scheme.
    Isr(isr::IsrArgs),
    /// Visible Bhabha (γγ, μμ) cross-section in an acceptance; luminosity from counts.
    Lumi(lumi::LumiArgs),
    /// Correct a measured scan: Born and dressed cross-sections with their budget.
    Correct(correct::CorrectArgs),
    /// Correction tables (1 + δ, vp factor, σ's, per-variation shifts) on a grid from a card.
    Table(table::TableArgs),
    /// The whole pipeline on the shipped, invented demo scenario, into a folder.
    Demo(demo::DemoArgs),
}

/// Parse the arguments and run the command.
pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Born(args) => born::run(args),
        Command::Alpha(args) => alpha::run(args),
        Command::Isr(args) => isr::run(args),
        Command::Lumi(args) => lumi::run(args),
        Command::Correct(args) => correct::run(args),
        Command::Table(args) => table::run(args),
        Command::Demo(args) => demo::run(args),
    }
}

/// The one line an error is reported as: each message of its chain, joined by ": ", leaving
/// out a cause whose text the line already ends with (error types that name their source in
/// their own message, as `cannot read {path}: {source}`, would otherwise print it twice).
pub fn error_line(e: &anyhow::Error) -> String {
    let mut line = String::new();
    for cause in e.chain() {
        let text = cause.to_string();
        if line.is_empty() {
            line = text;
        } else if !line.ends_with(&text) {
            line.push_str(": ");
            line.push_str(&text);
        }
    }
    line
}

/// A ParamError in the words of the command line: the flag, the value, the allowed range.
pub fn flag_error(e: ParamError) -> anyhow::Error {
    anyhow!(
        "--{} {}: not allowed; allowed: {}",
        e.name.replace('_', "-"),
        shown(e.value),
        e.allowed
    )
}

/// Parse an energy grid (`3.0` or `start:stop:count`) for `flag`; every point within
/// 0 < √s ≤ [`MAX_SQRT_S_GEV`].
pub fn parse_energy_grid(flag: &str, text: &str) -> Result<Grid> {
    let grid = Grid::parse(text).with_context(|| format!("{flag} {text}"))?;
    for &e in grid.points() {
        if let Err(e) = ParamError::check_sqrt_s("sqrt_s", e) {
            return Err(anyhow!("{flag} {text}: {}", e.verdict()));
        }
    }
    Ok(grid)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn error_line_names_each_cause_once() {
        // A type that repeats its source in its message, as `ScanError::Io` does.
        let io = std::io::Error::new(std::io::ErrorKind::NotFound, "no such file");
        let read = radnorm::scan::ScanError::Io {
            path: "scan.csv".into(),
            source: io,
        };
        let e = anyhow::Error::new(read).context("--data scan.csv");
        assert_eq!(
            error_line(&e),
            "--data scan.csv: cannot read scan.csv: no such file"
        );
        // A context over a cause it does not repeat keeps both.
        let e = anyhow!("s = 0 GeV² is not allowed").context("sqrt_s_gev = 0");
        assert_eq!(error_line(&e), "sqrt_s_gev = 0: s = 0 GeV² is not allowed");
    }
}
