//! The sky adapter's output side: UTC times, the plain CSV tables a planning team works from,
//! the JSON summary, and random target pools for benchmarks.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. The CSV files are plain (a header line, then data: readable by pandas and
//! spreadsheets with no options); the caution goes in `summary.json` (`caution`), the report
//! page and a `CAUTION.txt` beside the files ([`CAUTION_TXT`]).
//!
//! # `plan.csv`
//!
//! One row per observation, in time order ([`PLAN_COLUMNS`]): `seq` (1-based), `target` (its
//! id), `instrument`, `roll_deg` (offset from the nominal roll), `start_utc` and `end_utc`
//! (ISO 8601, UTC, whole seconds), `wait_before_s` (idle time since the previous observation
//! or the plan start), `idle` (where the telescope waited: `none`, `stay`, `early`, `park`),
//! `busy_before_s` (slews, settles, thermal settles, setups and dumps in that time),
//! `dumps_before` and `dump_propellant_before_kg` (dumps in that time and their propellant),
//! `slew_deg` (eigen-axis angle of the transition into the observation), `slew_s` (slew time
//! of every transition since the previous observation), `elongation_start_deg` and
//! `elongation_end_deg` (solar elongation at the start and end of the dwell), `hx_nms`,
//! `hy_nms`, `hz_nms` and `momentum_after_nms` (stored momentum after the observation,
//! inertial J2000 axes, and its length). `wait_before_s + busy_before_s` is the whole gap.
//! `wend sky check` reads this file back (columns `target`, `roll_deg`, `start_utc`).
//!
//! # `momentum.csv`
//!
//! The momentum trace ([`MOMENTUM_COLUMNS`]): `utc, hx_nms, hy_nms, hz_nms, h_nms, event`,
//! a row at the plan start (`start`) and wherever the stored momentum changes course: the end
//! of each slew (`slew`), wait (`wait`) and observation (`observe`), and each dump, before
//! (`dump_start`) and after (`dump_end`).
//!
//! # `visibility.csv`
//!
//! Every target's windows in the band over the horizon ([`VISIBILITY_COLUMNS`]): `target`,
//! `window` (1-based), `start_utc`, `end_utc`, `duration_h`, and `usable` (1 when the window,
//! cut to the target's proposal window, still holds its dwell). A target never in the band has
//! no row (see `unscheduled.csv`).
//!
//! # Time words
//!
//! One meaning per name in every output: `elapsed_s` is the time from the plan start until the
//! last observation ends, waiting included (the time objective); `busy_overhead_s` is the
//! slews, settles, thermal settles, setups and dumps, without waiting; `wait_s` is the idle
//! time.
//!
//! # `unscheduled.csv`
//!
//! One row per target left out: `target`, `priority`, `reason` (a code of
//! [`crate::schedule::Reason::code`]), `explanation` (a sentence), `min_elongation_deg` and
//! `max_elongation_deg` (its elongation range over the horizon).

use std::io::Write;
use std::path::Path;

use crate::front::{Front, Point};
use crate::geometry::norm;
use crate::plan::Plan;
use crate::schedule::{Activity, Context, Schedule, Unscheduled};
use crate::{Epoch, Profile, Target};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use serde_json::json;

/// The caution every output of the sky adapter carries.
pub const CAUTION: &str = "Plans are planning proposals to be confirmed by the operations team's validated tools. Spacecraft operations can damage hardware.";

/// The text of `CAUTION.txt`, written beside the plan's files.
pub const CAUTION_TXT: &str = "CAUTION\n\nPlans are planning proposals to be confirmed by the operations team's validated\nflight-dynamics and constraint-checking tools. Spacecraft operations can damage hardware.\n\nThe files in this directory (plan.csv, momentum.csv, visibility.csv, unscheduled.csv,\nfront.csv, plan-K.csv, the pictures and report.html) come from a planning model with\nstated simplifications (see the README's sky adapter section); none of them is a command\nfor the spacecraft.\n";

/// The demo's plan start, 2027-03-01T00:00:00Z (the start its targets were chosen for).
pub const DEMO_START_UTC: &str = "2027-03-01T00:00:00Z";

pub use crate::utc::{format_utc, parse_utc};

fn csv_error(e: csv::Error) -> std::io::Error {
    std::io::Error::other(e)
}

/// The columns of `plan.csv`, in order.
pub const PLAN_COLUMNS: [&str; 19] = [
    "seq",
    "target",
    "instrument",
    "roll_deg",
    "start_utc",
    "end_utc",
    "wait_before_s",
    "idle",
    "busy_before_s",
    "dumps_before",
    "dump_propellant_before_kg",
    "slew_deg",
    "slew_s",
    "elongation_start_deg",
    "elongation_end_deg",
    "hx_nms",
    "hy_nms",
    "hz_nms",
    "momentum_after_nms",
];

/// The rows of `plan.csv` as text (the columns of [`PLAN_COLUMNS`]).
pub fn plan_rows(profile: &Profile, targets: &[Target], schedule: &Schedule) -> Vec<Vec<String>> {
    schedule
        .observations
        .iter()
        .enumerate()
        .map(|(k, o)| {
            vec![
                (k + 1).to_string(),
                targets[o.target].id.clone(),
                profile
                    .instruments
                    .get(o.instrument)
                    .map_or(String::new(), |i| i.name.clone()),
                format!("{:.2}", o.roll_deg),
                format_utc(o.start),
                format_utc(o.end),
                format!("{:.1}", o.wait_s),
                o.idle.code().to_string(),
                format!("{:.1}", o.busy_s),
                o.dumps_before.to_string(),
                format!("{:.9}", o.dump_kg_before),
                format!("{:.3}", o.slew_deg),
                format!("{:.1}", o.slew_s),
                format!("{:.4}", o.elongation_start_deg),
                format!("{:.4}", o.elongation_end_deg),
                format!("{:.5}", o.h_after_nms[0]),
                format!("{:.5}", o.h_after_nms[1]),
                format!("{:.5}", o.h_after_nms[2]),
                format!("{:.5}", o.momentum_nms),
            ]
        })
        .collect()
}

/// Writes `plan.csv` (see the module notes) for `schedule` over `targets`.
pub fn write_plan_csv<W: Write>(
    out: &mut W,
    profile: &Profile,
    targets: &[Target],
    schedule: &Schedule,
) -> std::io::Result<()> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record(PLAN_COLUMNS).map_err(csv_error)?;
    for row in plan_rows(profile, targets, schedule) {
        w.write_record(&row).map_err(csv_error)?;
    }
    w.flush()
}

/// Writes `unscheduled.csv` (see the module notes).
pub fn write_unscheduled_csv<W: Write>(
    out: &mut W,
    targets: &[Target],
    unscheduled: &[Unscheduled],
) -> std::io::Result<()> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record([
        "target",
        "priority",
        "reason",
        "explanation",
        "min_elongation_deg",
        "max_elongation_deg",
    ])
    .map_err(csv_error)?;
    for u in unscheduled {
        w.write_record([
            targets[u.target].id.clone(),
            targets[u.target].priority.to_string(),
            u.reason.code().to_string(),
            u.reason.to_string(),
            format!("{:.3}", u.min_elongation_deg),
            format!("{:.3}", u.max_elongation_deg),
        ])
        .map_err(csv_error)?;
    }
    w.flush()
}

/// The columns of `momentum.csv`, in order.
pub const MOMENTUM_COLUMNS: [&str; 6] = ["utc", "hx_nms", "hy_nms", "hz_nms", "h_nms", "event"];

/// Writes `momentum.csv` (see the module notes).
pub fn write_momentum_csv<W: Write>(out: &mut W, schedule: &Schedule) -> std::io::Result<()> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record(MOMENTUM_COLUMNS).map_err(csv_error)?;
    let mut row = |at: Epoch, h: &[f64; 3], event: &str| {
        w.write_record([
            format_utc(at),
            format!("{:.5}", h[0]),
            format!("{:.5}", h[1]),
            format!("{:.5}", h[2]),
            format!("{:.5}", norm(h)),
            event.to_string(),
        ])
        .map_err(csv_error)
    };
    row(schedule.start, &schedule.start_momentum_nms, "start")?;
    for e in &schedule.events {
        if e.activity == Activity::Dump {
            row(e.start, &e.h_start_nms, "dump_start")?;
            row(e.end, &e.h_end_nms, "dump_end")?;
        } else {
            row(e.end, &e.h_end_nms, e.activity.code())?;
        }
    }
    w.flush()
}

/// The columns of `visibility.csv`, in order.
pub const VISIBILITY_COLUMNS: [&str; 6] = [
    "target",
    "window",
    "start_utc",
    "end_utc",
    "duration_h",
    "usable",
];

/// Writes `visibility.csv` (see the module notes) for every target of `ctx`.
pub fn write_visibility_csv<W: Write>(out: &mut W, ctx: &Context) -> std::io::Result<()> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record(VISIBILITY_COLUMNS).map_err(csv_error)?;
    for (j, t) in ctx.targets().iter().enumerate() {
        for (k, win) in ctx.visibility(j).windows.iter().enumerate() {
            let usable = ctx
                .allowed(j)
                .iter()
                .any(|a| a.start.jd >= win.start.jd - 1e-9 && a.end.jd <= win.end.jd + 1e-9);
            w.write_record([
                t.id.clone(),
                (k + 1).to_string(),
                format_utc(win.start),
                format_utc(win.end),
                format!("{:.3}", win.seconds() / 3600.0),
                u8::from(usable).to_string(),
            ])
            .map_err(csv_error)?;
        }
    }
    w.flush()
}

/// Seconds from `start` until the last observation of `s` ends, waiting included (the time
/// objective); 0 when nothing is scheduled.
pub fn elapsed_s(s: &Schedule, start: Epoch) -> f64 {
    if s.observations.is_empty() {
        return 0.0;
    }
    ((s.end.jd - start.jd) * 86_400.0).max(0.0)
}

/// Slews, settles, thermal settles, setups and dumps of `s`, seconds, without waiting.
pub fn busy_overhead_s(s: &Schedule) -> f64 {
    s.busy_s
}

fn totals(s: &Schedule, start: Epoch) -> serde_json::Value {
    json!({
        "scheduled": s.observations.len(),
        "unscheduled": s.unscheduled.len(),
        "elapsed_s": elapsed_s(s, start),
        "busy_overhead_s": busy_overhead_s(s),
        "wait_s": s.wait_s,
        "slew_deg": s.slew_deg,
        "dumps": s.dumps,
        "dumped_nms": s.dumped_nms,
        "final_momentum_nms": s.final_momentum_nms,
        "propellant_kg": s.propellant_kg,
    })
}

/// Busy overhead per scheduled observation of the plan over that of the baseline (the
/// targets in the order their windows close): below 1 when the plan is better. `None` when
/// either schedules nothing.
pub fn busy_overhead_ratio(plan: &Plan) -> Option<f64> {
    let per = |s: &Schedule| {
        (!s.observations.is_empty()).then(|| busy_overhead_s(s) / s.observations.len() as f64)
    };
    match (per(&plan.schedule), per(&plan.baseline)) {
        (Some(a), Some(b)) if b > 0.0 => Some(a / b),
        _ => None,
    }
}

/// The JSON summary of `wend sky plan --json`.
pub fn plan_json(
    profile: &Profile,
    targets: &[Target],
    plan: &Plan,
    start: Epoch,
    horizon_days: f64,
) -> serde_json::Value {
    let s = &plan.schedule;
    let mut reasons = serde_json::Map::new();
    for u in &s.unscheduled {
        let n = reasons
            .entry(u.reason.code())
            .or_insert(serde_json::Value::from(0u64));
        *n = serde_json::Value::from(n.as_u64().unwrap_or(0) + 1);
    }
    let start_pointing = profile
        .start_pointing
        .map(|p| json!({"ra_deg": p.ra_deg, "dec_deg": p.dec_deg, "roll_deg": p.roll_deg}));
    json!({
        "caution": CAUTION,
        "observatory": profile.name,
        "targets": targets.len(),
        "scheduled": s.observations.len(),
        "unscheduled": s.unscheduled.len(),
        "unscheduled_reasons": reasons,
        "elapsed_s": elapsed_s(s, start),
        "busy_overhead_s": busy_overhead_s(s),
        "wait_s": s.wait_s,
        "slew_deg": s.slew_deg,
        "propellant_kg": s.propellant_kg,
        "dumps": s.dumps,
        "dumped_nms": s.dumped_nms,
        "final_momentum_nms": s.final_momentum_nms,
        "peak_momentum_nms": s.peak_momentum_nms,
        "dump_threshold_nms": profile.wheel_limit_nms * profile.wheel_margin,
        "wheel_limit_nms": profile.wheel_limit_nms,
        "start_momentum_nms": profile.start_momentum_nms,
        "start_pointing": start_pointing,
        "roll_range_deg": [profile.roll_range_deg.0, profile.roll_range_deg.1],
        "elongation_band_deg": [profile.elongation_min_deg, profile.elongation_max_deg],
        "start_utc": format_utc(start),
        "end_utc": format_utc(s.end),
        "horizon_days": horizon_days,
        "propellant_lower_bound_kg": serde_json::Value::Null,
        "baseline": totals(&plan.baseline, start),
        "baseline_order": "targets in the order their allowed windows close",
        "busy_overhead_ratio": busy_overhead_ratio(plan),
        "core_order_feasible": plan.core_feasible,
        "stop_reason": plan.stop_reason.name(),
        "stop_explanation": plan.stop_reason.explain(),
        "search_seconds": plan.search_seconds,
        "seconds": plan.seconds,
    })
}

/// A hypervolume in s·kg (the front's objectives) in the unit every output shows it in, hours
/// × grams (divided by 3600, times 1000).
pub fn hour_grams(s_kg: f64) -> f64 {
    s_kg / 3.6
}

/// The front's reference point as the outputs write it, in hours of elapsed time and grams of
/// propellant: `{"elapsed_h": .., "propellant_g": ..}`.
pub fn reference_json(reference: Point) -> serde_json::Value {
    json!({
        "elapsed_h": reference.0 / 3600.0,
        "propellant_g": reference.1 * 1000.0,
    })
}

/// The column names of `front.csv`, in order; the JSON `front` rows have the same keys.
pub const FRONT_COLUMNS: [&str; 8] = [
    "plan",
    "elapsed_s",
    "end_utc",
    "busy_overhead_s",
    "wait_s",
    "propellant_kg",
    "dumps",
    "scheduled",
];

/// One plan of the front as `front.csv` and the JSON `front` rows show it (the fields are the
/// columns of [`FRONT_COLUMNS`]).
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct FrontLine {
    /// Plan number, from 1 (the fastest) along the front.
    pub plan: usize,
    /// From the plan start until the last observation ends, seconds (the time objective).
    pub elapsed_s: f64,
    /// When the last observation ends.
    pub end_utc: String,
    /// Busy overhead, seconds.
    pub busy_overhead_s: f64,
    /// Waiting, seconds.
    pub wait_s: f64,
    /// Propellant of the dumps and of the momentum left, kilograms.
    pub propellant_kg: f64,
    /// Momentum dumps.
    pub dumps: usize,
    /// Observations scheduled.
    pub scheduled: usize,
}

/// One [`FrontLine`] per plan of the front, in its order.
pub fn front_lines(front: &Front, start: Epoch) -> Vec<FrontLine> {
    front
        .plans
        .iter()
        .enumerate()
        .map(|(k, p)| FrontLine {
            plan: k + 1,
            elapsed_s: elapsed_s(&p.schedule, start),
            end_utc: format_utc(p.schedule.end),
            busy_overhead_s: busy_overhead_s(&p.schedule),
            wait_s: p.schedule.wait_s,
            propellant_kg: p.propellant_kg,
            dumps: p.schedule.dumps,
            scheduled: p.schedule.observations.len(),
        })
        .collect()
}

/// Writes `front.csv` (the columns of [`FRONT_COLUMNS`]).
pub fn write_front_csv<W: Write>(out: &mut W, front: &Front, start: Epoch) -> std::io::Result<()> {
    writeln!(out, "{}", FRONT_COLUMNS.join(","))?;
    for r in front_lines(front, start) {
        writeln!(
            out,
            // Milliseconds and micrograms: plans of a front can differ by less than a
            // tenth of a second or a milligram, and the file must not make one look dominated.
            "{},{:.3},{},{:.3},{:.3},{:.9},{},{}",
            r.plan,
            r.elapsed_s,
            r.end_utc,
            r.busy_overhead_s,
            r.wait_s,
            r.propellant_kg,
            r.dumps,
            r.scheduled
        )?;
    }
    Ok(())
}

/// True when the front's plans end at different times (more than a second apart): otherwise
/// the time objective does not separate them and only propellant does.
pub fn end_times_differ(front: &Front) -> bool {
    let ends: Vec<f64> = front.plans.iter().map(|p| p.elapsed_s).collect();
    let lo = ends.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = ends.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    hi - lo > 1.0
}

/// The keys the front adds to the JSON summary: `front` (the rows of `front.csv`),
/// `front_objectives`, the hypervolumes in h·g against `hypervolume_reference`, the knee, the
/// extremes and the search's effort.
pub fn front_json(front: &Front, start: Epoch) -> serde_json::Map<String, serde_json::Value> {
    let rows = front_lines(front, start);
    let extremes = match (front.plans.first(), front.plans.last()) {
        (Some(first), Some(last)) => json!({
            "fastest_plan": 1,
            "most_sparing_plan": front.plans.len(),
            "propellant_ratio_sparing_to_fastest": (first.propellant_kg > 0.0)
                .then(|| last.propellant_kg / first.propellant_kg),
        }),
        _ => serde_json::Value::Null,
    };
    let mut m = serde_json::Map::new();
    m.insert("front".into(), json!(rows));
    m.insert(
        "front_objectives".into(),
        json!("elapsed_s (seconds, waiting and dumps included), propellant_kg"),
    );
    m.insert("end_times_differ".into(), json!(end_times_differ(front)));
    m.insert(
        "hypervolume_h_g".into(),
        json!(hour_grams(front.hypervolume)),
    );
    m.insert(
        "hypervolume_reference".into(),
        reference_json(front.reference),
    );
    m.insert(
        "scalarised_hypervolume_h_g".into(),
        json!(hour_grams(front.scalarised_hypervolume)),
    );
    m.insert("archive_plans".into(), json!(front.archive_plans));
    m.insert(
        "archive_points".into(),
        json!(front
            .archive_points
            .iter()
            .map(|p| [p.0, p.1])
            .collect::<Vec<_>>()),
    );
    m.insert(
        "archive_hypervolume_h_g".into(),
        json!(hour_grams(front.archive_hypervolume)),
    );
    m.insert("knee_plan".into(), json!(front.knee.map(|k| k + 1)));
    m.insert("extremes".into(), extremes);
    m.insert("front_evaluations".into(), json!(front.evaluations));
    m.insert("front_seconds".into(), json!(front.seconds));
    m.insert("front_settled".into(), json!(front.settled));
    m.insert("propellant_lower_bound_kg".into(), serde_json::Value::Null);
    m
}

/// `n` random targets for benchmarks and tests (not the demo): directions uniform on the
/// sphere, dwells uniform from 10 to 60 minutes (whole seconds), instruments uniform over the
/// profile's. Ids `R00001`, `R00002`, … Seeded: the same seed gives the same pool.
pub fn random_targets(n: usize, seed: u64, profile: &Profile) -> Vec<Target> {
    let mut rng = Pcg64::seed_from_u64(seed);
    let instruments = profile.instruments.len().max(1);
    (0..n)
        .map(|i| {
            let ra_deg: f64 = rng.gen_range(0.0..360.0);
            // Uniform on the sphere: sin(dec) uniform in [-1, 1].
            let z: f64 = rng.gen_range(-1.0..=1.0);
            let dec_deg = z.asin().to_degrees();
            let duration_s = rng.gen_range(600..=3600) as f64;
            Target {
                id: format!("R{:05}", i + 1),
                ra_deg: (ra_deg * 1e4).round() / 1e4 % 360.0,
                dec_deg: (dec_deg * 1e4).round() / 1e4,
                duration_s,
                instrument: rng.gen_range(0..instruments),
                priority: crate::DEFAULT_PRIORITY,
                window: None,
                roll_range_deg: None,
            }
        })
        .collect()
}

/// Draws new dwells for `targets`, uniform in `range_s` seconds (whole seconds), seeded.
pub fn scale_dwells(targets: &mut [Target], range_s: (f64, f64), seed: u64) {
    let mut rng = Pcg64::seed_from_u64(seed ^ 0xd3e11);
    for t in targets {
        t.duration_s = if range_s.1 > range_s.0 {
            rng.gen_range(range_s.0..=range_s.1).round()
        } else {
            range_s.0.round()
        };
    }
}

/// Writes targets as a targets CSV that [`super::read_targets`] reads back with `profile`.
pub fn write_targets_csv<W: Write>(
    out: &mut W,
    targets: &[Target],
    profile: &Profile,
    comment: &str,
) -> std::io::Result<()> {
    for line in comment.lines() {
        writeln!(out, "# {line}")?;
    }
    let mut w = csv::Writer::from_writer(out);
    w.write_record(["id", "ra_deg", "dec_deg", "duration_s", "instrument"])
        .map_err(csv_error)?;
    for t in targets {
        let inst = profile
            .instruments
            .get(t.instrument)
            .map(|i| i.name.as_str())
            .unwrap_or("");
        w.write_record([
            t.id.as_str(),
            &format!("{:.4}", t.ra_deg),
            &format!("{:.4}", t.dec_deg),
            &format!("{}", t.duration_s),
            inst,
        ])
        .map_err(csv_error)?;
    }
    w.flush()
}

/// Refuses an output path that exists and is not a directory, before a long run.
pub fn check_out_dir(dir: &Path) -> Result<(), String> {
    if dir.exists() && !dir.is_dir() {
        return Err(format!("{}: exists and is not a directory", dir.display()));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn utc_times_round_trip_and_match_the_julian_date_of_known_instants() {
        // J2000.0 is 2000-01-01T12:00:00 TT, i.e. 11:58:55.816 UTC (TT − UTC = 64.184 s in
        // 2000; IERS). With this crate's fixed TT − UTC of 69.184 s the JD is off by the
        // 5 s difference, which the check allows.
        let e = parse_utc("2000-01-01T11:58:56Z").unwrap();
        assert!((e.jd - 2_451_545.0).abs() * 86_400.0 < 6.0, "{}", e.jd);
        // 2027-03-01 0h UTC is JD 2461465.5 (UTC); a bare date is midnight UTC.
        let d = parse_utc("2027-03-01").unwrap();
        assert!((d.jd - 2_461_465.5 - 69.184 / 86_400.0).abs() < 1e-9);
        assert_eq!(format_utc(d), "2027-03-01T00:00:00Z");
        let z = parse_utc("2027-03-01T02:00:00+02:00").unwrap();
        assert_eq!(format_utc(z), "2027-03-01T00:00:00Z");
        for bad in ["2027-03-01T00:00:00", "yesterday", "", "2027-13-01"] {
            assert!(parse_utc(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn random_targets_are_seeded_and_inside_the_sky() {
        let p = super::super::demo_profile();
        let a = random_targets(200, 3, &p);
        assert_eq!(a, random_targets(200, 3, &p));
        assert_ne!(a, random_targets(200, 4, &p));
        for t in &a {
            assert!((0.0..360.0).contains(&t.ra_deg) && (-90.0..=90.0).contains(&t.dec_deg));
            assert!((600.0..=3600.0).contains(&t.duration_s));
        }
        let mut text = Vec::new();
        write_targets_csv(&mut text, &a, &p, "test pool").unwrap();
        let back = super::super::parse_targets(std::str::from_utf8(&text).unwrap(), "t", &p);
        assert_eq!(back.unwrap(), a);
    }
}
