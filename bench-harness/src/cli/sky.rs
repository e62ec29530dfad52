//! `wend sky`: observing plans for a sunshield observatory.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.

use super::{write_file, CliError};
use clap::{Args, Subcommand};
use std::path::{Path, PathBuf};
use std::time::Duration;
use wend::sky::plan::{plan, PlanOptions, DEFAULT_HORIZON_DAYS};
use wend::sky::sun::sun_j2000;
use wend::sky::{Epoch, Profile, Target};
use wend::Method;
use wend_bench::sky::draw::{write_momentum_chart, write_sky_map, MomentumTrace, SkyMap};
use wend_bench::sky::output::{
    self, format_utc, overhead_ratio, parse_utc, plan_json, CAUTION, DEMO_START_UTC,
};
use wend_bench::sky::{demo_profile, demo_targets, read_profile, read_targets};

#[derive(Args, Debug)]
pub struct SkyArgs {
    #[command(subcommand)]
    command: SkyCommand,
}

#[derive(Subcommand, Debug)]
enum SkyCommand {
    /// Turn a pool of targets into an observing sequence that keeps overhead low, checked in
    /// real time against the elongation band, with momentum dumps.
    Plan(PlanArgs),
    /// Write a seeded random pool of targets (for benchmarks; not the demo).
    Targets(TargetsArgs),
}

#[derive(Args, Debug)]
pub struct PlanArgs {
    /// Targets CSV (columns id,ra_deg,dec_deg,duration_s and optionally instrument). Without
    /// it: the built-in demo targets of the invented Lantern Deep-Sky Observatory.
    targets: Option<PathBuf>,
    /// Observatory profile (TOML). Without it: the built-in demo profile.
    #[arg(long, value_name = "FILE")]
    profile: Option<PathBuf>,
    /// Plan start, ISO 8601 with a UTC offset (2027-03-01T00:00:00Z, or a date for 00:00
    /// UTC). Needed with a targets file; the demo starts at 2027-03-01T00:00:00Z.
    #[arg(long, value_name = "ISO8601")]
    start: Option<String>,
    /// Length of the planning horizon, days.
    #[arg(long, default_value_t = DEFAULT_HORIZON_DAYS, value_name = "DAYS", allow_negative_numbers = true)]
    horizon_days: f64,
    /// Directory for plan.csv, unscheduled.csv, sky-map.svg, momentum.svg and summary.json
    /// (created if missing). Without it nothing is written but the summary.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Seconds for the order search (default: 2 s, plus 1 s per 100 targets past 200).
    #[arg(long, value_name = "SECONDS", allow_negative_numbers = true)]
    time_limit: Option<f64>,
    /// Seed of the order search.
    #[arg(long, default_value_t = 0)]
    seed: u64,
    /// Worker threads of the search (default: one per core).
    #[arg(long)]
    threads: Option<usize>,
    /// Print one JSON object on stdout instead of the text summary.
    #[arg(long)]
    json: bool,
}

#[derive(Args, Debug)]
pub struct TargetsArgs {
    /// Number of targets.
    #[arg(long, value_name = "N")]
    count: usize,
    /// Seed; the same seed gives the same pool.
    #[arg(long, default_value_t = 0)]
    seed: u64,
    /// Profile whose instruments the targets use (default: the demo profile).
    #[arg(long, value_name = "FILE")]
    profile: Option<PathBuf>,
    /// Output CSV file.
    #[arg(long, short, value_name = "FILE")]
    out: PathBuf,
}

/// Runs `wend sky ...`.
pub fn run(args: SkyArgs) -> Result<(), CliError> {
    match args.command {
        SkyCommand::Plan(a) => run_plan(a),
        SkyCommand::Targets(a) => run_targets(a),
    }
}

fn load_profile(path: &Option<PathBuf>) -> Result<Profile, CliError> {
    match path {
        Some(p) => read_profile(p).map_err(|e| CliError::Input(e.to_string())),
        None => Ok(demo_profile()),
    }
}

fn run_targets(a: TargetsArgs) -> Result<(), CliError> {
    let profile = load_profile(&a.profile)?;
    let targets = output::random_targets(a.count, a.seed, &profile);
    let comment = format!(
        "Random targets for benchmarks (wend sky targets --count {} --seed {}); invented data.\nCAUTION: {CAUTION}",
        a.count, a.seed
    );
    write_file(&a.out, |w| {
        output::write_targets_csv(w, &targets, &profile, &comment)
    })?;
    eprintln!("wrote {} targets to {}", targets.len(), a.out.display());
    Ok(())
}

fn input_error(e: impl std::fmt::Display) -> CliError {
    CliError::Input(e.to_string())
}

fn run_plan(a: PlanArgs) -> Result<(), CliError> {
    let profile = load_profile(&a.profile)?;
    let (targets, start_text): (Vec<Target>, String) = match &a.targets {
        Some(path) => {
            let targets = read_targets(path, &profile).map_err(input_error)?;
            let start = a.start.clone().ok_or_else(|| {
                CliError::Input(format!(
                    "{}: give the plan start with --start (ISO 8601 UTC, e.g. {DEMO_START_UTC})",
                    path.display()
                ))
            })?;
            (targets, start)
        }
        None => (
            demo_targets(&profile),
            a.start.clone().unwrap_or_else(|| DEMO_START_UTC.into()),
        ),
    };
    let start = parse_utc(&start_text).map_err(|e| CliError::Input(format!("--start: {e}")))?;
    if !(a.horizon_days.is_finite() && a.horizon_days > 0.0 && a.horizon_days <= 3660.0) {
        return Err(CliError::Input(format!(
            "--horizon-days must be in (0, 3660], got {}",
            a.horizon_days
        )));
    }
    let time_limit = match a.time_limit {
        None => None,
        Some(s) if s.is_finite() && s > 0.0 && s < 1e9 => Some(Duration::from_secs_f64(s)),
        Some(s) => {
            return Err(CliError::Input(format!(
                "--time-limit must be a positive number of seconds, got {s}"
            )))
        }
    };
    if a.threads == Some(0) {
        return Err(CliError::Input("--threads must be at least 1".into()));
    }
    if let Some(dir) = &a.out {
        output::check_out_dir(dir).map_err(CliError::Input)?;
    }
    let mut options = PlanOptions::new(start);
    options.horizon_days = a.horizon_days;
    options.time_limit = time_limit;
    options.seed = a.seed;
    options.threads = a.threads;
    options.method = Method::Lk;
    if !a.json {
        eprintln!("CAUTION: {CAUTION}");
        eprintln!(
            "planning {} targets of {} from {} over {} days ...",
            targets.len(),
            profile.name,
            format_utc(start),
            a.horizon_days
        );
    }
    let made = plan(&profile, &targets, &options).map_err(input_error)?;
    if let Some(dir) = &a.out {
        write_outputs(dir, &profile, &targets, &made, start, a.horizon_days)?;
    }
    let summary = plan_json(&profile, &targets, &made, start, a.horizon_days);
    if a.json {
        println!("{summary}");
        return Ok(());
    }
    let s = &made.schedule;
    let b = &made.baseline;
    println!("CAUTION: {CAUTION}");
    println!(
        "{}: {} targets, plan {} to {}",
        profile.name,
        targets.len(),
        format_utc(start),
        format_utc(s.end)
    );
    println!(
        "scheduled {}, unscheduled {}{}",
        s.observations.len(),
        s.unscheduled.len(),
        reasons_text(s)
    );
    println!(
        "overhead {:.2} h (waiting {:.2} h), slewing {:.1} deg, {} dumps, propellant {:.4} kg, {} repairs",
        s.overhead_s / 3600.0,
        s.wait_s / 3600.0,
        s.slew_deg,
        s.dumps,
        s.propellant_kg,
        s.repairs
    );
    println!(
        "nearest neighbour in time: scheduled {}, overhead {:.2} h, {} dumps, propellant {:.4} kg",
        b.observations.len(),
        b.overhead_s / 3600.0,
        b.dumps,
        b.propellant_kg
    );
    if let Some(r) = overhead_ratio(&made) {
        println!("overhead without waiting per observation, plan / nearest neighbour: {r:.3}");
    }
    println!(
        "{:.2} s ({} strategy{}; searches and simulations {:.2} s)",
        made.seconds,
        made.strategy.name(),
        if made.polished { ", polished" } else { "" },
        made.search_seconds
    );
    if let Some(dir) = &a.out {
        println!(
            "wrote {}: plan.csv, unscheduled.csv, sky-map.svg, momentum.svg, summary.json",
            dir.display()
        );
    }
    Ok(())
}

fn reasons_text(s: &wend::sky::schedule::Schedule) -> String {
    let mut counts: Vec<(&str, usize)> = Vec::new();
    for u in &s.unscheduled {
        match counts.iter_mut().find(|(c, _)| *c == u.reason.code()) {
            Some((_, n)) => *n += 1,
            None => counts.push((u.reason.code(), 1)),
        }
    }
    if counts.is_empty() {
        return String::new();
    }
    let parts: Vec<String> = counts.iter().map(|(c, n)| format!("{c} {n}")).collect();
    format!(" ({})", parts.join(", "))
}

fn write_outputs(
    dir: &Path,
    profile: &Profile,
    targets: &[Target],
    made: &wend::sky::plan::Plan,
    start: Epoch,
    horizon_days: f64,
) -> Result<(), CliError> {
    std::fs::create_dir_all(dir)
        .map_err(|e| CliError::Failure(format!("{}: cannot create: {e}", dir.display())))?;
    let s = &made.schedule;
    write_file(&dir.join("plan.csv"), |w| {
        output::write_plan_csv(w, targets, s)
    })?;
    write_file(&dir.join("unscheduled.csv"), |w| {
        output::write_unscheduled_csv(w, targets, &s.unscheduled)
    })?;
    let summary = plan_json(profile, targets, made, start, horizon_days);
    write_file(&dir.join("summary.json"), |w| {
        use std::io::Write;
        writeln!(
            w,
            "{}",
            serde_json::to_string_pretty(&summary).unwrap_or_default()
        )
    })?;
    let mut scheduled = vec![false; targets.len()];
    for o in &s.observations {
        scheduled[o.target] = true;
    }
    let sequence: Vec<usize> = s.observations.iter().map(|o| o.target).collect();
    // The Sun every six hours from the start to the end of the plan (at least both ends).
    let span_days = (s.end.jd - start.jd).max(0.0);
    let steps = ((span_days / 0.25).ceil() as usize).max(1);
    let sun_path: Vec<(f64, f64)> = (0..=steps)
        .map(|k| {
            let sun = sun_j2000(Epoch {
                jd: start.jd + span_days * k as f64 / steps as f64,
            });
            (sun.ra_deg, sun.dec_deg)
        })
        .collect();
    let title = format!(
        "{}: {} of {} targets, {} to {}",
        profile.name,
        s.observations.len(),
        targets.len(),
        format_utc(start),
        format_utc(s.end)
    );
    let draw_error = |e: wend_bench::sky::draw::DrawError| CliError::Failure(e.to_string());
    write_sky_map(
        &dir.join("sky-map.svg"),
        &SkyMap {
            title: &title,
            targets,
            scheduled: &scheduled,
            sequence: &sequence,
            sun_path_deg: &sun_path,
            band_deg: (profile.elongation_min_deg, profile.elongation_max_deg),
            caution: CAUTION,
        },
    )
    .map_err(draw_error)?;
    let points: Vec<(f64, f64)> = s
        .momentum_trace
        .iter()
        .map(|&(t, h)| (t / 3600.0, h))
        .collect();
    let dumps_hours: Vec<f64> = s.dump_times_s.iter().map(|t| t / 3600.0).collect();
    let momentum_title = format!(
        "{}: stored momentum, {} dumps, {:.4} kg propellant",
        profile.name, s.dumps, s.propellant_kg
    );
    write_momentum_chart(
        &dir.join("momentum.svg"),
        &MomentumTrace {
            title: &momentum_title,
            points: &points,
            limit_nms: profile.wheel_limit_nms,
            threshold_nms: profile.wheel_limit_nms * profile.wheel_margin,
            dumps_hours: &dumps_hours,
            caution: CAUTION,
        },
    )
    .map_err(draw_error)?;
    Ok(())
}
