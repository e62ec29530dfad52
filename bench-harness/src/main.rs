//! `wend`: solve TSPLIB instances, measure tours, run the demo.

// User files reach almost every path here: failures are errors, never `unwrap`/`expect` panics.
#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let argv: Vec<std::ffi::OsString> = std::env::args_os().collect();
    let args = cli::Args::parse_from(&argv);
    for line in cli::deprecations(&argv) {
        eprintln!("wend: {line}");
    }
    cli::interrupt::install();
    match cli::run(args) {
        // The command finished with what it had when Ctrl-C came: say so in the exit code.
        Ok(()) if cli::interrupt::interrupted() => ExitCode::from(cli::interrupt::EXIT_CODE),
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("wend: {e}");
            if cli::interrupt::interrupted() {
                // Stopped before there was anything to show (a bound before its first 1-tree).
                ExitCode::from(cli::interrupt::EXIT_CODE)
            } else {
                ExitCode::from(e.exit_code())
            }
        }
    }
}
