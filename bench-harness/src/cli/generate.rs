//! `wend generate`.

use super::{write_file, CliError};
use clap::Args;
use std::path::PathBuf;
use wend_bench::generate::{
    expected_tour_length, uniform_matrix, uniform_square, write_matrix, write_points,
};

#[derive(Args, Debug)]
pub struct GenerateArgs {
    /// Number of points (nodes).
    #[arg(long, value_name = "N")]
    nodes: usize,
    /// Write random asymmetric integer costs, uniform in 1..=MAX_COST, as an ATSP full matrix
    /// instead of points.
    #[arg(long)]
    asymmetric: bool,
    /// Largest cost of --asymmetric.
    #[arg(
        long,
        default_value_t = 1000,
        value_name = "MAX_COST",
        requires = "asymmetric"
    )]
    max_cost: i64,
    /// Side of the square; coordinates are whole numbers in [0, SIDE).
    #[arg(long, default_value_t = 1_000_000, value_name = "SIDE")]
    side: u64,
    /// Seed of the generator; the same seed gives the same file.
    #[arg(long, short = 's', default_value_t = 0)]
    seed: u64,
    /// Instance name written in the file (default: the file name without extension).
    #[arg(long)]
    name: Option<String>,
    /// Output file.
    #[arg(long, short = 'o', value_name = "FILE")]
    out: PathBuf,
}

pub fn run(a: GenerateArgs) -> Result<(), CliError> {
    if a.nodes == 0 {
        return Err(CliError::Input("--nodes must be at least 1".into()));
    }
    if a.side == 0 {
        return Err(CliError::Input("--side must be at least 1".into()));
    }
    let name = a.name.clone().unwrap_or_else(|| {
        a.out
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "uniform".into())
    });
    if a.asymmetric {
        if a.max_cost < 1 {
            return Err(CliError::Input("--max-cost must be at least 1".into()));
        }
        if a.nodes > 20_000 {
            return Err(CliError::Input(format!(
                "--asymmetric writes a full matrix; {} nodes would be {} entries (at most 20,000 nodes)",
                a.nodes,
                a.nodes as u128 * a.nodes as u128
            )));
        }
        let rows = uniform_matrix(a.nodes, a.max_cost, a.seed);
        let what = format!(
            "{} nodes, asymmetric costs uniform in 1..={}",
            a.nodes, a.max_cost
        );
        let told = format!("{} nodes, asymmetric costs in 1..={}", a.nodes, a.max_cost);
        return written(&a, &what, &told, |w, comment| {
            write_matrix(&name, comment, &rows, w)
        });
    }
    let points = uniform_square(a.nodes, a.side, a.seed);
    let what = format!(
        "{} uniform random points in [0, {}) squared",
        a.nodes, a.side
    );
    let told = format!(
        "{} points; an optimal tour is about {:.0} long (0.7124 * sqrt(n * area))",
        a.nodes,
        expected_tour_length(a.nodes, a.side)
    );
    written(&a, &what, &told, |w, comment| {
        write_points(&name, comment, &points, w)
    })
}

/// Writes the instance to `--out` with a comment saying `what` it is, its seed and the
/// version, then prints `told` after the file's name.
fn written(
    a: &GenerateArgs,
    what: &str,
    told: &str,
    write: impl FnOnce(&mut std::io::BufWriter<std::fs::File>, &str) -> std::io::Result<()>,
) -> Result<(), CliError> {
    let comment = format!(
        "{what}, seed {}, written by wend {}",
        a.seed,
        env!("CARGO_PKG_VERSION")
    );
    write_file(&a.out, |w| write(w, &comment))?;
    println!("{}: {told}", a.out.display());
    Ok(())
}
