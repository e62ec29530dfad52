//! `wend sky`: observing plans for a sun-shaded observatory far from Earth.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.

use super::{write_file, CliError};
use clap::{Args, Subcommand};
use std::path::{Path, PathBuf};
use std::time::Duration;
use wend::Method;
use wend_sky::draw::{write_momentum_chart, write_sky_map, MomentumTrace, SkyMap};
use wend_sky::front::{search_front, Front, FrontOptions, FrontProgress};
use wend_sky::front_report::{write_front_svg, write_report_html, FrontReport, FrontRow, PlanPage};
use wend_sky::output::{
    self, busy_overhead_ratio, busy_overhead_s, elapsed_s, format_utc, front_json, hour_grams,
    parse_utc, plan_json, CAUTION, DEMO_START_UTC,
};
use wend_sky::plan::{plan, PlanOptions, DEFAULT_HORIZON_DAYS};
use wend_sky::schedule::Schedule;
use wend_sky::sun::sun_j2000;
use wend_sky::timeline::{write_timeline, Timeline, TimelineItem, TimelineKind};
use wend_sky::{demo_profile, demo_targets, read_profile, read_targets};
use wend_sky::{Epoch, Profile, Target};

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
    #[arg(long, short, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Seconds for the order search (default: 2 s, plus 1 s per 100 targets past 200).
    #[arg(long, short, value_name = "SECONDS", allow_negative_numbers = true)]
    time_limit: Option<f64>,
    /// Seed of the order search.
    #[arg(long, short, default_value_t = 0)]
    seed: u64,
    /// Worker threads of the search (default: one per core).
    #[arg(long, short = 'j')]
    threads: Option<usize>,
    /// Print one JSON object on stdout instead of the text summary (the caution is its
    /// `caution` key).
    #[arg(long)]
    json: bool,
    /// Search the Pareto front of plans over busy overhead (waiting excluded) and propellant
    /// (for --time-limit seconds, default 30) and write front.csv, plan-K.csv, front.svg and
    /// report.html.
    #[arg(long)]
    front: bool,
}

#[derive(Args, Debug)]
pub struct TargetsArgs {
    /// Number of targets.
    #[arg(long, value_name = "N")]
    count: usize,
    /// Seed; the same seed gives the same pool.
    #[arg(long, short, default_value_t = 0)]
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

/// A failure of the planner, which has no file of its own: the targets and the profile it was
/// given are named.
fn planning_error(a: &PlanArgs, e: impl std::fmt::Display) -> CliError {
    let shown = |p: &Option<PathBuf>, demo: &str| {
        p.as_ref()
            .map_or_else(|| demo.to_string(), |p| p.display().to_string())
    };
    CliError::Input(format!(
        "{} (profile {}): {e}",
        shown(&a.targets, "demo targets (built in)"),
        shown(&a.profile, "demo profile (built in)")
    ))
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
    options.stop = super::interrupt::handle();
    // The caution reaches the terminal once: on stdout, first line of the text summary or the
    // `caution` key of the JSON; stderr carries progress only.
    if !a.json {
        eprintln!(
            "planning {} targets of {} from {} over {} days ...",
            targets.len(),
            profile.name,
            format_utc(start),
            a.horizon_days
        );
    }
    let (made, front) = if a.front {
        let mut fo = FrontOptions::new(options);
        if let Some(t) = time_limit {
            fo.time_limit = t;
        }
        let quiet = a.json;
        let progress = move |p: FrontProgress| {
            if quiet {
                return;
            }
            match (p.hypervolume, p.reference) {
                (Some(hv), Some(r)) => eprintln!(
                    "front: {} plans, hypervolume {:.1} h·g {}, {} plans played, {:.0} s",
                    p.plans,
                    hour_grams(hv),
                    reference_text(r),
                    p.evaluations,
                    p.seconds
                ),
                _ => eprintln!(
                    "front: {} plans from the weighted runs (the hypervolume follows once they \
                     fix its reference), {} plans played, {:.0} s",
                    p.plans, p.evaluations, p.seconds
                ),
            }
        };
        let front =
            search_front(&profile, &targets, &fo, &progress).map_err(|e| planning_error(&a, e))?;
        (front.single.clone(), Some(front))
    } else {
        (
            plan(&profile, &targets, &options).map_err(|e| planning_error(&a, e))?,
            None,
        )
    };
    let mut summary = plan_json(&profile, &targets, &made, start, a.horizon_days);
    if let (Some(front), Some(obj)) = (&front, summary.as_object_mut()) {
        obj.extend(front_json(front, start));
    }
    if let Some(dir) = &a.out {
        write_outputs(dir, &profile, &targets, &made, &summary, start)?;
        if let Some(front) = &front {
            write_front_files(dir, &profile, &targets, front, start)?;
        }
    }
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
        "elapsed {:.2} h until the last observation ends (busy overhead {:.2} h, waiting {:.2} h), \
         slewing {:.1} deg, {} dumps, propellant {:.4} kg, {} repairs",
        elapsed_s(s, start) / 3600.0,
        busy_overhead_s(s) / 3600.0,
        s.wait_s / 3600.0,
        s.slew_deg,
        s.dumps,
        s.propellant_kg,
        s.repairs
    );
    println!(
        "nearest neighbour in time: scheduled {}, elapsed {:.2} h (busy overhead {:.2} h, \
         waiting {:.2} h), {} dumps, propellant {:.4} kg",
        b.observations.len(),
        elapsed_s(b, start) / 3600.0,
        busy_overhead_s(b) / 3600.0,
        b.wait_s / 3600.0,
        b.dumps,
        b.propellant_kg
    );
    if let Some(r) = busy_overhead_ratio(&made) {
        println!("busy overhead per observation, plan / nearest neighbour: {r:.3}");
    }
    println!(
        "order made by the {} strategy ({}); {}",
        made.strategy.name(),
        made.strategy.describe(),
        if made.polished {
            "re-searching it a day at a time then improved it"
        } else {
            "re-searching it a day at a time found nothing better"
        }
    );
    println!(
        "planning took {:.2} s (searches and simulations {:.2} s) and ended because {}",
        made.seconds,
        made.search_seconds,
        made.stop_reason.explain()
    );
    if let Some(front) = &front {
        println!(
            "front: {} plans reported of {} non-dominated found ({} plans played in {:.1} s){}",
            front.plans.len(),
            front.archive_plans,
            front.evaluations,
            front.seconds,
            front
                .knee
                .map_or(String::new(), |k| format!(", knee plan {}", k + 1))
        );
        if let (Some(f), Some(l)) = (front.plans.first(), front.plans.last()) {
            println!(
                "  fastest (plan 1): {:.2} h busy overhead, {:.1} g; most sparing (plan {}): {:.2} h busy overhead, {:.1} g",
                f.busy_overhead_s / 3600.0,
                f.propellant_kg * 1000.0,
                front.plans.len(),
                l.busy_overhead_s / 3600.0,
                l.propellant_kg * 1000.0
            );
        }
        println!(
            "  hypervolume of the {} reported plans {:.1} h·g {}; every plan found {:.1} h·g; \
             weighted runs alone {:.1} h·g",
            front.plans.len(),
            hour_grams(front.hypervolume),
            reference_text(front.reference),
            hour_grams(front.archive_hypervolume),
            hour_grams(front.scalarised_hypervolume)
        );
    }
    if let Some(dir) = &a.out {
        println!(
            "wrote {}: plan.csv, unscheduled.csv, sky-map.svg, momentum.svg, timeline.svg, summary.json{}",
            dir.display(),
            if front.is_some() {
                ", front.csv, plan-K.csv, front.svg, report.html"
            } else {
                ""
            }
        );
    }
    Ok(())
}

/// "against the reference (X h busy overhead, Y g)", the hypervolume's reference point as every
/// line shows it.
fn reference_text(r: (f64, f64)) -> String {
    format!(
        "against the reference ({:.2} h busy overhead, {:.1} g)",
        r.0 / 3600.0,
        r.1 * 1000.0
    )
}

fn reasons_text(s: &wend_sky::schedule::Schedule) -> String {
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
    made: &wend_sky::plan::Plan,
    summary: &serde_json::Value,
    start: Epoch,
) -> Result<(), CliError> {
    std::fs::create_dir_all(dir)
        .map_err(|e| CliError::Failure(format!("{}: cannot create: {e}", dir.display())))?;
    let s = &made.schedule;
    write_file(&dir.join("unscheduled.csv"), |w| {
        output::write_unscheduled_csv(w, targets, &s.unscheduled)
    })?;
    write_file(&dir.join("summary.json"), |w| {
        use std::io::Write;
        writeln!(
            w,
            "{}",
            serde_json::to_string_pretty(summary).unwrap_or_default()
        )
    })?;
    write_plan_files(
        dir,
        ["plan.csv", "sky-map.svg", "momentum.svg", "timeline.svg"],
        profile,
        targets,
        s,
        start,
        "",
    )
}

/// Writes one plan's table, sky map, momentum chart and timeline under the four `names`.
fn write_plan_files(
    dir: &Path,
    names: [&str; 4],
    profile: &Profile,
    targets: &[Target],
    s: &Schedule,
    start: Epoch,
    label: &str,
) -> Result<(), CliError> {
    write_file(&dir.join(names[0]), |w| {
        output::write_plan_csv(w, targets, s)
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
        "{}{label}: {} of {} targets, {} to {}",
        profile.name,
        s.observations.len(),
        targets.len(),
        format_utc(start),
        format_utc(s.end)
    );
    let draw_error = |e: wend_sky::draw::DrawError| CliError::Failure(e.to_string());
    write_sky_map(
        &dir.join(names[1]),
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
    let momentum_title = format!(
        "{}{label}: stored momentum, {} dumps, {:.4} kg propellant",
        profile.name, s.dumps, s.propellant_kg
    );
    write_momentum_chart(
        &dir.join(names[2]),
        &MomentumTrace {
            title: &momentum_title,
            start,
            points_s: &s.momentum_trace,
            components_nms: &[],
            limit_nms: profile.wheel_limit_nms,
            threshold_nms: profile.wheel_limit_nms * profile.wheel_margin,
            dumps_s: &s.dump_times_s,
            caution: CAUTION,
        },
    )
    .map_err(draw_error)?;
    let items = timeline_items(profile, targets, s, start);
    let timeline_title = format!(
        "{}{label}: {} observations, {} dumps",
        profile.name,
        s.observations.len(),
        s.dumps
    );
    write_timeline(
        &dir.join(names[3]),
        &Timeline {
            title: &timeline_title,
            start,
            end: if s.end.jd > start.jd { s.end } else { start },
            items: &items,
            caution: CAUTION,
        },
    )
    .map_err(draw_error)
}

/// The bars of a plan's timeline: each observation, the waiting before it, its slew (with
/// settling and setup: the busy time before it less any dump) and the dumps.
fn timeline_items(
    profile: &Profile,
    targets: &[Target],
    s: &Schedule,
    start: Epoch,
) -> Vec<TimelineItem> {
    let since = |e: Epoch| ((e.jd - start.jd) * 86_400.0).max(0.0);
    let mut items = Vec::new();
    let mut prev_end = 0.0_f64;
    for o in &s.observations {
        let (o_start, o_end) = (since(o.start), since(o.end));
        if o.wait_s > 0.0 {
            items.push(TimelineItem {
                kind: TimelineKind::Wait,
                start_s: prev_end,
                end_s: (prev_end + o.wait_s).min(o_start),
                label: None,
            });
        }
        let dump = if o.dump { profile.dump_s } else { 0.0 };
        let busy = (o.overhead_s - o.wait_s - dump).max(0.0);
        if busy > 0.0 {
            items.push(TimelineItem {
                kind: TimelineKind::Slew,
                start_s: (o_start - busy).max(prev_end),
                end_s: o_start,
                label: None,
            });
        }
        items.push(TimelineItem {
            kind: TimelineKind::Observe,
            start_s: o_start,
            end_s: o_end.max(o_start),
            label: targets.get(o.target).map(|t| t.id.clone()),
        });
        prev_end = o_end;
    }
    let span = since(s.end);
    for &t in &s.dump_times_s {
        items.push(TimelineItem {
            kind: TimelineKind::Dump,
            start_s: t.min(span),
            end_s: (t + profile.dump_s).min(span).max(t.min(span)),
            label: None,
        });
    }
    items
}

/// A plan's table as the report shows it: the rows of its CSV file, less the caution line.
fn plan_page(
    targets: &[Target],
    s: &Schedule,
    k: usize,
    names: &[String; 4],
) -> Result<PlanPage, CliError> {
    let mut text = Vec::new();
    output::write_plan_csv(&mut text, targets, s)
        .map_err(|e| CliError::Failure(format!("plan {k}: {e}")))?;
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_slice());
    let fail = |e: csv::Error| CliError::Failure(format!("plan {k}: {e}"));
    let columns: Vec<String> = reader
        .headers()
        .map_err(fail)?
        .iter()
        .map(str::to_string)
        .collect();
    let mut rows = Vec::new();
    for record in reader.records() {
        rows.push(record.map_err(fail)?.iter().map(str::to_string).collect());
    }
    Ok(PlanPage {
        plan: k,
        columns,
        rows,
        csv: names[0].clone(),
        sky_map: names[1].clone(),
        momentum: names[2].clone(),
        timeline: names[3].clone(),
    })
}

/// The front's plans as the report shows them.
fn front_rows(front: &Front) -> Vec<FrontRow> {
    front
        .plans
        .iter()
        .enumerate()
        .map(|(k, p)| FrontRow {
            plan: k + 1,
            busy_overhead_s: p.busy_overhead_s,
            wait_s: p.schedule.wait_s,
            propellant_kg: p.propellant_kg,
            dumps: p.schedule.dumps,
            scheduled: p.schedule.observations.len(),
        })
        .collect()
}

/// front.csv, plan-K.csv (with plan-K-sky-map.svg and plan-K-momentum.svg), front.svg and
/// report.html.
fn write_front_files(
    dir: &Path,
    profile: &Profile,
    targets: &[Target],
    front: &Front,
    start: Epoch,
) -> Result<(), CliError> {
    remove_old_plan_files(dir)?;
    let rows = front_rows(front);
    write_file(&dir.join("front.csv"), |w| {
        output::write_front_csv(w, front, start)
    })?;
    let mut pages = Vec::new();
    for (k, p) in front.plans.iter().enumerate() {
        let names = [
            format!("plan-{}.csv", k + 1),
            format!("plan-{}-sky-map.svg", k + 1),
            format!("plan-{}-momentum.svg", k + 1),
            format!("plan-{}-timeline.svg", k + 1),
        ];
        pages.push(plan_page(targets, &p.schedule, k + 1, &names)?);
        write_plan_files(
            dir,
            [&names[0], &names[1], &names[2], &names[3]],
            profile,
            targets,
            &p.schedule,
            start,
            &format!(" (plan {})", k + 1),
        )?;
    }
    let title = format!(
        "{}: {} targets from {}, the front of busy overhead against propellant",
        profile.name,
        targets.len(),
        format_utc(start)
    );
    let single = &front.single.schedule;
    let notes = vec![
        format!(
            "Time objective: busy overhead (slews, settling, thermal settling, setups, dumps), waiting excluded; waiting is reported apart. Every plan schedules at least {} observations, as many as the single-objective plan.",
            front.min_scheduled
        ),
        format!(
            "Single-objective plan (wend sky plan without --front): busy overhead {:.2} h, propellant {:.1} g.",
            busy_overhead_s(single) / 3600.0,
            single.propellant_kg * 1000.0
        ),
        format!(
            "Hypervolume {} (1.1 times the largest busy overhead and propellant of the weighted runs): weighted runs alone {:.1} h·g ({} plans); with the Pareto local search {:.1} h·g ({} non-dominated plans, of which this report shows {} spread along the front, {:.1} h·g).",
            reference_text(front.reference),
            hour_grams(front.scalarised_hypervolume),
            front.scalarised_plans,
            hour_grams(front.archive_hypervolume),
            front.archive_plans,
            front.plans.len(),
            hour_grams(front.hypervolume)
        ),
        format!(
            "{} plans played out in {:.1} s.",
            front.evaluations, front.seconds
        ),
    ];
    let report = FrontReport {
        title: &title,
        caution: CAUTION,
        front: &rows,
        knee: front.knee,
        dominated: &front.dominated,
        hypervolume: front.hypervolume,
        reference: front.reference,
        notes: &notes,
        plans: &pages,
    };
    let draw_error = |e: wend_sky::draw::DrawError| CliError::Failure(e.to_string());
    write_front_svg(&dir.join("front.svg"), &report).map_err(draw_error)?;
    write_report_html(&dir.join("report.html"), &report).map_err(draw_error)
}

/// Removes `plan-K.csv`, `plan-K-sky-map.svg`, `plan-K-momentum.svg` and `plan-K-timeline.svg`
/// of an earlier front
/// in `dir`, so that a smaller front does not leave plans of another run beside it.
fn remove_old_plan_files(dir: &Path) -> Result<(), CliError> {
    let fail = |e: std::io::Error| CliError::Failure(format!("{}: {e}", dir.display()));
    for entry in std::fs::read_dir(dir).map_err(fail)? {
        let path = entry.map_err(fail)?.path();
        let Some(name) = path.file_name().and_then(|n| n.to_str()) else {
            continue;
        };
        let Some(rest) = name.strip_prefix("plan-") else {
            continue;
        };
        let digits = rest.bytes().take_while(u8::is_ascii_digit).count();
        let tail = &rest[digits..];
        if digits > 0 && [".csv", "-sky-map.svg", "-momentum.svg", "-timeline.svg"].contains(&tail)
        {
            std::fs::remove_file(&path).map_err(fail)?;
        }
    }
    Ok(())
}
