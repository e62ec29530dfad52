//! The sky adapter's output side: UTC times, the plan and unscheduled tables, the JSON
//! summary, and random target pools for benchmarks.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Every file written here says so in its first line (CSV: a `#` comment,
//! which the targets reader and most CSV libraries skip with a comment option).
//!
//! # `plan.csv`
//!
//! One row per observation, in time order: `position` (1-based), `id`, `start_utc` and
//! `end_utc` (ISO 8601, UTC, whole seconds), `elongation_start_deg` and
//! `elongation_end_deg` (solar elongation at the start and end of the dwell), `slew_deg`
//! (eigen-axis angle from the previous target), `slew_s`, `wait_before_s` (time between the
//! end of the previous observation, or the plan start, and this start spent waiting for the
//! target's window), `busy_before_s` (the rest of that time: dump, slew, settle, thermal,
//! setup), `momentum_nms` (`|H|` after the observation) and `dump` (1 when a momentum dump
//! precedes the observation, else 0). The two `_before_s` columns add up to the whole gap.
//!
//! # Time words
//!
//! One meaning per name in every output: `elapsed_s` is the time from the plan start until the
//! last observation ends, waiting included (the model's time objective); `busy_overhead_s` is
//! the slews, settles, thermal settles, setups and dumps between observations, without
//! waiting; `wait_s` is the waiting.
//!
//! # `unscheduled.csv`
//!
//! One row per target left out: `id`, `reason` (a code of
//! [`crate::schedule::Reason::code`]), `explanation` (a sentence), `min_elongation_deg`
//! and `max_elongation_deg` (its elongation range over the horizon).

use std::io::Write;
use std::path::Path;

use crate::front::{Front, Point};
use crate::plan::Plan;
use crate::schedule::{Schedule, Unscheduled};
use crate::{Epoch, Profile, Target};
use rand::{Rng, SeedableRng};
use rand_pcg::Pcg64;
use serde_json::json;
use time::format_description::well_known::{Iso8601, Rfc3339};
use time::OffsetDateTime;

/// The caution every output of the sky adapter carries.
pub const CAUTION: &str = "Plans are planning proposals to be confirmed by the operations team's validated tools. Spacecraft operations can damage hardware.";

/// The demo's plan start, 2027-03-01T00:00:00Z (the start its targets were chosen for).
pub const DEMO_START_UTC: &str = "2027-03-01T00:00:00Z";

/// Parses an ISO 8601 UTC time (`2027-03-01T12:30:00Z`, an explicit offset such as `+02:00`,
/// or a bare date `2027-03-01`, taken as 00:00 UTC) into an [`Epoch`] (TT, see
/// [`Epoch::from_unix_seconds`]). Times without an offset are refused: a plan must not shift
/// by the local time zone.
pub fn parse_utc(text: &str) -> Result<Epoch, String> {
    let t = text.trim();
    let full = if t.len() == 10 && t.as_bytes().get(4) == Some(&b'-') {
        format!("{t}T00:00:00Z")
    } else {
        t.to_string()
    };
    let when = OffsetDateTime::parse(&full, &Iso8601::DEFAULT).map_err(|e| {
        format!(
            "'{text}' is not an ISO 8601 time with a UTC offset (like 2027-03-01T00:00:00Z): {e}"
        )
    })?;
    let unix = when.unix_timestamp_nanos() as f64 / 1e9;
    Epoch::from_unix_seconds(unix).ok_or_else(|| format!("'{text}' is out of range"))
}

/// The epoch as ISO 8601 UTC to the nearest second (`2027-03-01T00:00:00Z`); `invalid` for a
/// time out of the calendar's range.
pub fn format_utc(epoch: Epoch) -> String {
    let secs = epoch.to_unix_seconds().round();
    if !(secs.is_finite() && secs.abs() < 1e15) {
        return "invalid".into();
    }
    OffsetDateTime::from_unix_timestamp(secs as i64)
        .ok()
        .and_then(|t| t.format(&Rfc3339).ok())
        .unwrap_or_else(|| "invalid".into())
}

fn csv_error(e: csv::Error) -> std::io::Error {
    std::io::Error::other(e)
}

/// Writes `plan.csv` (see the module notes) for `schedule` over `targets`.
pub fn write_plan_csv<W: Write>(
    out: &mut W,
    targets: &[Target],
    schedule: &Schedule,
) -> std::io::Result<()> {
    writeln!(out, "# CAUTION: {CAUTION}")?;
    let mut w = csv::Writer::from_writer(out);
    w.write_record([
        "position",
        "id",
        "start_utc",
        "end_utc",
        "elongation_start_deg",
        "elongation_end_deg",
        "slew_deg",
        "slew_s",
        "wait_before_s",
        "busy_before_s",
        "momentum_nms",
        "dump",
    ])
    .map_err(csv_error)?;
    for (k, o) in schedule.observations.iter().enumerate() {
        w.write_record([
            (k + 1).to_string(),
            targets[o.target].id.clone(),
            format_utc(o.start),
            format_utc(o.end),
            format!("{:.4}", o.elongation_start_deg),
            format!("{:.4}", o.elongation_end_deg),
            format!("{:.3}", o.slew_deg),
            format!("{:.1}", o.slew_s),
            format!("{:.1}", o.wait_s),
            format!("{:.1}", o.overhead_s - o.wait_s),
            format!("{:.4}", o.momentum_nms),
            u8::from(o.dump).to_string(),
        ])
        .map_err(csv_error)?;
    }
    w.flush()
}

/// Writes `unscheduled.csv` (see the module notes).
pub fn write_unscheduled_csv<W: Write>(
    out: &mut W,
    targets: &[Target],
    unscheduled: &[Unscheduled],
) -> std::io::Result<()> {
    writeln!(out, "# CAUTION: {CAUTION}")?;
    let mut w = csv::Writer::from_writer(out);
    w.write_record([
        "id",
        "reason",
        "explanation",
        "min_elongation_deg",
        "max_elongation_deg",
    ])
    .map_err(csv_error)?;
    for u in unscheduled {
        w.write_record([
            targets[u.target].id.clone(),
            u.reason.code().to_string(),
            u.reason.to_string(),
            format!("{:.3}", u.min_elongation_deg),
            format!("{:.3}", u.max_elongation_deg),
        ])
        .map_err(csv_error)?;
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
    s.overhead_s - s.wait_s
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
        "repairs": s.repairs,
    })
}

/// Busy overhead (slews, settling, thermal, setups, dumps; no waiting) per scheduled
/// observation, of the plan over that of the nearest-neighbour baseline: below 1 when the plan
/// is better. Waiting is left out because it is set by when targets enter the band, not by the
/// order; with it, two plans that end waiting for the same late target look alike. `None` when
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
        "repairs": s.repairs,
        "elongation_band_deg": [profile.elongation_min_deg, profile.elongation_max_deg],
        "start_utc": format_utc(start),
        "end_utc": format_utc(s.end),
        "horizon_days": horizon_days,
        "order_cost_s": plan.order_cost_s,
        "nearest_neighbour": totals(&plan.baseline, start),
        "nearest_neighbour_order_cost_s": plan.baseline_cost_s,
        "busy_overhead_ratio": busy_overhead_ratio(plan),
        "strategy": plan.strategy.name(),
        "polished": plan.polished,
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

/// The front's reference point as the outputs write it, in hours of busy overhead and grams
/// of propellant: `{"busy_overhead_h": .., "propellant_g": ..}`.
pub fn reference_json(reference: Point) -> serde_json::Value {
    json!({
        "busy_overhead_h": reference.0 / 3600.0,
        "propellant_g": reference.1 * 1000.0,
    })
}

/// The column names of `front.csv`, in order; the JSON `front` rows have the same keys.
pub const FRONT_COLUMNS: [&str; 7] = [
    "plan",
    "busy_overhead_s",
    "wait_s",
    "elapsed_s",
    "propellant_kg",
    "dumps",
    "scheduled",
];

/// One plan of the front as `front.csv` and the JSON `front` rows show it (the fields are the
/// columns of [`FRONT_COLUMNS`]).
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct FrontLine {
    /// Plan number, from 1 (the fastest) along the front.
    pub plan: usize,
    /// Busy overhead (the front's time objective), seconds.
    pub busy_overhead_s: f64,
    /// Waiting, seconds.
    pub wait_s: f64,
    /// From the plan start until the last observation ends, seconds.
    pub elapsed_s: f64,
    /// Propellant of the dumps, kilograms.
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
            busy_overhead_s: p.busy_overhead_s,
            wait_s: p.schedule.wait_s,
            elapsed_s: elapsed_s(&p.schedule, start),
            propellant_kg: p.propellant_kg,
            dumps: p.schedule.dumps,
            scheduled: p.schedule.observations.len(),
        })
        .collect()
}

/// Writes `front.csv` (the columns of [`FRONT_COLUMNS`]).
pub fn write_front_csv<W: Write>(out: &mut W, front: &Front, start: Epoch) -> std::io::Result<()> {
    writeln!(out, "# CAUTION: {CAUTION}")?;
    writeln!(out, "{}", FRONT_COLUMNS.join(","))?;
    for r in front_lines(front, start) {
        writeln!(
            out,
            // Milliseconds and micrograms: plans of a front can differ by less than a
            // tenth of a second or a milligram, and the file must not make one look dominated.
            "{},{:.3},{:.3},{:.3},{:.9},{},{}",
            r.plan, r.busy_overhead_s, r.wait_s, r.elapsed_s, r.propellant_kg, r.dumps, r.scheduled
        )?;
    }
    Ok(())
}

/// The keys the front adds to the JSON summary: `front` (the rows of `front.csv`),
/// `front_objectives`, the hypervolumes in h·g against `hypervolume_reference`, the knee, the
/// extremes and the search's effort.
pub fn front_json(front: &Front, start: Epoch) -> serde_json::Map<String, serde_json::Value> {
    let rows = front_lines(front, start);
    let ratio = (front.scalarised_hypervolume > 0.0)
        .then(|| front.archive_hypervolume / front.scalarised_hypervolume);
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
        json!("busy_overhead_s (seconds, waiting excluded), propellant_kg"),
    );
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
    m.insert("scalarised_plans".into(), json!(front.scalarised_plans));
    m.insert("archive_plans".into(), json!(front.archive_plans));
    m.insert(
        "archive_hypervolume_h_g".into(),
        json!(hour_grams(front.archive_hypervolume)),
    );
    m.insert("hypervolume_ratio".into(), json!(ratio));
    m.insert("knee_plan".into(), json!(front.knee.map(|k| k + 1)));
    m.insert("extremes".into(), extremes);
    m.insert("front_evaluations".into(), json!(front.evaluations));
    m.insert("front_seconds".into(), json!(front.seconds));
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
