//! `wend demo`: the built-in demo, a few instances shipped inside the binary, each solved and
//! compared with its published optimum.

use super::CliError;
use clap::Args;
use std::time::Duration;
use wend::{Method, Solver};

/// The demo instances, embedded so the demo needs no files.
const DEMO: &[(&str, &str)] = &[
    (
        "berlin52.tsp",
        include_str!("../../../instances/berlin52.tsp"),
    ),
    (
        "kroA100.tsp",
        include_str!("../../../instances/kroA100.tsp"),
    ),
    ("gr120.tsp", include_str!("../../../instances/gr120.tsp")),
    ("ch150.tsp", include_str!("../../../instances/ch150.tsp")),
    ("a280.tsp", include_str!("../../../instances/a280.tsp")),
    ("att532.tsp", include_str!("../../../instances/att532.tsp")),
    ("gr666.tsp", include_str!("../../../instances/gr666.tsp")),
    ("ftv38.atsp", include_str!("../../../instances/ftv38.atsp")),
];
const OPTIMA: &str = include_str!("../../../instances/optima.txt");

#[derive(Args, Debug)]
pub struct DemoArgs {
    /// Seconds per instance.
    #[arg(long, short = 't', default_value_t = 1.0, value_name = "SECONDS")]
    time_limit: f64,
    /// Seed of all random choices.
    #[arg(long, short = 's', default_value_t = 0)]
    seed: u64,
    /// Seconds for the sky part: the demo observatory's plan and its front.
    #[arg(long, default_value_t = 10.0, value_name = "SECONDS")]
    sky_seconds: f64,
    /// Directory for the sky part's files (plan, front, pictures, report page).
    #[arg(long, default_value = "demo-out/sky", value_name = "DIR")]
    sky_out: std::path::PathBuf,
}

pub fn run(a: DemoArgs) -> Result<(), CliError> {
    if !(a.time_limit.is_finite() && a.time_limit > 0.0) {
        return Err(CliError::Input(
            "--time-limit must be a positive number".into(),
        ));
    }
    let optima = wend_tsplib::parse_optima(OPTIMA, "instances/optima.txt")?;
    println!(
        "Solving {} TSPLIB instances for {} s each with method {} (seed {}).",
        DEMO.len(),
        a.time_limit,
        Method::Lk.name(),
        a.seed
    );
    println!();
    println!(
        "{:<10} {:>5} {:<5} {:>10} {:>10} {:>7} {:>10} {:>7}",
        "instance", "nodes", "type", "optimum", "length", "gap %", "iterations", "seconds"
    );
    let mut gaps = Vec::new();
    for (file, text) in DEMO {
        if super::interrupt::interrupted() {
            break;
        }
        let inst = wend_tsplib::parse_instance(text, file)?;
        let opt = optima.get(&inst.name).copied();
        let mut solver = Solver::new(inst.cost())
            .seed(a.seed)
            .time_limit(Duration::from_secs_f64(a.time_limit))
            .stop_handle(super::interrupt::handle());
        if let Some(o) = opt {
            // Stop at the published optimum: the time column then shows how long it took.
            solver = solver.target(o);
        }
        let sol = solver
            .solve()
            .map_err(|e| CliError::Input(format!("{file}: {e}")))?;
        let gap = opt.map(|o| 100.0 * (sol.length - o) as f64 / o as f64);
        if let Some(g) = gap {
            gaps.push(g);
        }
        println!(
            "{:<10} {:>5} {:<5} {:>10} {:>10} {:>7} {:>10} {:>7.2}",
            inst.name,
            inst.dimension,
            inst.kind.keyword(),
            opt.map_or("-".into(), |o| o.to_string()),
            sol.length,
            gap.map_or("-".into(), |g| format!("{g:.2}")),
            sol.iterations,
            sol.seconds
        );
    }
    if !gaps.is_empty() {
        println!();
        println!(
            "mean gap to the published optimum: {:.2} %",
            gaps.iter().sum::<f64>() / gaps.len() as f64
        );
    }
    if super::interrupt::interrupted() {
        return Ok(());
    }
    println!();
    println!(
        "Planning the invented demo observatory's 30-day pool with its front of elapsed time \
         against propellant ({} s):",
        a.sky_seconds
    );
    super::sky::demo(&a.sky_out, a.sky_seconds, a.seed)
}
