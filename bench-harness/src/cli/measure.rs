//! `wend measure`: the exact length of a given tour.

use super::{load, CliError};
use clap::Args;
use serde_json::json;
use std::path::PathBuf;

#[derive(Args, Debug)]
pub struct MeasureArgs {
    /// TSPLIB instance file.
    instance: PathBuf,
    /// TSPLIB TOUR file for that instance.
    tour: PathBuf,
    /// Print one JSON object instead of a line of text.
    #[arg(long)]
    json: bool,
}

pub fn run(a: MeasureArgs) -> Result<(), CliError> {
    let inst = load(&a.instance)?;
    let tf = wend_bench::tsplib::read_tour(&a.tour)?;
    if let Some(d) = tf.dimension {
        if d != inst.dimension {
            return Err(CliError::Input(format!(
                "{}: tour has DIMENSION {d}, instance {} has {} nodes",
                a.tour.display(),
                inst.name,
                inst.dimension
            )));
        }
    }
    let tour = wend::Tour::new(tf.nodes, inst.dimension).map_err(|e| {
        CliError::Input(format!(
            "{}: not a tour of {}: {e}",
            a.tour.display(),
            inst.name
        ))
    })?;
    let length = tour
        .length(inst.cost())
        .map_err(|e| CliError::Input(format!("{}: {e}", a.tour.display())))?;
    if a.json {
        println!(
            "{}",
            json!({"instance": inst.name, "nodes": inst.dimension, "tour": a.tour.display().to_string(), "length": length})
        );
    } else {
        println!("{length}");
    }
    Ok(())
}
