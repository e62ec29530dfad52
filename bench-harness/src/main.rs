//! `wend`: solve TSPLIB instances, measure tours, run the demo.

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args = cli::Args::parse();
    match cli::run(args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("wend: {e}");
            ExitCode::from(e.exit_code())
        }
    }
}
