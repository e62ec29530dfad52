//! `wend sky`: observing plans for a sun-shaded observatory far from Earth.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.

use super::{write_file, CliError};
use clap::{Args, Subcommand};
use std::path::{Path, PathBuf};
use std::time::Duration;
use wend_sky::draw::{write_momentum_chart, write_sky_map, MomentumTrace, SkyMap};
use wend_sky::front::{search_front, Front, FrontOptions, FrontProgress};
use wend_sky::front_report::{write_front_svg, write_report_html, FrontReport, FrontRow, PlanPage};
use wend_sky::output::{
    self, busy_overhead_ratio, busy_overhead_s, elapsed_s, end_times_differ, format_utc,
    front_json, hour_grams, parse_utc, plan_json, CAUTION, CAUTION_TXT, DEMO_START_UTC,
};
use wend_sky::plan::{plan, PlanOptions, DEFAULT_HORIZON_DAYS};
use wend_sky::schedule::{Activity, Context, Play, Schedule, Visit};
use wend_sky::sun::sun_j2000;
use wend_sky::timeline::{write_timeline, Timeline, TimelineItem, TimelineKind};
use wend_sky::{demo_links, demo_profile, demo_targets, read_profile, read_targets};
use wend_sky::{Epoch, Link, Profile, StartPointing, Target};

#[derive(Args, Debug)]
pub struct SkyArgs {
    #[command(subcommand)]
    command: SkyCommand,
}

#[derive(Subcommand, Debug)]
enum SkyCommand {
    /// Turn a pool of targets into an observing plan that keeps every window and link, keeps
    /// overhead low and manages the momentum sunlight builds in the reaction wheels.
    Plan(PlanArgs),
    /// Replay a planner's own sequence (and rolls) and report every violated window, link or
    /// band, with the momentum, dumps and propellant (exit code 3 on a violation).
    Check(CheckArgs),
    /// Write a seeded random pool of targets (for benchmarks; not the demo).
    Targets(TargetsArgs),
}

/// What plan and check share: the pool, the observatory and the start.
#[derive(Args, Debug)]
struct PoolArgs {
    /// Observatory profile (TOML). Without it: the built-in demo profile.
    #[arg(long, value_name = "FILE")]
    profile: Option<PathBuf>,
    /// Timing links between targets (CSV: kind,first,second,min_lag_s,max_lag_s). Without a
    /// targets file: the demo's links.
    #[arg(long, value_name = "FILE")]
    links: Option<PathBuf>,
    /// Plan start, ISO 8601 with a UTC offset (2027-03-01T00:00:00Z, or a date for 00:00
    /// UTC). Needed with a targets file; the demo starts at 2027-03-01T00:00:00Z.
    #[arg(long, value_name = "ISO8601")]
    start: Option<String>,
    /// Length of the planning horizon, days.
    #[arg(long, default_value_t = DEFAULT_HORIZON_DAYS, value_name = "DAYS", allow_negative_numbers = true)]
    horizon_days: f64,
    /// Where the telescope points at the start: RA,DEC[,ROLL] in degrees (overrides the
    /// profile's start_ra_deg, start_dec_deg, start_roll_deg).
    #[arg(long, value_name = "RA,DEC[,ROLL]", allow_hyphen_values = true)]
    start_attitude: Option<String>,
    /// Momentum in the wheels at the start: HX,HY,HZ in N·m·s, inertial J2000 axes
    /// (overrides the profile's start_momentum_nms).
    #[arg(long, value_name = "HX,HY,HZ", allow_hyphen_values = true)]
    start_momentum: Option<String>,
    /// Allowed roll offsets about the boresight for every target without its own range:
    /// MIN,MAX in degrees (overrides the profile's roll_min_deg, roll_max_deg; 0,0 for the
    /// nominal roll only).
    #[arg(long, value_name = "MIN,MAX", allow_hyphen_values = true)]
    roll_range: Option<String>,
}

#[derive(Args, Debug)]
pub struct PlanArgs {
    /// Targets CSV (columns id,ra_deg,dec_deg,duration_s and optionally instrument,
    /// priority, window_start, window_end, roll_min_deg, roll_max_deg). Without it: the
    /// built-in demo targets of the invented Lantern Deep-Sky Observatory.
    targets: Option<PathBuf>,
    #[command(flatten)]
    pool: PoolArgs,
    /// Directory for plan.csv, momentum.csv, visibility.csv, unscheduled.csv, CAUTION.txt,
    /// the pictures and summary.json (created if missing). Without it nothing is written but
    /// the summary.
    #[arg(long, short, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Seconds for planning (default: 15 s, plus 1 s per 100 targets past 200), or for the
    /// whole front search with --front (default 30 s).
    #[arg(long, short, value_name = "SECONDS", allow_negative_numbers = true)]
    time_limit: Option<f64>,
    /// Seed of the searches.
    #[arg(long, short, default_value_t = 0)]
    seed: u64,
    /// Worker threads of the core search (default: one per core).
    #[arg(long, short = 'j')]
    threads: Option<usize>,
    /// Print one JSON object on stdout instead of the text summary (the caution is its
    /// `caution` key).
    #[arg(long)]
    json: bool,
    /// Search the Pareto front of plans over elapsed time and propellant and write
    /// front.csv, plan-K.csv, front.svg and report.html.
    #[arg(long)]
    front: bool,
}

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The plan to check: a CSV with a `target` column (ids, in observing order) and
    /// optionally `roll_deg` and `start_utc` (other columns are ignored, so a plan.csv the
    /// planner wrote reads as it is).
    plan: PathBuf,
    /// Targets CSV the plan draws on. Without it: the built-in demo targets.
    #[arg(long, value_name = "FILE")]
    targets: Option<PathBuf>,
    #[command(flatten)]
    pool: PoolArgs,
    /// Print one JSON object on stdout instead of the text report.
    #[arg(long)]
    json: bool,
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
    /// Shortest and longest dwell, seconds: MIN,MAX (default 600,3600).
    #[arg(long, value_name = "MIN,MAX")]
    dwell_s: Option<String>,
    /// Output CSV file.
    #[arg(long, short, value_name = "FILE")]
    out: PathBuf,
}

/// The sky part of `wend demo`: the demo pool planned with its front for `seconds`, the files
/// written to `out`, a short summary printed with where the report page is.
pub fn demo(out: &Path, seconds: f64, seed: u64) -> Result<(), CliError> {
    run_plan(PlanArgs {
        targets: None,
        pool: PoolArgs {
            profile: None,
            links: None,
            start: None,
            horizon_days: DEFAULT_HORIZON_DAYS,
            start_attitude: None,
            start_momentum: None,
            roll_range: None,
        },
        out: Some(out.to_path_buf()),
        time_limit: Some(seconds),
        seed,
        threads: None,
        json: false,
        front: true,
    })
}

/// Runs `wend sky ...`.
pub fn run(args: SkyArgs) -> Result<(), CliError> {
    match args.command {
        SkyCommand::Plan(a) => run_plan(a),
        SkyCommand::Check(a) => run_check(a),
        SkyCommand::Targets(a) => run_targets(a),
    }
}

fn load_profile(path: &Option<PathBuf>) -> Result<Profile, CliError> {
    match path {
        Some(p) => read_profile(p).map_err(|e| CliError::Input(e.to_string())),
        None => Ok(demo_profile()),
    }
}

/// Numbers separated by commas, `count` of them (or `min..=max`), for option `name`.
fn numbers(text: &str, name: &str, min: usize, max: usize) -> Result<Vec<f64>, CliError> {
    let v: Result<Vec<f64>, _> = text.split(',').map(|x| x.trim().parse::<f64>()).collect();
    match v {
        Ok(v) if (min..=max).contains(&v.len()) && v.iter().all(|x| x.is_finite()) => Ok(v),
        _ => Err(CliError::Input(format!(
            "{name}: expected {} finite numbers separated by commas, got '{text}'",
            if min == max {
                min.to_string()
            } else {
                format!("{min} to {max}")
            }
        ))),
    }
}

fn run_targets(a: TargetsArgs) -> Result<(), CliError> {
    let profile = load_profile(&a.profile)?;
    let mut targets = output::random_targets(a.count, a.seed, &profile);
    if let Some(text) = &a.dwell_s {
        let v = numbers(text, "--dwell-s", 2, 2)?;
        if !(0.0 <= v[0] && v[0] <= v[1] && v[1] <= 1e7) {
            return Err(CliError::Input(format!(
                "--dwell-s: need 0 <= MIN <= MAX <= 1e7 seconds, got {text}"
            )));
        }
        output::scale_dwells(&mut targets, (v[0], v[1]), a.seed);
    }
    let dwell = a
        .dwell_s
        .as_ref()
        .map_or(String::new(), |d| format!(" --dwell-s {d}"));
    let comment = format!(
        "Random targets for benchmarks (wend sky targets --count {} --seed {}{dwell}); invented \
         data.",
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

/// The pool, profile (with the start and roll options applied), links and start.
struct Pool {
    profile: Profile,
    targets: Vec<Target>,
    links: Vec<Link>,
    start: Epoch,
    horizon_days: f64,
    /// How the inputs are named in errors of the planner.
    names: String,
}

fn load_pool(targets_path: &Option<PathBuf>, a: &PoolArgs) -> Result<Pool, CliError> {
    let mut profile = load_profile(&a.profile)?;
    if let Some(text) = &a.start_attitude {
        let v = numbers(text, "--start-attitude", 2, 3)?;
        if !(-90.0..=90.0).contains(&v[1]) {
            return Err(CliError::Input(format!(
                "--start-attitude: declination {} is outside [-90, 90]",
                v[1]
            )));
        }
        profile.start_pointing = Some(StartPointing {
            ra_deg: v[0],
            dec_deg: v[1],
            roll_deg: v.get(2).copied().unwrap_or(0.0),
        });
    }
    if let Some(text) = &a.start_momentum {
        let v = numbers(text, "--start-momentum", 3, 3)?;
        profile.start_momentum_nms = [v[0], v[1], v[2]];
    }
    if let Some(text) = &a.roll_range {
        let v = numbers(text, "--roll-range", 2, 2)?;
        if !(-180.0 <= v[0] && v[0] <= v[1] && v[1] <= 180.0) {
            return Err(CliError::Input(format!(
                "--roll-range: need -180 <= MIN <= MAX <= 180, got {text}"
            )));
        }
        profile.roll_range_deg = (v[0], v[1]);
    }
    let (targets, start_text) = match targets_path {
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
    let links = match (&a.links, targets_path) {
        (Some(path), _) => wend_sky::links::read_links(path, &targets).map_err(input_error)?,
        (None, None) => demo_links(&targets),
        (None, Some(_)) => Vec::new(),
    };
    let start = parse_utc(&start_text).map_err(|e| CliError::Input(format!("--start: {e}")))?;
    if !(a.horizon_days.is_finite() && a.horizon_days > 0.0 && a.horizon_days <= 3660.0) {
        return Err(CliError::Input(format!(
            "--horizon-days must be in (0, 3660], got {}",
            a.horizon_days
        )));
    }
    let shown = |p: &Option<PathBuf>, demo: &str| {
        p.as_ref()
            .map_or_else(|| demo.to_string(), |p| p.display().to_string())
    };
    let names = format!(
        "{} (profile {})",
        shown(targets_path, "demo targets (built in)"),
        shown(&a.profile, "demo profile (built in)")
    );
    Ok(Pool {
        profile,
        targets,
        links,
        start,
        horizon_days: a.horizon_days,
        names,
    })
}

fn run_plan(a: PlanArgs) -> Result<(), CliError> {
    let pool = load_pool(&a.targets, &a.pool)?;
    let Pool {
        profile,
        targets,
        links,
        start,
        horizon_days,
        names,
    } = &pool;
    let planning_error = |e: &dyn std::fmt::Display| CliError::Input(format!("{names}: {e}"));
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
    let mut options = PlanOptions::new(*start);
    options.horizon_days = *horizon_days;
    options.time_limit = time_limit;
    options.seed = a.seed;
    options.threads = a.threads;
    options.stop = super::interrupt::handle();
    // The caution reaches the terminal once: on stdout, first line of the text summary or the
    // `caution` key of the JSON; stderr carries progress only.
    if !a.json {
        eprintln!(
            "planning {} targets of {} from {} over {} days ...",
            targets.len(),
            profile.name,
            format_utc(*start),
            horizon_days
        );
    }
    let (made, front) = if a.front {
        let mut fo = FrontOptions::new(options);
        if let Some(t) = time_limit {
            fo.time_limit = t;
        }
        let quiet = a.json;
        let progress = move |p: FrontProgress| {
            if !quiet {
                eprintln!(
                    "front: {} plans, hypervolume {:.1} h·g {}, {} plans played, {:.0} s",
                    p.plans,
                    hour_grams(p.hypervolume),
                    reference_text(p.reference),
                    p.evaluations,
                    p.seconds
                );
            }
        };
        let front = search_front(profile, targets, links, &fo, &progress)
            .map_err(|e| planning_error(&e))?;
        (front.single.clone(), Some(front))
    } else {
        (
            plan(profile, targets, links, &options).map_err(|e| planning_error(&e))?,
            None,
        )
    };
    let mut summary = plan_json(profile, targets, &made, *start, *horizon_days);
    if let (Some(front), Some(obj)) = (&front, summary.as_object_mut()) {
        obj.extend(front_json(front, *start));
    }
    if let Some(dir) = &a.out {
        let ctx = Context::with_links(profile, targets, links, *start, *horizon_days)
            .map_err(|e| planning_error(&e))?;
        write_outputs(dir, &ctx, &made.schedule, &summary)?;
        if let Some(front) = &front {
            write_front_files(dir, profile, targets, front, *start)?;
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
        format_utc(*start),
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
         slewing {:.1} deg, {} dumps, propellant {:.2} g, largest stored momentum {:.2} of {:.2} N·m·s",
        elapsed_s(s, *start) / 3600.0,
        busy_overhead_s(s) / 3600.0,
        s.wait_s / 3600.0,
        s.slew_deg,
        s.dumps,
        s.propellant_kg * 1000.0,
        s.peak_momentum_nms,
        profile.wheel_limit_nms * profile.wheel_margin
    );
    println!(
        "baseline (targets in the order their windows close): scheduled {}, elapsed {:.2} h \
         (busy overhead {:.2} h, waiting {:.2} h), {} dumps, propellant {:.2} g",
        b.observations.len(),
        elapsed_s(b, *start) / 3600.0,
        busy_overhead_s(b) / 3600.0,
        b.wait_s / 3600.0,
        b.dumps,
        b.propellant_kg * 1000.0
    );
    if let Some(r) = busy_overhead_ratio(&made) {
        println!("busy overhead per observation, plan / baseline: {r:.3}");
    }
    println!(
        "planning took {:.2} s and ended because {}",
        made.seconds,
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
                "  fastest (plan 1): elapsed {:.2} h, {:.2} g; most sparing (plan {}): elapsed {:.2} h, {:.2} g",
                f.elapsed_s / 3600.0,
                f.propellant_kg * 1000.0,
                front.plans.len(),
                l.elapsed_s / 3600.0,
                l.propellant_kg * 1000.0
            );
        }
        if !end_times_differ(front) {
            println!(
                "  every plan of the front ends at the same time: they differ in propellant only"
            );
        }
        println!(
            "  hypervolume of the {} reported plans {:.1} h·g {}; every plan found {:.1} h·g",
            front.plans.len(),
            hour_grams(front.hypervolume),
            reference_text(front.reference),
            hour_grams(front.archive_hypervolume),
        );
    }
    if let Some(dir) = &a.out {
        println!(
            "wrote {}: plan.csv, momentum.csv, visibility.csv, unscheduled.csv, CAUTION.txt, \
             sky-map.svg, momentum.svg, timeline.svg, summary.json{}",
            dir.display(),
            if front.is_some() {
                ", front.csv, plan-K.csv, front.svg, report.html"
            } else {
                ""
            }
        );
        if front.is_some() {
            println!("report page: {}", dir.join("report.html").display());
        }
    }
    Ok(())
}

/// "against the reference (X h elapsed, Y g)", the hypervolume's reference point as every
/// line shows it.
fn reference_text(r: (f64, f64)) -> String {
    format!(
        "against the reference ({:.2} h elapsed, {:.2} g)",
        r.0 / 3600.0,
        r.1 * 1000.0
    )
}

fn reasons_text(s: &Schedule) -> String {
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
    ctx: &Context,
    s: &Schedule,
    summary: &serde_json::Value,
) -> Result<(), CliError> {
    std::fs::create_dir_all(dir)
        .map_err(|e| CliError::Failure(format!("{}: cannot create: {e}", dir.display())))?;
    let targets = ctx.targets();
    write_file(&dir.join("CAUTION.txt"), |w| {
        use std::io::Write;
        w.write_all(CAUTION_TXT.as_bytes())
    })?;
    write_file(&dir.join("unscheduled.csv"), |w| {
        output::write_unscheduled_csv(w, targets, &s.unscheduled)
    })?;
    write_file(&dir.join("visibility.csv"), |w| {
        output::write_visibility_csv(w, ctx)
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
        [
            "plan.csv",
            "sky-map.svg",
            "momentum.svg",
            "momentum.csv",
            "timeline.svg",
        ],
        ctx.profile(),
        targets,
        s,
        ctx.start(),
        "",
    )
}

/// Writes one plan's table, sky map, momentum chart, momentum trace and timeline under the
/// five `names`.
fn write_plan_files(
    dir: &Path,
    names: [&str; 5],
    profile: &Profile,
    targets: &[Target],
    s: &Schedule,
    start: Epoch,
    label: &str,
) -> Result<(), CliError> {
    write_file(&dir.join(names[0]), |w| {
        output::write_plan_csv(w, profile, targets, s)
    })?;
    write_file(&dir.join(names[3]), |w| output::write_momentum_csv(w, s))?;
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
    let trace = s.momentum_trace();
    let dumps = s.dump_times_s();
    let momentum_title = format!(
        "{}{label}: stored momentum, {} dumps, {:.2} g propellant",
        profile.name,
        s.dumps,
        s.propellant_kg * 1000.0
    );
    write_momentum_chart(
        &dir.join(names[2]),
        &MomentumTrace {
            title: &momentum_title,
            start,
            points_s: &trace,
            components_nms: &[],
            limit_nms: profile.wheel_limit_nms,
            threshold_nms: profile.wheel_limit_nms * profile.wheel_margin,
            dumps_s: &dumps,
            caution: CAUTION,
        },
    )
    .map_err(draw_error)?;
    let items = timeline_items(targets, s, start);
    let timeline_title = format!(
        "{}{label}: {} observations, {} dumps",
        profile.name,
        s.observations.len(),
        s.dumps
    );
    write_timeline(
        &dir.join(names[4]),
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

/// The bars of a plan's timeline, straight from its events: observations (labelled with the
/// target), slews (to targets and parking attitudes, with settling and setups), waits and
/// dumps.
fn timeline_items(targets: &[Target], s: &Schedule, start: Epoch) -> Vec<TimelineItem> {
    let since = |e: Epoch| ((e.jd - start.jd) * 86_400.0).max(0.0);
    s.events
        .iter()
        .map(|e| TimelineItem {
            kind: match e.activity {
                Activity::Observe => TimelineKind::Observe,
                Activity::Slew => TimelineKind::Slew,
                Activity::Wait => TimelineKind::Wait,
                Activity::Dump => TimelineKind::Dump,
            },
            start_s: since(e.start),
            end_s: since(e.end).max(since(e.start)),
            label: match e.activity {
                Activity::Observe => e.target.and_then(|j| targets.get(j)).map(|t| t.id.clone()),
                _ => None,
            },
        })
        .collect()
}

/// A plan's table as the report shows it: the rows of its CSV file.
fn plan_page(
    profile: &Profile,
    targets: &[Target],
    s: &Schedule,
    k: usize,
    names: &[String; 5],
) -> PlanPage {
    PlanPage {
        plan: k,
        columns: output::PLAN_COLUMNS.iter().map(|c| c.to_string()).collect(),
        rows: output::plan_rows(profile, targets, s),
        csv: names[0].clone(),
        sky_map: names[1].clone(),
        momentum: names[2].clone(),
        timeline: names[4].clone(),
    }
}

/// The front's plans as the report shows them.
fn front_rows(front: &Front) -> Vec<FrontRow> {
    front
        .plans
        .iter()
        .enumerate()
        .map(|(k, p)| FrontRow {
            plan: k + 1,
            elapsed_s: p.elapsed_s,
            busy_overhead_s: busy_overhead_s(&p.schedule),
            wait_s: p.schedule.wait_s,
            propellant_kg: p.propellant_kg,
            dumps: p.schedule.dumps,
            scheduled: p.schedule.observations.len(),
        })
        .collect()
}

/// front.csv, plan-K.csv (with its sky map, momentum chart and trace), front.svg and
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
            format!("plan-{}-momentum.csv", k + 1),
            format!("plan-{}-timeline.svg", k + 1),
        ];
        pages.push(plan_page(profile, targets, &p.schedule, k + 1, &names));
        write_plan_files(
            dir,
            [&names[0], &names[1], &names[2], &names[3], &names[4]],
            profile,
            targets,
            &p.schedule,
            start,
            &format!(" (plan {})", k + 1),
        )?;
    }
    let title = format!(
        "{}: {} targets from {}, the front of elapsed time against propellant",
        profile.name,
        targets.len(),
        format_utc(start)
    );
    let single = &front.single.schedule;
    let mut notes = vec![
        format!(
            "Time objective: elapsed time from the plan start until the last observation ends, waiting and dumps included; the busy overhead (slews, settling, thermal settling, setups, dumps) is reported beside it. Every plan schedules the same {} targets, those of the fastest plan.",
            single.observations.len()
        ),
        format!(
            "Hypervolume {}: {:.1} h·g over the {} non-dominated plans found, {:.1} h·g over the {} shown here.",
            reference_text(front.reference),
            hour_grams(front.archive_hypervolume),
            front.archive_plans,
            hour_grams(front.hypervolume),
            front.plans.len(),
        ),
        "No lower bound on propellant is given: none is provably valid in the model (transitions, waits and the Sun's motion all add impulse).".to_string(),
        format!(
            "{} plans played out in {:.1} s.",
            front.evaluations, front.seconds
        ),
    ];
    if !end_times_differ(front) {
        notes.insert(
            0,
            "Every plan of this front ends at the same time: they differ in propellant only."
                .to_string(),
        );
    }
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

/// Removes `plan-K.csv`, `plan-K-sky-map.svg`, `plan-K-momentum.svg` and
/// `plan-K-momentum.csv` of an earlier front in `dir`, so that a smaller front does not leave
/// plans of another run beside it.
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
        let ours = [
            ".csv",
            "-sky-map.svg",
            "-momentum.svg",
            "-momentum.csv",
            "-timeline.svg",
        ];
        if digits > 0 && ours.contains(&tail) {
            std::fs::remove_file(&path).map_err(fail)?;
        }
    }
    Ok(())
}

/// One finding of `wend sky check`.
#[derive(serde::Serialize)]
struct Finding {
    /// Line of the plan file.
    line: usize,
    /// Target id.
    target: String,
    /// What is wrong.
    problem: String,
    /// True when the plan breaks a rule (false for a note, such as a roll replayed at the
    /// nearest candidate).
    violation: bool,
}

fn run_check(a: CheckArgs) -> Result<(), CliError> {
    let pool = load_pool(&a.targets, &a.pool)?;
    let planned =
        wend_sky::plan_file::read_plan_file(&a.plan, &pool.targets).map_err(input_error)?;
    let ctx = Context::with_links(
        &pool.profile,
        &pool.targets,
        &pool.links,
        pool.start,
        pool.horizon_days,
    )
    .map_err(|e| CliError::Input(format!("{}: {e}", pool.names)))?;
    let plan_name = a.plan.display().to_string();
    let mut findings: Vec<Finding> = Vec::new();
    let mut play = Play::new(&ctx);
    for o in &planned {
        let id = pool.targets[o.target].id.clone();
        let rolls = ctx.rolls(o.target);
        // The planned roll must be one the target allows; the nearest candidate is replayed.
        let (lo, hi) = pool.targets[o.target]
            .roll_range_deg
            .unwrap_or(pool.profile.roll_range_deg);
        if o.roll_deg < lo - 1e-6 || o.roll_deg > hi + 1e-6 {
            findings.push(Finding {
                line: o.line,
                target: id.clone(),
                problem: format!(
                    "roll {:.2}° is outside the allowed range [{lo}, {hi}]°",
                    o.roll_deg
                ),
                violation: true,
            });
        }
        let roll = rolls
            .iter()
            .enumerate()
            .min_by(|x, y| {
                (x.1 - o.roll_deg)
                    .abs()
                    .total_cmp(&(y.1 - o.roll_deg).abs())
            })
            .map_or(0, |(k, _)| k as u8);
        if (rolls[roll as usize] - o.roll_deg).abs() > 1e-6 && o.roll_deg >= lo && o.roll_deg <= hi
        {
            findings.push(Finding {
                line: o.line,
                target: id.clone(),
                problem: format!(
                    "roll {:.2}° is replayed at the nearest candidate roll {:.2}°",
                    o.roll_deg, rolls[roll as usize]
                ),
                violation: false,
            });
        }
        let v = Visit {
            target: o.target,
            roll,
        };
        let result = match o.start {
            Some(at) => play.push_not_before(v, at),
            None => play.push(v),
        };
        match result {
            Err(reason) => findings.push(Finding {
                line: o.line,
                target: id,
                problem: format!("cannot be observed at its turn: {reason}"),
                violation: true,
            }),
            Ok(()) => {
                if let (Some(at), Some(done)) = (o.start, play.schedule().observations.last()) {
                    let late = (done.start.jd - at.jd) * 86_400.0;
                    if late > 1.0 {
                        findings.push(Finding {
                            line: o.line,
                            target: id,
                            problem: format!(
                                "planned start {} is not possible: the earliest start that keeps the band, its windows, links and momentum rules is {} ({:.0} s later)",
                                format_utc(at),
                                format_utc(done.start),
                                late
                            ),
                            violation: true,
                        });
                    }
                }
            }
        }
    }
    let s = play.finish(&[]);
    let bad = findings.iter().any(|f| f.violation);
    if a.json {
        let summary = serde_json::json!({
            "caution": CAUTION,
            "plan": plan_name,
            "observations": planned.len(),
            "replayed": s.observations.len(),
            "violations": findings,
            "ok": !bad,
            "elapsed_s": elapsed_s(&s, pool.start),
            "busy_overhead_s": busy_overhead_s(&s),
            "wait_s": s.wait_s,
            "dumps": s.dumps,
            "propellant_kg": s.propellant_kg,
            "peak_momentum_nms": s.peak_momentum_nms,
            "dump_threshold_nms": pool.profile.wheel_limit_nms * pool.profile.wheel_margin,
            "final_momentum_nms": s.final_momentum_nms,
        });
        println!("{summary}");
    } else {
        println!("CAUTION: {CAUTION}");
        println!(
            "{plan_name}: {} observations, {} replayed by the planner's rules",
            planned.len(),
            s.observations.len()
        );
        for f in &findings {
            println!("{plan_name}:{}: {}: {}", f.line, f.target, f.problem);
        }
        println!(
            "elapsed {:.2} h (busy overhead {:.2} h, waiting {:.2} h), {} dumps, propellant {:.2} g, largest stored momentum {:.2} of {:.2} N·m·s",
            elapsed_s(&s, pool.start) / 3600.0,
            busy_overhead_s(&s) / 3600.0,
            s.wait_s / 3600.0,
            s.dumps,
            s.propellant_kg * 1000.0,
            s.peak_momentum_nms,
            pool.profile.wheel_limit_nms * pool.profile.wheel_margin
        );
        println!(
            "{}",
            if bad {
                "violations found"
            } else {
                "no violation"
            }
        );
    }
    if bad {
        return Err(CliError::Infeasible(format!(
            "{plan_name}: the plan breaks the rules above"
        )));
    }
    Ok(())
}
