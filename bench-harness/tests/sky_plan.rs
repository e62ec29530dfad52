//! `wend sky plan` checked from outside: the elongation band with an independent solar
//! formula and time parser, the plan's accounting, the JSON contract, the caution in every
//! output, determinism and refusal of bad input.
//!
//! Sources: J. Meeus, *Astronomical Algorithms*, 2nd ed. (chapters 7, 22 and 25), the sky model
//! page (`shared/docs/sky-model.md`) and the demo profile (`instances/sky/demo-profile.toml`).
//! The Sun here is deliberately not the crate's formula (the crate uses the Astronomical
//! Almanac's low-precision series); the times are parsed here, not with the crate's code.

use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

// ---------------------------------------------------------------------------------------------
// Running the command and reading its files
// ---------------------------------------------------------------------------------------------

fn wend(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_wend"))
        .args(args)
        .output()
        .expect("the wend binary runs")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn sky_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../instances/sky")
}

fn demo_targets_path() -> PathBuf {
    sky_dir().join("demo-targets.csv")
}

fn demo_profile_text() -> String {
    std::fs::read_to_string(sky_dir().join("demo-profile.toml")).unwrap()
}

/// The demo's plan start (the brief of `wend sky plan`; `DEMO_START_UTC` in the program).
const DEMO_START: &str = "2027-03-01T00:00:00Z";

/// A number `key = value` at the top level of a TOML text (simple parsing: the first line
/// that starts with the key; a trailing `#` comment is cut).
fn toml_number(text: &str, key: &str) -> f64 {
    for line in text.lines() {
        let line = line.trim();
        if let Some(rest) = line.strip_prefix(key) {
            let rest = rest.trim_start();
            if let Some(value) = rest.strip_prefix('=') {
                let value = value.split('#').next().unwrap().trim();
                return value
                    .parse()
                    .unwrap_or_else(|e| panic!("{key} = {value}: {e}"));
            }
        }
    }
    panic!("{key} not in the profile")
}

/// A CSV file as its header and rows of named fields; `#` lines are comments.
struct Table {
    header: Vec<String>,
    rows: Vec<HashMap<String, String>>,
}

impl Table {
    fn read(path: &Path) -> Table {
        let mut reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .trim(csv::Trim::All)
            .from_path(path)
            .unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let header: Vec<String> = reader
            .headers()
            .unwrap()
            .iter()
            .map(str::to_string)
            .collect();
        let rows = reader
            .records()
            .map(|r| {
                let r = r.unwrap_or_else(|e| panic!("{}: {e}", path.display()));
                header
                    .iter()
                    .cloned()
                    .zip(r.iter().map(str::to_string))
                    .collect()
            })
            .collect();
        Table { header, rows }
    }
}

fn field<'r>(row: &'r HashMap<String, String>, name: &str) -> &'r str {
    row.get(name)
        .unwrap_or_else(|| panic!("no column {name} in {row:?}"))
}

fn num(row: &HashMap<String, String>, name: &str) -> f64 {
    let v = field(row, name);
    v.parse()
        .unwrap_or_else(|e| panic!("{name} = {v:?} is not a number: {e}"))
}

/// Target id → (RA°, Dec°, dwell s) from a targets CSV.
fn read_targets(path: &Path) -> HashMap<String, (f64, f64, f64)> {
    let t = Table::read(path);
    let mut out = HashMap::new();
    for row in &t.rows {
        let id = field(row, "id").to_string();
        let v = (
            num(row, "ra_deg"),
            num(row, "dec_deg"),
            num(row, "duration_s"),
        );
        assert!(out.insert(id.clone(), v).is_none(), "duplicate id {id}");
    }
    out
}

// ---------------------------------------------------------------------------------------------
// Time: civil date → Julian date, our own parser
// ---------------------------------------------------------------------------------------------

/// TT − UTC in seconds: 32.184 s + 37 leap seconds, valid from 2017 to (at least) 2027. From
/// memory (IERS Bulletin C), not from the program.
const TT_MINUS_UTC_S: f64 = 69.184;

/// Julian date of a Gregorian calendar date with a fractional day (Meeus, chapter 7,
/// formula 7.1).
fn julian_date(year: i64, month: i64, day: f64) -> f64 {
    let (y, m) = if month <= 2 {
        (year - 1, month + 12)
    } else {
        (year, month)
    };
    let a = y.div_euclid(100);
    let b = 2 - a + a.div_euclid(4);
    (365.25 * (y + 4716) as f64).floor() + (30.6001 * (m + 1) as f64).floor() + day + b as f64
        - 1524.5
}

/// Julian date (UTC) of `YYYY-MM-DDThh:mm:ssZ`, the only form plan.csv writes.
fn parse_utc_jd(text: &str) -> f64 {
    let bad = || panic!("{text:?} is not YYYY-MM-DDThh:mm:ssZ");
    let b = text.as_bytes();
    if b.len() != 20
        || b[4] != b'-'
        || b[7] != b'-'
        || b[10] != b'T'
        || b[13] != b':'
        || b[16] != b':'
        || b[19] != b'Z'
    {
        bad();
    }
    let n = |r: std::ops::Range<usize>| -> i64 { text[r].parse().unwrap_or_else(|_| bad()) };
    let (y, mo, d, h, mi, s) = (n(0..4), n(5..7), n(8..10), n(11..13), n(14..16), n(17..19));
    if !(1..=12).contains(&mo) || !(1..=31).contains(&d) || h > 23 || mi > 59 || s > 60 {
        bad();
    }
    let day = d as f64 + (h as f64 * 3600.0 + mi as f64 * 60.0 + s as f64) / 86_400.0;
    julian_date(y, mo, day)
}

/// Seconds from `a` to `b`, both `YYYY-MM-DDThh:mm:ssZ`.
fn seconds_between(a: &str, b: &str) -> f64 {
    (parse_utc_jd(b) - parse_utc_jd(a)) * 86_400.0
}

// ---------------------------------------------------------------------------------------------
// The Sun: Meeus chapter 25, "low accuracy"
// ---------------------------------------------------------------------------------------------

/// The Sun's geometric true longitude of date, degrees in [0, 360), at a Julian date in TT
/// (Meeus, chapter 25, formulas 25.1 to 25.4 and the equation of centre).
fn sun_true_longitude_of_date(jd_tt: f64) -> f64 {
    let t = (jd_tt - 2_451_545.0) / 36_525.0;
    let l0 = 280.46646 + 36000.76983 * t + 0.0003032 * t * t;
    let m = (357.52911 + 35999.05029 * t - 0.0001537 * t * t).to_radians();
    let c = (1.914602 - 0.004817 * t - 0.000014 * t * t) * m.sin()
        + (0.019993 - 0.000101 * t) * (2.0 * m).sin()
        + 0.000289 * (3.0 * m).sin();
    (l0 + c).rem_euclid(360.0)
}

/// Ecliptic longitude (latitude 0) → (α°, δ°) with obliquity `eps_deg`.
fn ecliptic_to_equatorial(lon_deg: f64, eps_deg: f64) -> (f64, f64) {
    let (l, e) = (lon_deg.to_radians(), eps_deg.to_radians());
    let ra = (e.cos() * l.sin())
        .atan2(l.cos())
        .to_degrees()
        .rem_euclid(360.0);
    let dec = (e.sin() * l.sin()).asin().to_degrees();
    (ra, dec)
}

/// Mean obliquity of J2000.0, degrees (Meeus, formula 22.2 at T = 0: 23°26′21.448″).
const EPS_J2000_DEG: f64 = 23.439_291_1;

/// The Sun's (α°, δ°) referred to the J2000 equator and equinox, geometric, at a Julian date in
/// TT: the true longitude of date less the general precession in longitude 1.396971° per
/// Julian century (a value from memory; Meeus, chapter 25, gives ⊙_2000 = ⊙ − 0.01397°
/// (year − 2000), the same rate), turned to the equator with ε0 of J2000.
fn sun_j2000(jd_tt: f64) -> (f64, f64) {
    let t = (jd_tt - 2_451_545.0) / 36_525.0;
    let lon = sun_true_longitude_of_date(jd_tt) - 1.396971 * t;
    ecliptic_to_equatorial(lon, EPS_J2000_DEG)
}

fn unit(ra_deg: f64, dec_deg: f64) -> [f64; 3] {
    let (a, d) = (ra_deg.to_radians(), dec_deg.to_radians());
    [d.cos() * a.cos(), d.cos() * a.sin(), d.sin()]
}

/// Angle between two unit vectors, degrees: atan2(|a × b|, a · b) (model page, section 1).
fn separation_deg(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    let c = [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ];
    let cross = (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt();
    let dot = a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
    cross.atan2(dot).to_degrees()
}

/// Solar elongation of a target at a UTC Julian date, by this file's reference.
fn elongation_at(ra_deg: f64, dec_deg: f64, jd_utc: f64) -> f64 {
    let (sa, sd) = sun_j2000(jd_utc + TT_MINUS_UTC_S / 86_400.0);
    separation_deg(&unit(ra_deg, dec_deg), &unit(sa, sd))
}

/// Checks the reference itself against Meeus before it judges the program.
fn check_reference() {
    // Meeus, Table 7.a and Example 7.a (Gregorian dates).
    for (y, m, d, jd) in [
        (2000, 1, 1.5, 2_451_545.0),
        (1999, 1, 1.0, 2_451_179.5),
        (1987, 1, 27.0, 2_446_822.5),
        (1987, 6, 19.5, 2_446_966.0),
        (1988, 1, 27.0, 2_447_187.5),
        (1988, 6, 19.5, 2_447_332.0),
        (1900, 1, 1.0, 2_415_020.5),
        (1600, 1, 1.0, 2_305_447.5),
        (1600, 12, 31.0, 2_305_812.5),
        (1957, 10, 4.81, 2_436_116.31),
    ] {
        let got = julian_date(y, m, d);
        assert!(
            (got - jd).abs() < 1e-6,
            "JD of {y}-{m}-{d}: {got}, Meeus {jd}"
        );
    }
    // The parser: 2000 Jan 1.5 is 2000-01-01T12:00:00, and a leap day is counted.
    assert_eq!(parse_utc_jd("2000-01-01T12:00:00Z"), 2_451_545.0);
    let leap = seconds_between("2028-02-28T00:00:00Z", "2028-03-01T00:00:00Z");
    assert_eq!(leap, 2.0 * 86_400.0);
    assert!(
        (seconds_between("2027-03-01T00:00:00Z", "2027-03-01T01:44:07Z") - 6247.0).abs() < 1e-4
    );

    // Meeus, Example 25.a: 1992 October 13.0 TD = JD 2448908.5; the true longitude of date
    // ⊙ = 199.90988° (before the J2000 shift, which the example does not make).
    let jd = julian_date(1992, 10, 13.0);
    assert_eq!(jd, 2_448_908.5);
    let lon = sun_true_longitude_of_date(jd);
    assert!(
        (lon - 199.90988).abs() < 0.001,
        "⊙ = {lon}, Meeus 199.90988"
    );
    // The same example's apparent position checks the conversion to the equator: apparent
    // λ = ⊙ − 0.00569° − 0.00478° sin Ω (formula 25.8), ε = ε0 (formula 22.2) + 0.00256° cos Ω
    // (25.8 and 22.2 written from memory), giving α = 198.38083°, δ = −7.78507°.
    let t = (jd - 2_451_545.0) / 36_525.0;
    let omega = (125.04 - 1934.136 * t).to_radians();
    let eps0 = 23.0 + 26.0 / 60.0 + 21.448 / 3600.0
        - (46.8150 * t + 0.00059 * t * t - 0.001813 * t * t * t) / 3600.0;
    let (ra, dec) = ecliptic_to_equatorial(
        lon - 0.00569 - 0.00478 * omega.sin(),
        eps0 + 0.00256 * omega.cos(),
    );
    assert!((ra - 198.38083).abs() < 0.0005, "α = {ra}, Meeus 198.38083");
    assert!((dec + 7.78507).abs() < 0.0005, "δ = {dec}, Meeus −7.78507");
    // Separation: orthogonal axes, and a tiny angle kept by atan2.
    assert!((separation_deg(&unit(0.0, 0.0), &unit(90.0, 0.0)) - 90.0).abs() < 1e-12);
    assert!((separation_deg(&unit(10.0, 0.0), &unit(10.0, 1e-6)) - 1e-6).abs() < 1e-12);
}

// ---------------------------------------------------------------------------------------------
// 1. The elongation band, checked independently
// ---------------------------------------------------------------------------------------------

/// Tolerance of the band and elongation checks, degrees. The Almanac's series (the program)
/// and Meeus's low-accuracy method (here) each claim about 0.01°; in 2027 they differ by
/// under 0.01° (seen: at most 0.006°, about the annual aberration of 20.5″ = 0.0057°, which
/// the Almanac's mean longitude 280.460° carries and the geometric longitude here does not).
/// The whole-second rounding of the times in plan.csv moves the Sun by at most
/// 0.5 s × 0.0114°/h ≈ 2e-6°. 0.02° leaves room for both and still catches a Sun that is off
/// by the 0.37° precession or a time off by an hour (0.04°).
const TOLERANCE_DEG: f64 = 0.02;

/// The demo profile's elongation band, degrees.
fn demo_band() -> (f64, f64) {
    let p = demo_profile_text();
    (
        toml_number(&p, "elongation_min_deg"),
        toml_number(&p, "elongation_max_deg"),
    )
}

/// Checks every observation of `dir/plan.csv` against the band with this file's Sun, and the
/// elongation columns against it; checks the unscheduled targets' elongation ranges by
/// sampling the horizon hourly. Returns the largest |reference − program| seen.
fn check_band(
    dir: &Path,
    targets: &HashMap<String, (f64, f64, f64)>,
    start: &str,
    horizon_days: f64,
    band: (f64, f64),
) -> f64 {
    let worst = check_plan_rows(&dir.join("plan.csv"), targets, start, horizon_days, band);
    let start_jd = parse_utc_jd(start);
    let end_jd = start_jd + horizon_days;
    // Targets left out: their stated elongation range covers ours, and a target said never to
    // be in the band is not well inside it at any hour of the horizon.
    let left = Table::read(&dir.join("unscheduled.csv"));
    let hours = (horizon_days * 24.0).ceil() as usize;
    for row in &left.rows {
        let id = field(row, "id");
        let &(ra, dec, _) = targets.get(id).unwrap_or_else(|| panic!("unknown id {id}"));
        let (min, max) = (
            num(row, "min_elongation_deg"),
            num(row, "max_elongation_deg"),
        );
        let never = field(row, "reason") == "never_in_band";
        for k in 0..=hours {
            let jd = (start_jd + k as f64 / 24.0).min(end_jd);
            let e = elongation_at(ra, dec, jd);
            assert!(
                e >= min - TOLERANCE_DEG && e <= max + TOLERANCE_DEG,
                "{id}: elongation {e:.4}° at hour {k} outside its stated range [{min}, {max}]"
            );
            if never {
                assert!(
                    e < band.0 + TOLERANCE_DEG || e > band.1 - TOLERANCE_DEG,
                    "{id} said never in the band, but its elongation is {e:.4}° at hour {k}"
                );
            }
        }
    }
    worst
}

/// Checks every observation of the plan table at `path` against the band with this file's
/// Sun, and its elongation columns against that Sun; returns the largest difference.
fn check_plan_rows(
    path: &Path,
    targets: &HashMap<String, (f64, f64, f64)>,
    start: &str,
    horizon_days: f64,
    band: (f64, f64),
) -> f64 {
    let (lo, hi) = (band.0 - TOLERANCE_DEG, band.1 + TOLERANCE_DEG);
    let plan = Table::read(path);
    assert!(!plan.rows.is_empty(), "{}: empty plan", path.display());
    let start_jd = parse_utc_jd(start);
    let end_jd = start_jd + horizon_days;
    let mut worst: f64 = 0.0;
    for row in &plan.rows {
        let id = field(row, "id");
        let &(ra, dec, _) = targets.get(id).unwrap_or_else(|| panic!("unknown id {id}"));
        for (time_col, elong_col) in [
            ("start_utc", "elongation_start_deg"),
            ("end_utc", "elongation_end_deg"),
        ] {
            let when = field(row, time_col);
            let jd = parse_utc_jd(when);
            assert!(
                jd >= start_jd - 1e-9 && jd <= end_jd + 1e-9,
                "{id}: {time_col} {when} outside the horizon {start} + {horizon_days} d"
            );
            let mine = elongation_at(ra, dec, jd);
            assert!(
                (lo..=hi).contains(&mine),
                "{id} at {when}: elongation {mine:.4}° outside the band [{}, {}]° (reference Sun)",
                band.0,
                band.1
            );
            let theirs = num(row, elong_col);
            let diff = (mine - theirs).abs();
            worst = worst.max(diff);
            assert!(
                diff <= TOLERANCE_DEG,
                "{id} at {when}: {elong_col} = {theirs}, reference {mine:.4}"
            );
        }
    }
    worst
}

#[test]
fn reference_sun_and_julian_dates_match_meeus() {
    check_reference();
}

#[test]
fn demo_plans_keep_every_observation_inside_the_elongation_band() {
    check_reference();
    let targets = read_targets(&demo_targets_path());
    let band = demo_band();
    assert_eq!(band, (97.0, 153.0), "the demo band (demo profile)");
    let root = tempfile::tempdir().unwrap();
    for seed in ["0", "1", "2"] {
        let dir = root.path().join(format!("seed{seed}"));
        let o = wend(&[
            "sky",
            "plan",
            "--out",
            dir.to_str().unwrap(),
            "--seed",
            seed,
            "--time-limit",
            "1",
        ]);
        assert!(o.status.success(), "seed {seed}: {}", stderr(&o));
        // Demo horizon: 14 days is the program's default; the observations must fall inside
        // it, so check against that.
        let worst = check_band(&dir, &targets, DEMO_START, 14.0, band);
        eprintln!("seed {seed}: largest |reference − program| elongation {worst:.5}°");
    }
}

#[test]
fn random_pool_plan_keeps_every_observation_inside_the_elongation_band() {
    check_reference();
    let dir = tempfile::tempdir().unwrap();
    let pool = dir.path().join("pool.csv");
    let o = wend(&[
        "sky",
        "targets",
        "--count",
        "300",
        "--seed",
        "5",
        "-o",
        pool.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let targets = read_targets(&pool);
    assert_eq!(targets.len(), 300);
    let out = dir.path().join("plan");
    let start = "2027-06-15T00:00:00Z";
    let o = wend(&[
        "sky",
        "plan",
        pool.to_str().unwrap(),
        "--start",
        start,
        "--horizon-days",
        "3",
        "--time-limit",
        "2",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let worst = check_band(&out, &targets, start, 3.0, demo_band());
    eprintln!("random pool: largest |reference − program| elongation {worst:.5}°");
    // Every target of the pool is accounted for.
    let plan = Table::read(&out.join("plan.csv"));
    let left = Table::read(&out.join("unscheduled.csv"));
    assert_eq!(plan.rows.len() + left.rows.len(), 300);
}

// ---------------------------------------------------------------------------------------------
// 2. Accounting
// ---------------------------------------------------------------------------------------------

/// Slew time of a rest-to-rest eigen-axis slew (model page, section 5).
fn slew_time_s(phi_deg: f64, rate_deg_s: f64, accel_deg_s2: f64) -> f64 {
    if phi_deg <= rate_deg_s * rate_deg_s / accel_deg_s2 {
        2.0 * (phi_deg / accel_deg_s2).sqrt()
    } else {
        phi_deg / rate_deg_s + rate_deg_s / accel_deg_s2
    }
}

fn run_demo(dir: &Path, extra: &[&str]) -> Output {
    let mut args = vec!["sky", "plan", "--out", dir.to_str().unwrap()];
    args.extend_from_slice(extra);
    let o = wend(&args);
    assert!(o.status.success(), "{args:?}: {}", stderr(&o));
    o
}

#[test]
fn demo_plan_accounting_adds_up() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    run_demo(&dir, &["--time-limit", "1"]);
    let targets = read_targets(&demo_targets_path());
    assert_eq!(targets.len(), 72, "the demo has 72 targets");
    let profile = demo_profile_text();
    // Demo profile: wheel_limit_nms = 20, wheel_margin = 0.8 → planning threshold 16 N·m·s.
    let threshold =
        toml_number(&profile, "wheel_limit_nms") * toml_number(&profile, "wheel_margin");
    assert!((threshold - 16.0).abs() < 1e-12);
    let (rate, accel) = (
        toml_number(&profile, "slew_rate_deg_s"),
        toml_number(&profile, "slew_accel_deg_s2"),
    );

    let text = std::fs::read_to_string(dir.join("plan.csv")).unwrap();
    assert!(
        text.starts_with("# CAUTION: "),
        "{}",
        &text[..80.min(text.len())]
    );
    let plan = Table::read(&dir.join("plan.csv"));
    assert_eq!(
        plan.header,
        [
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
            "dump"
        ]
    );
    assert!(!plan.rows.is_empty());
    let mut ids = HashSet::new();
    let mut prev_end = DEMO_START.to_string();
    for (k, row) in plan.rows.iter().enumerate() {
        let id = field(row, "id");
        let what = format!("row {} ({id})", k + 1);
        assert_eq!(num(row, "position"), (k + 1) as f64, "{what}");
        assert!(ids.insert(id.to_string()), "{what}: id twice in the plan");
        let &(_, _, dwell) = targets
            .get(id)
            .unwrap_or_else(|| panic!("{what}: not in the targets file"));
        let (start, end) = (field(row, "start_utc"), field(row, "end_utc"));
        // Time order, no overlap.
        let gap = seconds_between(&prev_end, start);
        assert!(
            gap >= 0.0,
            "{what}: starts {start}, before the previous end {prev_end}"
        );
        // The dwell is the target's duration_s (whole-second rounding of both ends: ±1 s).
        let lasted = seconds_between(start, end);
        assert!(
            (lasted - dwell).abs() <= 1.0,
            "{what}: {start} to {end} is {lasted} s, duration_s {dwell}"
        );
        // Waiting and busy time add up to everything from the previous end (the plan start
        // for the first row): within 1 s for the whole-second times at both ends and 0.1 s
        // for the two columns' rounding to 0.1 s.
        let (wait, busy) = (num(row, "wait_before_s"), num(row, "busy_before_s"));
        assert!(
            wait >= 0.0 && busy >= 0.0,
            "{what}: wait {wait}, busy {busy}"
        );
        assert!(
            (wait + busy - gap).abs() <= 1.1 + 1e-6,
            "{what}: wait_before_s {wait} + busy_before_s {busy}, but {gap} s from {prev_end} \
             to {start}"
        );
        // The slew time follows the model page's bang–coast–bang formula (section 5) with the
        // demo profile's rate and acceleration; slew_deg has 3 decimals, slew_s 1.
        let (phi, slew) = (num(row, "slew_deg"), num(row, "slew_s"));
        if k == 0 {
            assert_eq!(
                (phi, slew),
                (0.0, 0.0),
                "{what}: the plan starts on its first target"
            );
        }
        let expect = slew_time_s(phi, rate, accel);
        assert!(
            (slew - expect).abs() <= 0.2,
            "{what}: slew_s {slew} for {phi}°, model {expect:.2}"
        );
        assert!(
            busy + 0.1 >= slew,
            "{what}: busy_before_s {busy} < slew {slew}"
        );
        // The wheels stay under the planning threshold (demo profile: 20 × 0.8).
        let h = num(row, "momentum_nms");
        assert!(
            (0.0..=threshold + 1e-3).contains(&h),
            "{what}: momentum {h} N·m·s over the threshold {threshold}"
        );
        assert!(matches!(field(row, "dump"), "0" | "1"), "{what}");
        prev_end = end.to_string();
    }

    let left = Table::read(&dir.join("unscheduled.csv"));
    assert_eq!(
        left.header,
        [
            "id",
            "reason",
            "explanation",
            "min_elongation_deg",
            "max_elongation_deg"
        ]
    );
    for row in &left.rows {
        let id = field(row, "id");
        assert!(
            targets.contains_key(id),
            "unscheduled {id}: not in the targets file"
        );
        assert!(
            ids.insert(id.to_string()),
            "{id}: both planned and unscheduled, or twice"
        );
        assert!(
            !field(row, "explanation").is_empty(),
            "{id}: no explanation"
        );
    }
    let all: HashSet<String> = targets.keys().cloned().collect();
    assert_eq!(ids, all, "every target is planned or unscheduled");
}

// ---------------------------------------------------------------------------------------------
// 3. The JSON contract
// ---------------------------------------------------------------------------------------------

#[test]
fn json_summary_matches_the_files_and_the_propellant_formula() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    let o = run_demo(&dir, &["--json", "--seed", "1", "--time-limit", "1"]);
    let out = String::from_utf8(o.stdout).unwrap();
    assert_eq!(out.trim().lines().count(), 1, "one line of JSON: {out}");
    let v: serde_json::Value = serde_json::from_str(out.trim()).unwrap();
    assert!(v.is_object());
    for key in [
        "targets",
        "scheduled",
        "elapsed_s",
        "busy_overhead_s",
        "wait_s",
        "propellant_kg",
        "dumps",
        "elongation_band_deg",
        "seconds",
        "caution",
    ] {
        assert!(v.get(key).is_some(), "no {key} in {v}");
    }
    let f = |k: &str| {
        v[k].as_f64()
            .unwrap_or_else(|| panic!("{k} is not a number: {}", v[k]))
    };
    assert!(v["caution"].as_str().unwrap().contains("operations team"));
    assert_eq!(v["targets"], 72, "the demo has 72 targets");
    let band = demo_band();
    assert_eq!(
        v["elongation_band_deg"],
        serde_json::json!([band.0, band.1])
    );
    assert!(f("seconds") >= 0.0);

    // Same run: the files agree with the summary.
    let plan = Table::read(&dir.join("plan.csv"));
    let left = Table::read(&dir.join("unscheduled.csv"));
    assert_eq!(v["scheduled"].as_u64().unwrap() as usize, plan.rows.len());
    assert_eq!(
        plan.rows.len() + left.rows.len(),
        72,
        "scheduled + unscheduled"
    );
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    for key in [
        "scheduled",
        "targets",
        "dumps",
        "propellant_kg",
        "elapsed_s",
        "busy_overhead_s",
        "wait_s",
    ] {
        assert_eq!(
            summary[key], v[key],
            "summary.json and --json differ on {key}"
        );
    }

    // busy_overhead_s and wait_s are the sums of the rows' busy and waiting times (each
    // rounded to 0.1 s in plan.csv).
    let n = plan.rows.len() as f64;
    for (total, column) in [
        ("busy_overhead_s", "busy_before_s"),
        ("wait_s", "wait_before_s"),
    ] {
        let sum: f64 = plan.rows.iter().map(|r| num(r, column)).sum();
        assert!(
            (f(total) - sum).abs() <= 0.05 * n + 1e-6,
            "{total} {} vs the sum of {column}, {sum}",
            f(total)
        );
    }
    // elapsed_s runs from the plan start to the last row's end (whole seconds in plan.csv).
    let last_end = field(plan.rows.last().unwrap(), "end_utc");
    let elapsed = seconds_between(DEMO_START, last_end);
    assert!(
        (f("elapsed_s") - elapsed).abs() <= 1.0,
        "elapsed_s {} vs {elapsed} s from {DEMO_START} to {last_end}",
        f("elapsed_s")
    );
    // The nearest-neighbour block uses the same names.
    for key in ["elapsed_s", "busy_overhead_s", "wait_s"] {
        assert!(
            v["nearest_neighbour"][key].is_number(),
            "nearest_neighbour.{key}"
        );
    }
    assert!(v.get("overhead_s").is_none() && v["nearest_neighbour"].get("overhead_s").is_none());

    // Dumps: at least one per row marked with a dump, and each removes at most the planning
    // threshold (demo profile: 20 N·m·s × 0.8), since the wheels are dumped before passing it.
    let profile = demo_profile_text();
    let threshold =
        toml_number(&profile, "wheel_limit_nms") * toml_number(&profile, "wheel_margin");
    let marked = plan.rows.iter().filter(|r| field(r, "dump") == "1").count();
    let dumps = v["dumps"].as_u64().unwrap() as usize;
    assert!(dumps >= marked, "dumps {dumps}, rows marked {marked}");
    assert_eq!(
        dumps == 0,
        marked == 0,
        "dumps {dumps}, rows marked {marked}"
    );
    let dumped = f("dumped_nms");
    let left_over = f("final_momentum_nms");
    assert!(
        dumped <= threshold * dumps as f64 + 1e-6,
        "{dumped} N·m·s in {dumps} dumps"
    );
    assert!(left_over <= threshold + 1e-6, "final momentum {left_over}");

    // Propellant: m = |H| / (L · Isp · g0) (model page, section 7), g0 = 9.80665 m/s²,
    // L and Isp from the demo profile (1 m, 220 s).
    let g0 = 9.80665;
    let per_nms = |h: f64| {
        h / (toml_number(&profile, "thruster_arm_m") * toml_number(&profile, "thruster_isp_s") * g0)
    };
    // The model page's worked check: 100 N·m·s → 0.04635 kg.
    assert!((per_nms(100.0) - 0.04635).abs() < 5e-6);
    let expect = per_nms(dumped + left_over);
    let got = f("propellant_kg");
    assert!(
        (got - expect).abs() <= 1e-9 * expect.abs().max(1e-300),
        "propellant_kg {got}, (dumped {dumped} + final {left_over}) / (L Isp g0) = {expect}"
    );
}

// ---------------------------------------------------------------------------------------------
// 4. Every output carries the caution
// ---------------------------------------------------------------------------------------------

#[test]
fn every_output_file_carries_the_caution() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    run_demo(&dir, &["--time-limit", "1"]);
    for name in [
        "plan.csv",
        "unscheduled.csv",
        "sky-map.svg",
        "momentum.svg",
        "timeline.svg",
        "summary.json",
    ] {
        let text = std::fs::read_to_string(dir.join(name)).unwrap();
        assert!(
            text.contains("operations team"),
            "{name} does not mention the operations team"
        );
    }
    for name in ["plan.csv", "unscheduled.csv"] {
        let text = std::fs::read_to_string(dir.join(name)).unwrap();
        assert!(text.starts_with("# CAUTION: "), "{name}: first line");
    }
}

// ---------------------------------------------------------------------------------------------
// 5. Determinism
// ---------------------------------------------------------------------------------------------

#[test]
fn same_seed_and_one_thread_give_the_same_plan_files() {
    let root = tempfile::tempdir().unwrap();
    let (a, b) = (root.path().join("a"), root.path().join("b"));
    // The time limit is shared among the whole-horizon path and the searches of each day, so
    // the default (2 s) leaves a day's search as little as 0.05 s, which a loaded machine can
    // cut. With 60 s every search ends on its kick budget, and the plan says so.
    // The second run spells the options short: -o, -s, -j and -t mean what they mean in
    // `wend solve`, and must give the same files.
    run_demo(&a, &["--seed", "7", "--threads", "1", "--time-limit", "60"]);
    let short = wend(&[
        "sky",
        "plan",
        "-o",
        b.to_str().unwrap(),
        "-s",
        "7",
        "-j",
        "1",
        "-t",
        "60",
    ]);
    assert!(short.status.success(), "short options: {}", stderr(&short));
    for dir in [&a, &b] {
        let summary: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap())
                .unwrap();
        assert_eq!(summary["stop_reason"], "searches_done", "{summary}");
    }
    for name in ["plan.csv", "unscheduled.csv"] {
        let (x, y) = (
            std::fs::read(a.join(name)).unwrap(),
            std::fs::read(b.join(name)).unwrap(),
        );
        assert!(!x.is_empty());
        assert!(x == y, "{name} differs between two runs with seed 7");
    }
}

// ---------------------------------------------------------------------------------------------
// 6. Bad input
// ---------------------------------------------------------------------------------------------

/// Exit code 2, one line on stderr naming the problem (each of `names`), no panic.
fn assert_refused(what: &str, args: &[&str], names: &[&str]) {
    let o = wend(args);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{what}: exit code; stderr: {err}");
    assert!(!err.contains("panicked"), "{what}: {err}");
    assert_eq!(err.trim().lines().count(), 1, "{what}: one line: {err}");
    for name in names {
        assert!(err.contains(name), "{what}: {err:?} does not name {name:?}");
    }
}

#[test]
fn bad_input_exits_2_with_one_line_naming_the_problem() {
    let dir = tempfile::tempdir().unwrap();
    let targets = demo_targets_path();
    let targets = targets.to_str().unwrap();
    let file = dir.path().join("a-file");
    std::fs::write(&file, "not a directory").unwrap();
    let file = file.to_str().unwrap();
    let ra400 = dir.path().join("ra400.csv");
    std::fs::write(
        &ra400,
        "id,ra_deg,dec_deg,duration_s\nA,10,5,600\nB,400,5,600\n",
    )
    .unwrap();
    let ra400 = ra400.to_str().unwrap();
    let missing = dir.path().join("no-such-profile.toml");
    let missing = missing.to_str().unwrap();
    let cases: [(&str, Vec<&str>, Vec<&str>); 8] = [
        ("targets without --start", vec![targets], vec!["--start"]),
        (
            "--start yesterday",
            vec!["--start", "yesterday"],
            vec!["--start", "yesterday"],
        ),
        (
            "--start without an offset",
            vec!["--start", "2027-03-01T00:00:00"],
            vec!["--start", "2027-03-01T00:00:00"],
        ),
        (
            "--horizon-days 0",
            vec!["--horizon-days", "0"],
            vec!["--horizon-days"],
        ),
        (
            "--time-limit=-1",
            vec!["--time-limit=-1"],
            vec!["--time-limit"],
        ),
        ("--out a regular file", vec!["--out", file], vec![file]),
        (
            "RA 400",
            vec![ra400, "--start", DEMO_START],
            vec![ra400, "row 2", "400"],
        ),
        ("missing profile", vec!["--profile", missing], vec![missing]),
    ];
    for (what, extra, names) in cases {
        // Refused before any planning; were one accepted, the demo would run (under 3 s).
        let mut args = vec!["sky", "plan"];
        args.extend(extra);
        assert_refused(what, &args, &names);
    }
}

/// A negative number as a separate argument (`--time-limit -1`, `--horizon-days -1`) is bad
/// input like any other: exit code 2 and one line naming the option.
#[test]
fn negative_numbers_as_separate_arguments_are_refused_in_one_line() {
    assert_refused(
        "--time-limit -1",
        &["sky", "plan", "--time-limit", "-1"],
        &["--time-limit"],
    );
    assert_refused(
        "--horizon-days -1",
        &["sky", "plan", "--horizon-days", "-1", "--time-limit", "1"],
        &["--horizon-days"],
    );
}

#[test]
fn every_front_plan_passes_the_band_check_and_the_front_is_non_dominated() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("front");
    let o = run_demo(
        &dir,
        &["--front", "--time-limit", "4", "--seed", "2", "--json"],
    );
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).expect("one JSON object");
    let rows = j["front"].as_array().expect("front rows");
    assert!(rows.len() >= 2, "{} plans", rows.len());
    assert!(j["hypervolume_h_g"].as_f64().unwrap() > 0.0);
    // front.csv holds the same rows; no plan dominates another (minimising both columns), in
    // the file's figures (milliseconds, micrograms) as in the JSON's unrounded ones.
    let table = Table::read(&dir.join("front.csv"));
    assert_eq!(table.rows.len(), rows.len());
    let csv_pts: Vec<(f64, f64)> = table
        .rows
        .iter()
        .map(|r| (num(r, "busy_overhead_s"), num(r, "propellant_kg")))
        .collect();
    let json_pts: Vec<(f64, f64)> = rows
        .iter()
        .map(|r| {
            let f = |k: &str| r[k].as_f64().expect("a number");
            (f("busy_overhead_s"), f("propellant_kg"))
        })
        .collect();
    for (c, j) in csv_pts.iter().zip(&json_pts) {
        assert!(
            (c.0 - j.0).abs() <= 1e-3 && (c.1 - j.1).abs() <= 1e-9,
            "{c:?} {j:?}"
        );
    }
    for pts in [&csv_pts, &json_pts] {
        for (i, a) in pts.iter().enumerate() {
            for (k, b) in pts.iter().enumerate() {
                let dominates = b.0 <= a.0 && b.1 <= a.1 && (b.0 < a.0 || b.1 < a.1);
                assert!(
                    i == k || !dominates,
                    "plan {} dominates plan {}",
                    k + 1,
                    i + 1
                );
            }
        }
    }
    // The fastest end is no slower than the single-objective plan (busy overhead, the
    // front's time objective).
    let single = j["busy_overhead_s"].as_f64().unwrap();
    assert!(
        json_pts[0].0 <= single + 1e-6,
        "{} > {single}",
        json_pts[0].0
    );
    // Every plan passes the same independent check as single plans, and schedules as many
    // observations as front.csv says.
    let targets = read_targets(&demo_targets_path());
    for (k, row) in table.rows.iter().enumerate() {
        let path = dir.join(format!("plan-{}.csv", k + 1));
        check_plan_rows(&path, &targets, DEMO_START, 14.0, demo_band());
        assert_eq!(
            Table::read(&path).rows.len(),
            num(row, "scheduled") as usize
        );
    }
    let html = std::fs::read_to_string(dir.join("report.html")).unwrap();
    assert!(html.contains("operations team") && html.contains("front.svg"));
}

// ---------------------------------------------------------------------------------------------
// 7. The keys of the outputs are those of docs/output-keys.md
// ---------------------------------------------------------------------------------------------

/// The rows of the table under `heading` in docs/output-keys.md: (key, present), where the key
/// is the first cell without its backticks and present is "always" or "when ...".
fn documented_keys(heading: &str) -> Vec<(String, String)> {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../docs/output-keys.md");
    let text = std::fs::read_to_string(&path).unwrap();
    let mut lines = text.lines().skip_while(|l| l.trim() != heading).skip(1);
    let mut rows = Vec::new();
    for line in lines.by_ref() {
        let line = line.trim();
        if line.starts_with("## ") {
            break;
        }
        let cells: Vec<&str> = line.split('|').map(str::trim).collect();
        // "| `key` | present | unit | meaning |" splits into 6 cells, the outer two empty.
        if cells.len() < 6 || !cells[1].starts_with('`') {
            continue;
        }
        let key = cells[1].trim_matches('`').to_string();
        let present = cells[2].to_string();
        assert!(
            present == "always" || present.starts_with("when "),
            "{heading}: {key}: present must be 'always' or 'when ...', not {present:?}"
        );
        rows.push((key, present));
    }
    assert!(
        !rows.is_empty(),
        "no table under {heading} in {}",
        path.display()
    );
    rows
}

/// Checks that `seen` holds every key the table under `heading` marks "always" and no key
/// the table lacks.
fn check_keys(heading: &str, seen: &[String], what: &str) {
    let rows = documented_keys(heading);
    let table: HashSet<&str> = rows.iter().map(|(k, _)| k.as_str()).collect();
    for key in seen {
        assert!(
            table.contains(key.as_str()),
            "{what}: {key} is not in the table '{heading}' of docs/output-keys.md"
        );
    }
    for (key, present) in &rows {
        if present == "always" {
            assert!(
                seen.iter().any(|k| k == key),
                "{what}: {key} is always present by docs/output-keys.md, but missing"
            );
        }
    }
}

/// The keys of the JSON summary, with the keys of the objects `nearest_neighbour`,
/// `hypervolume_reference` and `extremes` as `object.key` (the table lists them so).
fn json_keys(v: &serde_json::Value) -> Vec<String> {
    let obj = v.as_object().expect("a JSON object");
    let mut keys = Vec::new();
    for (k, value) in obj {
        keys.push(k.clone());
        if ["nearest_neighbour", "hypervolume_reference", "extremes"].contains(&k.as_str()) {
            if let Some(inner) = value.as_object() {
                keys.extend(inner.keys().map(|i| format!("{k}.{i}")));
            }
        }
    }
    keys
}

#[test]
fn output_keys_and_columns_are_those_of_the_documented_tables() {
    let root = tempfile::tempdir().unwrap();
    // A single plan: no front keys.
    let single = root.path().join("single");
    let o = run_demo(&single, &["--json", "--time-limit", "1"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys = json_keys(&v);
    check_keys("## sky plan", &keys, "wend sky plan --json");
    assert!(
        !keys.iter().any(|k| k == "front"),
        "front keys without --front"
    );
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(single.join("summary.json")).unwrap())
            .unwrap();
    check_keys("## sky plan", &json_keys(&summary), "summary.json");
    check_keys(
        "## sky plan.csv",
        &Table::read(&single.join("plan.csv")).header,
        "plan.csv",
    );

    // The front: its keys as well, front.csv, plan-K.csv and the JSON front rows.
    let front = root.path().join("front");
    let o = run_demo(&front, &["--front", "--json", "--time-limit", "3"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys = json_keys(&v);
    check_keys("## sky plan", &keys, "wend sky plan --front --json");
    for key in [
        "front",
        "hypervolume_h_g",
        "hypervolume_reference.busy_overhead_h",
    ] {
        assert!(keys.iter().any(|k| k == key), "--front: no {key}");
    }
    let csv = Table::read(&front.join("front.csv"));
    check_keys("## sky front.csv", &csv.header, "front.csv");
    let rows = v["front"].as_array().unwrap();
    assert_eq!(rows.len(), csv.rows.len());
    for row in rows {
        let row_keys: Vec<String> = row.as_object().unwrap().keys().cloned().collect();
        check_keys("## sky front.csv", &row_keys, "a row of the JSON front");
    }
    for k in 1..=csv.rows.len() {
        let name = format!("plan-{k}.csv");
        check_keys(
            "## sky plan.csv",
            &Table::read(&front.join(&name)).header,
            &name,
        );
    }
}

// ---------------------------------------------------------------------------------------------
// 8. The caution once on the terminal; why the search stopped
// ---------------------------------------------------------------------------------------------

#[test]
fn the_caution_is_printed_once_on_stdout_and_never_on_stderr() {
    // The rule (README, sky section): the caution reaches the terminal once, on stdout (the
    // first line of the text summary, or the `caution` key of the JSON); stderr carries
    // progress only.
    let o = wend(&["sky", "plan", "--time-limit", "1"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = String::from_utf8(o.stdout.clone()).unwrap();
    assert_eq!(out.matches("CAUTION").count(), 1, "{out}");
    assert!(out.starts_with("CAUTION: "), "{out}");
    assert!(out.contains("operations team"));
    assert!(!stderr(&o).contains("CAUTION"), "stderr: {}", stderr(&o));
    assert!(!stderr(&o).contains("operations team"), "{}", stderr(&o));

    let o = wend(&["sky", "plan", "--time-limit", "1", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(v["caution"].as_str().unwrap().contains("operations team"));
    let out = String::from_utf8(o.stdout.clone()).unwrap();
    assert_eq!(out.matches("operations team").count(), 1, "{out}");
    assert!(!stderr(&o).contains("operations team"), "{}", stderr(&o));
}

#[test]
fn a_search_says_why_it_stopped() {
    // Far too little time for the demo's searches (the whole-horizon path gets two fifths of
    // it): at least one is cut, and the plan says so.
    let o = wend(&["sky", "plan", "--time-limit", "0.001", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["stop_reason"], "time_limit", "{v}");
    // Ample time: the demo's searches end on their kick budgets long before it, and the plan
    // says that more time would not change it.
    let o = wend(&[
        "sky",
        "plan",
        "--time-limit",
        "60",
        "--json",
        "--threads",
        "2",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(v["seconds"].as_f64().unwrap() < 30.0, "{v}");
    assert_eq!(v["stop_reason"], "searches_done", "{v}");
    assert!(v["stop_explanation"]
        .as_str()
        .unwrap()
        .contains("more time would not change"));
    // The text summary gives the same reason in words.
    let o = wend(&["sky", "plan", "--time-limit", "60", "--threads", "2"]);
    let out = String::from_utf8(o.stdout).unwrap();
    assert!(
        out.contains("ended because every order search ended"),
        "{out}"
    );
}
