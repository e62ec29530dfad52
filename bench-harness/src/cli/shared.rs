//! Pieces the commands share: the progress display and Ctrl-C handling of a solve, the words
//! for a stop reason, and the check of a tour file's nodes against an instance.

use super::progress::Progress;
use super::CliError;
use std::io::IsTerminal;
use std::path::Path;
use std::time::Duration;
use wend::{Hooks, Settings};
use wend_tsplib::{TourFile, TsplibError};

/// The progress display (new bests, or branch and cut's tree when a proof runs) and Ctrl-C
/// handling of a solve.
pub(super) fn hooks(settings: &Settings, json: bool) -> Hooks {
    let limit = settings
        .time_limit
        .map(|t| Duration::from_secs_f64(t.min(1.0e9)));
    let progress = Progress::start(limit, !json || std::io::stderr().is_terminal());
    let prover = wend_cuts::BranchCutProver {
        progress: Some(std::sync::Arc::new(progress.tree_observer())),
        ..wend_cuts::BranchCutProver::default()
    };
    Hooks {
        stop: super::interrupt::handle(),
        observer: (!settings.exact).then(|| Box::new(progress.observer()) as _),
        after_search: Some(Box::new(move || progress.finish())),
        prover: Some(std::sync::Arc::new(prover)),
    }
}

/// The words for why a search ended.
pub(super) fn stop_words(r: wend::StopReason) -> &'static str {
    use wend::StopReason::*;
    match r {
        RunBudget => "all runs done",
        TimeLimit => "time limit reached",
        Cancelled => "cancelled",
        Exhaustive => "every tour tried (optimal)",
        Constructed => "construction done",
        TargetReached => "target length reached",
        IterationBudget => "iteration budget used up",
        StallLimit => "stalled (no improvement within the stall limit)",
    }
}

/// Checks that every node of a tour file is a node of the instance, pointing at the first line
/// naming one it does not have.
pub(super) fn check_nodes(
    tf: &TourFile,
    tour: &Path,
    instance: &str,
    n: usize,
) -> Result<(), CliError> {
    let at = |line: usize, message: String| {
        CliError::Input(TsplibError::new(&tour.display().to_string(), line, message).to_string())
    };
    if let Some((k, &node)) = tf.nodes.iter().enumerate().find(|(_, &v)| v >= n) {
        return Err(at(
            tf.node_lines.get(k).copied().unwrap_or(0),
            format!(
                "node id {} is outside 1..={n} (instance {instance} has {n} nodes)",
                node + 1
            ),
        ));
    }
    Ok(())
}
