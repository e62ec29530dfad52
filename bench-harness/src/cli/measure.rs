//! `wend measure`: the exact length of a given tour.

use super::{sequence, CliError};
use clap::Args;
use serde_json::json;
use std::path::{Path, PathBuf};
use wend_tsplib::{TourFile, TsplibError};

#[derive(Args, Debug)]
#[command(after_help = sequence::EXIT_CODES)]
pub struct MeasureArgs {
    /// TSPLIB instance file, or a time-window file in the plain layout.
    instance: PathBuf,
    /// TSPLIB TOUR file for that instance. Under constraints it may leave out optional stops,
    /// and a closed tour may start anywhere.
    tour: PathBuf,
    /// Print one JSON object instead of a line of text.
    #[arg(long)]
    json: bool,
    #[command(flatten)]
    constraints: sequence::ConstraintArgs,
}

pub fn run(a: MeasureArgs) -> Result<(), CliError> {
    let problem = wend_tsplib::read_problem(&a.instance)?;
    if let Some(c) = sequence::constraints_for(&problem, &a.constraints, &a.instance, false)? {
        return sequence::measure(&problem.instance, &c, &a.tour, a.json);
    }
    let inst = problem.instance;
    let tf = wend_tsplib::read_tour(&a.tour)?;
    check_fit(&tf, &a.tour, &inst.name, inst.dimension)?;
    let tour = wend::Tour::new(tf.nodes, inst.dimension).map_err(|e| {
        CliError::Input(format!(
            "{}: not a tour of {}: {e}",
            a.tour.display(),
            inst.name
        ))
    })?;
    // The sum can only overflow because the instance's weights are that large.
    let length = tour.length(inst.cost()).map_err(|_| {
        CliError::Input(format!(
            "{}: the length of the tour in {} overflows a 64-bit integer; scale the weights \
             down",
            a.instance.display(),
            a.tour.display()
        ))
    })?;
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

/// Checks a tour file against the size of the instance it is measured on, pointing at the line
/// at fault: its `DIMENSION`, or the first node the instance does not have. (A tour without
/// `DIMENSION` is only checked against the instance here; a wrong node count is left to
/// [`wend::Tour::new`], as no single line is at fault.)
fn check_fit(tf: &TourFile, tour: &Path, instance: &str, n: usize) -> Result<(), CliError> {
    let at = |line: usize, message: String| {
        CliError::Input(TsplibError::new(&tour.display().to_string(), line, message).to_string())
    };
    if let Some(d) = tf.dimension {
        if d != n {
            return Err(at(
                tf.dimension_line.unwrap_or(0),
                format!("tour has DIMENSION {d}, instance {instance} has {n} nodes"),
            ));
        }
    }
    super::shared::check_nodes(tf, tour, instance, n)
}

#[cfg(test)]
mod tests {
    use super::*;
    use wend_tsplib::parse_tour;

    fn fit(text: &str, n: usize) -> Result<(), String> {
        let tf = parse_tour(text, "t.tour").unwrap();
        check_fit(&tf, Path::new("t.tour"), "five", n).map_err(|e| e.to_string())
    }

    #[test]
    fn a_dimension_that_does_not_fit_names_its_line() {
        let text = "NAME : t\nTYPE : TOUR\nDIMENSION : 4\nTOUR_SECTION\n1 2 3 4 -1\nEOF\n";
        assert_eq!(
            fit(text, 5).unwrap_err(),
            "t.tour:3: tour has DIMENSION 4, instance five has 5 nodes"
        );
        assert!(fit(text, 4).is_ok());
    }

    #[test]
    fn a_node_the_instance_lacks_names_its_line_and_file_number() {
        // No DIMENSION: the reader cannot know that node 9 is too large.
        let text = "NAME : t\nTYPE : TOUR\nTOUR_SECTION\n1 2\n3 9 5\n-1\n";
        assert_eq!(
            fit(text, 5).unwrap_err(),
            "t.tour:5: node id 9 is outside 1..=5 (instance five has 5 nodes)"
        );
        assert!(fit(text, 9).is_ok());
    }
}
