//! Command-line definitions and dispatch. Each subcommand lives in a module of its own.

mod bench;
mod bound;
mod demo;
mod generate;
pub(crate) mod interrupt;
mod measure;
mod progress;
mod sequence;
mod shared;
mod sky;
mod solve;

use clap::{Parser, Subcommand};
use std::fmt;

/// Routing and sequencing: short tours and paths over TSPLIB instances and your own costs.
#[derive(Parser, Debug)]
#[command(name = "wend", version, about, long_about = None)]
pub struct Args {
    #[command(subcommand)]
    command: Command,
    /// Refuse work whose large tables would pass this much memory: bytes, or a number with
    /// K, M, G or T (e.g. 6G). Default: three quarters of the physical memory.
    #[arg(
        long,
        global = true,
        value_name = "SIZE",
        env = "WEND_MEMORY_LIMIT",
        allow_hyphen_values = true
    )]
    memory_limit: Option<String>,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Find a short tour through a TSPLIB instance, or an order meeting time windows,
    /// precedence and other constraints (a time-window file or --constraints FILE.csv).
    Solve(solve::SolveArgs),
    /// Compute the length of a TOUR file on an instance, exactly as TSPLIB defines it; under
    /// constraints, its schedule and every constraint it breaks.
    Measure(measure::MeasureArgs),
    /// Solve the built-in demo instances and compare with their published optima.
    Demo(demo::DemoArgs),
    /// Compute a lower bound on every tour: Held–Karp for symmetric costs, the assignment bound
    /// for asymmetric ones.
    Bound(bound::BoundArgs),
    /// Write a seeded random instance (uniform points in a square) as a TSPLIB file.
    Generate(generate::GenerateArgs),
    /// Run a seeded sweep of methods over instances and report gaps and times.
    Bench(bench::BenchArgs),
    /// Observing plans for a sun-shaded observatory far from Earth: `wend sky plan` (planning proposals
    /// to be confirmed by the operations team's validated tools).
    Sky(sky::SkyArgs),
}

/// Old spellings of options, `(old, new)`, accepted as hidden aliases for one release.
pub const OLD_OPTIONS: [(&str, &str); 7] = [
    ("--restarts", "--runs"),
    ("--kicks", "--iterations"),
    ("--set", "--params"),
    ("--neighbours", "--neighbour-count"),
    ("--candidates", "--neighbour-lists"),
    ("--optima", "--known-lengths"),
    ("--stop-at-optimum", "--until-known"),
];

/// One line for each old spelling of an option in `argv` (the command line clap accepted),
/// naming the new one; nothing after `--`.
pub fn deprecations(argv: &[std::ffi::OsString]) -> Vec<String> {
    let mut lines = Vec::new();
    for arg in argv.iter().skip(1) {
        let arg = arg.to_string_lossy();
        if arg == "--" {
            break;
        }
        let name = arg.split_once('=').map_or(&*arg, |(name, _)| name);
        if let Some((old, new)) = OLD_OPTIONS.iter().find(|(old, _)| *old == name) {
            let line = format!("{old} is deprecated; use {new}");
            if !lines.contains(&line) {
                lines.push(line);
            }
        }
    }
    lines
}

/// Runs one command.
pub fn run(args: Args) -> Result<(), CliError> {
    if let Some(size) = &args.memory_limit {
        let bytes = wend::memory::parse_size(size)
            .map_err(|e| CliError::Input(format!("--memory-limit: {e}")))?;
        wend::memory::set_ceiling(bytes);
    }
    match args.command {
        Command::Solve(a) => solve::run(a),
        Command::Measure(a) => measure::run(a),
        Command::Demo(a) => demo::run(a),
        Command::Bench(a) => bench::run(a),
        Command::Generate(a) => generate::run(a),
        Command::Bound(a) => bound::run(a),
        Command::Sky(a) => sky::run(a),
    }
}

/// A failure, printed as one line; bad input exits with 2, other failures with 1, an order
/// that breaks its constraints with 3.
#[derive(Debug)]
pub enum CliError {
    /// The user's input (a file, an option) is wrong.
    Input(String),
    /// Something went wrong that is not the input's fault (writing output, say).
    Failure(String),
    /// The command did its work, but the order it found or measured breaks a constraint (its
    /// output is already printed).
    Infeasible(String),
}

/// Exit code of a command whose order breaks a constraint.
pub const INFEASIBLE_EXIT_CODE: u8 = 3;

impl CliError {
    pub fn exit_code(&self) -> u8 {
        match self {
            CliError::Input(_) => 2,
            CliError::Failure(_) => 1,
            CliError::Infeasible(_) => INFEASIBLE_EXIT_CODE,
        }
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CliError::Input(m) | CliError::Failure(m) | CliError::Infeasible(m) => f.write_str(m),
        }
    }
}

impl From<wend_tsplib::TsplibError> for CliError {
    fn from(e: wend_tsplib::TsplibError) -> Self {
        CliError::Input(e.to_string())
    }
}

/// Reads an instance, mapping errors to one line that names the file.
pub(crate) fn load(path: &std::path::Path) -> Result<wend_tsplib::Instance, CliError> {
    Ok(wend_tsplib::read_instance(path)?)
}

/// Writes a file, naming it in the error.
pub(crate) fn write_file(
    path: &std::path::Path,
    f: impl FnOnce(&mut std::io::BufWriter<std::fs::File>) -> std::io::Result<()>,
) -> Result<(), CliError> {
    let fail =
        |e: std::io::Error| CliError::Failure(format!("{}: cannot write: {e}", path.display()));
    let file = std::fs::File::create(path).map_err(fail)?;
    let mut w = std::io::BufWriter::new(file);
    f(&mut w).map_err(fail)?;
    std::io::Write::flush(&mut w).map_err(fail)
}
