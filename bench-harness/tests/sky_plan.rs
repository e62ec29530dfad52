//! `wend sky plan` and `wend sky check` checked from outside: the elongation band with an
//! independent solar formula and time parser, the plan's accounting (gaps, slews, settling,
//! dumps, momentum under the threshold, propellant), windows, links and priorities, the JSON
//! contract, the caution in every output, determinism and refusal of bad input.
//!
//! Sources: J. Meeus, *Astronomical Algorithms*, 2nd ed. (chapters 7, 22 and 25), the sky model
//! page (`shared/docs/sky-model.md`), the README's sky adapter section, the demo profile
//! (`instances/sky/demo-profile.toml`) and links (`instances/sky/demo-links.csv`), standard
//! gravity g0 = 9.80665 m/s² (3rd CGPM, 1901). The Sun here is deliberately not the crate's
//! formula (the crate uses the Astronomical Almanac's low-precision series); the times are
//! parsed here, not with the crate's code.

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

/// A CSV file as its header and rows of named fields.
struct Table {
    header: Vec<String>,
    rows: Vec<HashMap<String, String>>,
}

impl Table {
    /// An output file: a plain CSV reader, the header on the first line, no comment lines.
    fn read(path: &Path) -> Table {
        Table::read_with(path, None)
    }

    /// An input file, which may hold `#` comment lines (`wend sky targets` writes one).
    fn read_input(path: &Path) -> Table {
        Table::read_with(path, Some(b'#'))
    }

    fn read_with(path: &Path, comment: Option<u8>) -> Table {
        let mut reader = csv::ReaderBuilder::new()
            .comment(comment)
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

/// A target of a targets CSV, as this file reads it.
#[derive(Clone, Debug)]
struct Tgt {
    ra: f64,
    dec: f64,
    dwell: f64,
    instrument: String,
    /// 1 (highest) to 9; an empty cell is 5 (README, sky inputs).
    priority: u32,
    /// The proposal window as UTC Julian dates.
    window: Option<(f64, f64)>,
}

/// Target id → its values, from a targets CSV.
fn read_targets(path: &Path) -> HashMap<String, Tgt> {
    let t = Table::read_input(path);
    let mut out = HashMap::new();
    for row in &t.rows {
        let id = field(row, "id").to_string();
        let opt = |name: &str| row.get(name).map(String::as_str).unwrap_or("");
        let priority = match opt("priority") {
            "" => 5,
            p => p.parse().unwrap(),
        };
        let window = match (opt("window_start"), opt("window_end")) {
            ("", "") => None,
            (a, b) => Some((parse_utc_jd(a), parse_utc_jd(b))),
        };
        let v = Tgt {
            ra: num(row, "ra_deg"),
            dec: num(row, "dec_deg"),
            dwell: num(row, "duration_s"),
            instrument: opt("instrument").to_string(),
            priority,
            window,
        };
        assert!(out.insert(id.clone(), v).is_none(), "duplicate id {id}");
    }
    out
}

/// The links of a links CSV: (kind, first, second, min lag s, max lag s).
type LinkRow = (String, String, String, Option<f64>, Option<f64>);

fn read_links(path: &Path) -> Vec<LinkRow> {
    let t = Table::read_input(path);
    let lag = |row: &HashMap<String, String>, name: &str| match field(row, name) {
        "" => None,
        v => Some(v.parse::<f64>().unwrap()),
    };
    t.rows
        .iter()
        .map(|r| {
            (
                field(r, "kind").to_string(),
                field(r, "first").to_string(),
                field(r, "second").to_string(),
                lag(r, "min_lag_s"),
                lag(r, "max_lag_s"),
            )
        })
        .collect()
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
    targets: &HashMap<String, Tgt>,
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
        let id = field(row, "target");
        let t = targets.get(id).unwrap_or_else(|| panic!("unknown id {id}"));
        let (ra, dec) = (t.ra, t.dec);
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
    targets: &HashMap<String, Tgt>,
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
        let id = field(row, "target");
        let t = targets.get(id).unwrap_or_else(|| panic!("unknown id {id}"));
        let (ra, dec) = (t.ra, t.dec);
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
    for seed in ["0", "1"] {
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
        // Demo horizon: 30 days is the program's default (README, sky adapter); the
        // observations must fall inside it, so check against that.
        let worst = check_band(&dir, &targets, DEMO_START, 30.0, band);
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
    check_plan_files(
        &out.join("plan.csv"),
        &out.join("momentum.csv"),
        &targets,
        start,
        &demo_profile_text(),
    );
}

#[test]
fn random_pool_dwells_keep_to_the_range_asked_and_the_file_names_its_command() {
    let dir = tempfile::tempdir().unwrap();
    let pool = dir.path().join("pool.csv");
    let o = wend(&[
        "sky",
        "targets",
        "--count",
        "40",
        "--seed",
        "3",
        "--dwell-s",
        "3600,7200",
        "-o",
        pool.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let targets = read_targets(&pool);
    assert_eq!(targets.len(), 40);
    for (id, t) in &targets {
        assert!((3600.0..=7200.0).contains(&t.dwell), "{id}: {} s", t.dwell);
    }
    // The file says how to make it again, dwell range included.
    let first = std::fs::read_to_string(&pool).unwrap();
    let first = first.lines().next().unwrap_or_default();
    assert!(
        first.contains("--count 40 --seed 3 --dwell-s 3600,7200"),
        "{first}"
    );
    // A range upside down is refused.
    let o = wend(&[
        "sky",
        "targets",
        "--dwell-s",
        "7200,3600",
        "-o",
        dir.path().join("bad.csv").to_str().unwrap(),
    ]);
    assert!(!o.status.success());
    assert!(stderr(&o).contains("--dwell-s"), "{}", stderr(&o));
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

/// Standard gravity, m/s² (3rd CGPM, 1901).
const G0: f64 = 9.80665;

/// The planning threshold of a profile TOML: `wheel_limit_nms × wheel_margin` (README, sky
/// adapter: the planner's rules).
fn threshold_of(profile: &str) -> f64 {
    toml_number(profile, "wheel_limit_nms") * toml_number(profile, "wheel_margin")
}

/// Propellant of a dump of `h` N·m·s: `|H| / (L · Isp · g0)` (model page, section 7), L and
/// Isp from the profile TOML.
fn propellant_kg(profile: &str, h: f64) -> f64 {
    h / (toml_number(profile, "thruster_arm_m") * toml_number(profile, "thruster_isp_s") * G0)
}

/// Instrument name → settle_s of a profile TOML's `[[instrument]]` tables (simple parsing:
/// `name` and `settle_s` lines after each `[[instrument]]`).
fn instrument_settle(profile: &str) -> Vec<(String, f64)> {
    let mut out: Vec<(String, f64)> = Vec::new();
    let mut inside = false;
    let mut name: Option<String> = None;
    for line in profile.lines() {
        let line = line.split('#').next().unwrap().trim();
        if line.starts_with("[[") {
            inside = line == "[[instrument]]";
            name = None;
            continue;
        }
        if !inside {
            continue;
        }
        if let Some((k, v)) = line.split_once('=') {
            match k.trim() {
                "name" => name = Some(v.trim().trim_matches('"').to_string()),
                "settle_s" => out.push((name.clone().unwrap(), v.trim().parse().unwrap())),
                _ => {}
            }
        }
    }
    out
}

/// The columns of plan.csv (README, sky adapter outputs).
const PLAN_HEADER: [&str; 19] = [
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

/// What this file works out from a plan's two tables.
struct Facts {
    /// Target ids in plan order.
    ids: Vec<String>,
    /// From the plan start to the last row's end, seconds (whole-second times).
    elapsed_s: f64,
    /// Σ of |H| at the `dump_start` rows of momentum.csv.
    dumped_nms: f64,
    /// Number of `dump_start` rows.
    dumps: usize,
    /// |H| of the last row of momentum.csv.
    final_nms: f64,
    /// Largest |H| of momentum.csv.
    peak_nms: f64,
    /// (Σ dumped + final) / (L Isp g0).
    propellant_kg: f64,
    /// Σ wait_before_s and Σ busy_before_s.
    wait_s: f64,
    busy_s: f64,
}

/// Checks a plan table and its momentum trace against each other, the profile and the
/// targets file: time order, dwells, the accounting of every gap, slew times, settling,
/// dumps and their time, the threshold at every momentum row, the propellant formula.
fn check_plan_files(
    plan_path: &Path,
    momentum_path: &Path,
    targets: &HashMap<String, Tgt>,
    start: &str,
    profile: &str,
) -> Facts {
    let threshold = threshold_of(profile);
    let (rate, accel) = (
        toml_number(profile, "slew_rate_deg_s"),
        toml_number(profile, "slew_accel_deg_s2"),
    );
    let dump_s = toml_number(profile, "dump_s");
    let settle = instrument_settle(profile);
    let settle_of = |inst: &str| {
        settle
            .iter()
            .find(|(n, _)| n == inst)
            .unwrap_or_else(|| panic!("instrument {inst} not in the profile"))
            .1
    };
    let pname = plan_path.display().to_string();

    // momentum.csv: a plain table; |H| recomputed from its components at every row, never
    // over the threshold; dumps take dump_s.
    let text = std::fs::read_to_string(momentum_path).unwrap();
    assert!(
        text.starts_with("utc,hx_nms,hy_nms,hz_nms,h_nms,event\n"),
        "{}: the header is the first line",
        momentum_path.display()
    );
    let m = Table::read(momentum_path);
    assert!(!m.rows.is_empty());
    assert_eq!(field(&m.rows[0], "event"), "start");
    assert_eq!(field(&m.rows[0], "utc"), start);
    let mut prev_t = parse_utc_jd(start);
    let (mut dumped, mut dumps, mut peak) = (0.0, 0usize, 0.0f64);
    let mut observe_rows: Vec<(String, [f64; 3])> = Vec::new();
    let mut dump_starts: Vec<(f64, f64)> = Vec::new();
    for (k, row) in m.rows.iter().enumerate() {
        let what = format!("{} line {}", momentum_path.display(), k + 2);
        let t = parse_utc_jd(field(row, "utc"));
        assert!(t >= prev_t - 1e-9, "{what}: time goes back");
        prev_t = t;
        let v = [num(row, "hx_nms"), num(row, "hy_nms"), num(row, "hz_nms")];
        let h = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        let written = num(row, "h_nms");
        assert!(
            (h - written).abs() <= 2e-5,
            "{what}: |H| {h} but h_nms {written}"
        );
        assert!(
            written <= threshold + 1e-4,
            "{what}: |H| {written} N·m·s over the threshold {threshold} (profile)"
        );
        peak = peak.max(written);
        let event = field(row, "event");
        assert!(
            ["start", "slew", "wait", "observe", "dump_start", "dump_end"].contains(&event),
            "{what}: event {event}"
        );
        if event == "dump_start" {
            dumped += written;
            dumps += 1;
            dump_starts.push((t, written));
            let next = m.rows.get(k + 1).expect("a dump_end after each dump_start");
            assert_eq!(field(next, "event"), "dump_end", "{what}");
            let took = seconds_between(field(row, "utc"), field(next, "utc"));
            assert!(
                (took - dump_s).abs() <= 1.0,
                "{what}: the dump takes {took} s, dump_s {dump_s} (profile)"
            );
            assert!(
                num(next, "h_nms") < written,
                "{what}: the dump empties the wheels"
            );
        }
        if event == "observe" {
            observe_rows.push((field(row, "utc").to_string(), v));
        }
    }
    let final_nms = num(m.rows.last().unwrap(), "h_nms");

    // plan.csv.
    let text = std::fs::read_to_string(plan_path).unwrap();
    assert!(
        text.starts_with(&format!("{}\n", PLAN_HEADER.join(","))),
        "{pname}: the header is the first line"
    );
    let plan = Table::read(plan_path);
    assert_eq!(plan.header, PLAN_HEADER);
    assert!(!plan.rows.is_empty(), "{pname}: empty plan");
    assert_eq!(
        observe_rows.len(),
        plan.rows.len(),
        "an observe row of momentum.csv per observation"
    );
    let mut ids: Vec<String> = Vec::new();
    let mut prev_end = start.to_string();
    let mut prev_target: Option<&Tgt> = None;
    let (mut wait_sum, mut busy_sum, mut dumps_sum, mut dump_kg_sum) = (0.0, 0.0, 0usize, 0.0);
    for (k, row) in plan.rows.iter().enumerate() {
        let id = field(row, "target");
        let what = format!("{pname} row {} ({id})", k + 1);
        assert_eq!(num(row, "seq"), (k + 1) as f64, "{what}");
        assert!(
            !ids.iter().any(|x| x == id),
            "{what}: target twice in the plan"
        );
        ids.push(id.to_string());
        let t = targets
            .get(id)
            .unwrap_or_else(|| panic!("{what}: not in the targets file"));
        let inst = field(row, "instrument");
        if !t.instrument.is_empty() {
            assert_eq!(inst, t.instrument, "{what}: instrument");
        }
        let (s, e) = (field(row, "start_utc"), field(row, "end_utc"));
        let gap = seconds_between(&prev_end, s);
        assert!(
            gap >= 0.0,
            "{what}: starts {s}, before the previous end {prev_end}"
        );
        // The dwell is the target's duration_s (whole-second rounding of both ends: ±1 s; a
        // further 1 ms for this test's own floating-point date arithmetic).
        let lasted = seconds_between(s, e);
        assert!(
            (lasted - t.dwell).abs() <= 1.001,
            "{what}: {s} to {e} is {lasted} s, duration_s {}",
            t.dwell
        );
        // Waiting and busy time add up to everything from the previous end (the plan start
        // for the first row): 1 s for the whole-second times at both ends and 0.1 s for the
        // two columns' rounding to 0.1 s.
        let (wait, busy) = (num(row, "wait_before_s"), num(row, "busy_before_s"));
        assert!(
            wait >= 0.0 && busy >= 0.0,
            "{what}: wait {wait}, busy {busy}"
        );
        assert!(
            (wait + busy - gap).abs() <= 1.1 + 1e-6,
            "{what}: wait_before_s {wait} + busy_before_s {busy}, but {gap} s from {prev_end} \
             to {s}"
        );
        wait_sum += wait;
        busy_sum += busy;
        let idle = field(row, "idle");
        assert!(
            ["none", "stay", "early", "park"].contains(&idle),
            "{what}: idle {idle}"
        );
        if wait > 1.0 {
            assert_ne!(idle, "none", "{what}: waited {wait} s");
        }
        // Slews (model page, section 5, with the profile's rate and acceleration;
        // slew_deg has 3 decimals, slew_s 1). Without parking, the slew time is that of the
        // one transition into the observation, whose eigen-axis angle is at least the
        // boresight separation (model page, section 4); parking adds two slews.
        let (phi, slew) = (num(row, "slew_deg"), num(row, "slew_s"));
        let expect = slew_time_s(phi, rate, accel);
        if idle == "park" {
            assert!(slew + 0.2 >= expect, "{what}: slew_s {slew} for {phi}°");
        } else {
            assert!(
                (slew - expect).abs() <= 0.2,
                "{what}: slew_s {slew} for {phi}°, model {expect:.2}"
            );
            if let Some(p) = prev_target {
                let sep = separation_deg(&unit(p.ra, p.dec), &unit(t.ra, t.dec));
                assert!(
                    phi + 1e-3 >= sep,
                    "{what}: slew {phi}° shorter than the boresight separation {sep:.3}°"
                );
            }
        }
        // Busy time holds the slews, the instrument's settling after the last one and the
        // dumps (profile: settle_s, dump_s).
        let nd = num(row, "dumps_before") as usize;
        let floor = slew + settle_of(inst) + nd as f64 * dump_s;
        assert!(
            busy + 0.2 >= floor,
            "{what}: busy_before_s {busy} < {floor}"
        );
        // The dumps before it are those of momentum.csv in the gap, with their propellant.
        let (from, to) = (parse_utc_jd(&prev_end), parse_utc_jd(s));
        let here: Vec<f64> = dump_starts
            .iter()
            .filter(|(t, _)| *t >= from - 1e-9 && *t <= to + 1e-9)
            .map(|d| d.1)
            .collect();
        assert_eq!(here.len(), nd, "{what}: dumps_before vs momentum.csv");
        let kg = num(row, "dump_propellant_before_kg");
        let want = propellant_kg(profile, here.iter().sum());
        assert!(
            (kg - want).abs() <= 1e-8 + propellant_kg(profile, 1e-5 * nd as f64),
            "{what}: dump_propellant_before_kg {kg}, from momentum.csv {want}"
        );
        dumps_sum += nd;
        dump_kg_sum += kg;
        // Momentum after the observation: its length, the threshold, and the observe row of
        // momentum.csv at its end.
        let v = [num(row, "hx_nms"), num(row, "hy_nms"), num(row, "hz_nms")];
        let h = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
        let after = num(row, "momentum_after_nms");
        assert!((h - after).abs() <= 2e-5, "{what}: |H| {h}, column {after}");
        assert!(
            after <= threshold + 1e-4,
            "{what}: {after} over {threshold}"
        );
        let (utc, mv) = &observe_rows[k];
        assert_eq!(utc, e, "{what}: observe row of momentum.csv");
        for c in 0..3 {
            assert!(
                (mv[c] - v[c]).abs() <= 1e-5,
                "{what}: H differs from momentum.csv"
            );
        }
        prev_end = e.to_string();
        prev_target = Some(t);
    }
    assert_eq!(dumps_sum, dumps, "Σ dumps_before vs dump_start rows");
    let propellant = propellant_kg(profile, dumped + final_nms);
    let per_row = dump_kg_sum + propellant_kg(profile, final_nms);
    assert!(
        (per_row - propellant).abs() <= 1e-8 * (dumps as f64 + 1.0),
        "Σ dump_propellant_before_kg + final {per_row} vs {propellant}"
    );
    Facts {
        ids,
        elapsed_s: seconds_between(start, &prev_end),
        dumped_nms: dumped,
        dumps,
        final_nms,
        peak_nms: peak,
        propellant_kg: propellant,
        wait_s: wait_sum,
        busy_s: busy_sum,
    }
}

fn run_demo(dir: &Path, extra: &[&str]) -> Output {
    let mut args = vec!["sky", "plan", "--out", dir.to_str().unwrap()];
    args.extend_from_slice(extra);
    let o = wend(&args);
    assert!(o.status.success(), "{args:?}: {}", stderr(&o));
    o
}

/// A JSON file.
fn json_file(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap())
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

#[test]
fn demo_plan_accounting_adds_up() {
    // The profile's own numbers and the model page's worked check (section 7):
    // 100 N·m·s with L = 1 m and Isp = 220 s → 0.04635 kg.
    let profile = demo_profile_text();
    assert!((propellant_kg(&profile, 100.0) - 0.04635).abs() < 5e-6);
    assert!(
        (threshold_of(&profile) - 16.0).abs() < 1e-12,
        "demo: 20 × 0.8"
    );
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    run_demo(&dir, &["--time-limit", "1"]);
    let targets = read_targets(&demo_targets_path());
    assert_eq!(targets.len(), 60, "the demo has 60 targets");
    let facts = check_plan_files(
        &dir.join("plan.csv"),
        &dir.join("momentum.csv"),
        &targets,
        DEMO_START,
        &profile,
    );
    // Every target is planned or unscheduled, once.
    let left = Table::read(&dir.join("unscheduled.csv"));
    assert_eq!(
        left.header,
        [
            "target",
            "priority",
            "reason",
            "explanation",
            "min_elongation_deg",
            "max_elongation_deg"
        ]
    );
    let mut ids: HashSet<String> = facts.ids.iter().cloned().collect();
    for row in &left.rows {
        let id = field(row, "target");
        let t = targets
            .get(id)
            .unwrap_or_else(|| panic!("unscheduled {id}: not in the targets file"));
        assert_eq!(num(row, "priority") as u32, t.priority, "{id}: priority");
        assert!(
            ids.insert(id.to_string()),
            "{id}: planned and unscheduled, or twice"
        );
        assert!(
            !field(row, "explanation").is_empty(),
            "{id}: no explanation"
        );
    }
    let all: HashSet<String> = targets.keys().cloned().collect();
    assert_eq!(ids, all, "every target is planned or unscheduled");
    // The demo's windows and links hold (demo-targets.csv, demo-links.csv).
    check_windows_and_links(
        &Table::read(&dir.join("plan.csv")),
        &targets,
        &read_links(&sky_dir().join("demo-links.csv")),
    );
}

/// Every proposal window and link of the inputs holds in the plan table (README, sky inputs:
/// the observation starts and ends inside its window; `after`: the second starts between the
/// lags after the first starts; `before`: the same swapped; `group`: the second directly
/// follows the first with no waiting).
fn check_windows_and_links(plan: &Table, targets: &HashMap<String, Tgt>, links: &[LinkRow]) {
    let mut at: HashMap<&str, usize> = HashMap::new();
    for (k, row) in plan.rows.iter().enumerate() {
        let id = field(row, "target");
        at.insert(id, k);
        if let Some((w0, w1)) = targets[id].window {
            let (s, e) = (
                parse_utc_jd(field(row, "start_utc")),
                parse_utc_jd(field(row, "end_utc")),
            );
            assert!(
                s >= w0 - 0.5 / 86_400.0 && e <= w1 + 0.5 / 86_400.0,
                "{id}: observed {} to {}, outside its proposal window",
                field(row, "start_utc"),
                field(row, "end_utc")
            );
        }
    }
    for (kind, first, second, min, max) in links {
        let (a, b) = match kind.as_str() {
            "before" => (second, first),
            _ => (first, second),
        };
        let (Some(&ka), Some(&kb)) = (at.get(a.as_str()), at.get(b.as_str())) else {
            // A link is kept when both are in the plan; one left out must say why.
            assert!(
                !(at.contains_key(a.as_str()) && at.contains_key(b.as_str())),
                "{kind} {a} {b}"
            );
            continue;
        };
        let (ra, rb) = (&plan.rows[ka], &plan.rows[kb]);
        let lag = seconds_between(field(ra, "start_utc"), field(rb, "start_utc"));
        if kind == "group" {
            assert_eq!(kb, ka + 1, "group {a} → {b}: not directly after");
            assert!(num(rb, "wait_before_s") <= 0.05, "group {a} → {b}: a wait");
        } else {
            assert!(lag > 0.0, "{kind} {a} → {b}: {b} starts first");
            if let Some(m) = min {
                assert!(lag >= m - 1.0, "{kind} {a} → {b}: {lag} s < {m} s");
            }
            if let Some(m) = max {
                assert!(lag <= m + 1.0, "{kind} {a} → {b}: {lag} s > {m} s");
            }
        }
    }
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
    let f = |k: &str| {
        v[k].as_f64()
            .unwrap_or_else(|| panic!("{k} is not a number: {}", v[k]))
    };
    assert!(v["caution"].as_str().unwrap().contains("operations team"));
    assert_eq!(v["targets"], 60, "the demo has 60 targets");
    let profile = demo_profile_text();
    let band = demo_band();
    assert_eq!(
        v["elongation_band_deg"],
        serde_json::json!([band.0, band.1])
    );
    assert_eq!(f("dump_threshold_nms"), threshold_of(&profile));
    assert_eq!(
        f("wheel_limit_nms"),
        toml_number(&profile, "wheel_limit_nms")
    );
    // The demo profile leaves the start keys at their defaults (commented out): no momentum,
    // no start pointing; its roll range is ±20°.
    assert_eq!(v["start_momentum_nms"], serde_json::json!([0.0, 0.0, 0.0]));
    assert!(v["start_pointing"].is_null());
    assert_eq!(
        v["roll_range_deg"],
        serde_json::json!([
            toml_number(&profile, "roll_min_deg"),
            toml_number(&profile, "roll_max_deg")
        ])
    );
    assert!(v["propellant_lower_bound_kg"].is_null());
    assert_eq!(v["start_utc"], DEMO_START);
    assert_eq!(f("horizon_days"), 30.0);
    for gone in [
        "repairs",
        "order_cost_s",
        "strategy",
        "polished",
        "nearest_neighbour",
        "nearest_neighbour_order_cost_s",
        "overhead_s",
    ] {
        assert!(v.get(gone).is_none(), "{gone} is no longer written");
    }
    assert!(f("seconds") >= 0.0);
    assert_eq!(json_file(&dir.join("summary.json")), {
        // summary.json is the same object (pretty-printed).
        v.clone()
    });

    // The files, checked on their own, agree with the summary.
    let targets = read_targets(&demo_targets_path());
    let facts = check_plan_files(
        &dir.join("plan.csv"),
        &dir.join("momentum.csv"),
        &targets,
        DEMO_START,
        &profile,
    );
    let left = Table::read(&dir.join("unscheduled.csv"));
    assert_eq!(v["scheduled"].as_u64().unwrap() as usize, facts.ids.len());
    assert_eq!(v["unscheduled"].as_u64().unwrap() as usize, left.rows.len());
    assert_eq!(facts.ids.len() + left.rows.len(), 60);
    let n = facts.ids.len() as f64;
    for (total, sum) in [("busy_overhead_s", facts.busy_s), ("wait_s", facts.wait_s)] {
        assert!(
            (f(total) - sum).abs() <= 0.05 * n + 1e-6,
            "{total} {} vs the rows' {sum}",
            f(total)
        );
    }
    assert!(
        (f("elapsed_s") - facts.elapsed_s).abs() <= 1.0,
        "elapsed_s {} vs {} s from {DEMO_START} to the last end",
        f("elapsed_s"),
        facts.elapsed_s
    );
    assert_eq!(
        v["end_utc"],
        field(
            Table::read(&dir.join("plan.csv")).rows.last().unwrap(),
            "end_utc"
        )
    );
    assert_eq!(v["dumps"].as_u64().unwrap() as usize, facts.dumps);
    let tol = 1e-5 * (facts.dumps as f64 + 1.0);
    assert!((f("dumped_nms") - facts.dumped_nms).abs() <= tol);
    assert!((f("final_momentum_nms") - facts.final_nms).abs() <= 1e-5);
    assert!(f("peak_momentum_nms") <= f("dump_threshold_nms") + 1e-9);
    assert!(f("peak_momentum_nms") + 1e-5 >= facts.peak_nms);
    // Propellant: Σ dumped |H| (momentum.csv) + the final |H|, over L · Isp · g0.
    let got = f("propellant_kg");
    assert!(
        (got - facts.propellant_kg).abs() <= propellant_kg(&profile, tol) + 1e-12,
        "propellant_kg {got}, from momentum.csv {}",
        facts.propellant_kg
    );
    // The baseline block uses the same names.
    for key in [
        "scheduled",
        "elapsed_s",
        "busy_overhead_s",
        "wait_s",
        "propellant_kg",
        "dumps",
    ] {
        assert!(v["baseline"][key].is_number(), "baseline.{key}");
    }
}
// ---------------------------------------------------------------------------------------------
// 4. Every output carries the caution; the CSV files are plain
// ---------------------------------------------------------------------------------------------

#[test]
fn every_output_file_carries_the_caution_and_the_csv_files_are_plain() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    run_demo(&dir, &["--time-limit", "1"]);
    for name in [
        "CAUTION.txt",
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
    assert!(json_file(&dir.join("summary.json"))["caution"]
        .as_str()
        .unwrap()
        .contains("operations team"));
    // The CSV files: the header on line 1 (README: pandas and spreadsheets read them with no
    // options), no comment line anywhere.
    for (name, first) in [
        ("plan.csv", "seq,target,"),
        ("momentum.csv", "utc,hx_nms,"),
        ("visibility.csv", "target,window,"),
        ("unscheduled.csv", "target,priority,"),
    ] {
        let text = std::fs::read_to_string(dir.join(name)).unwrap();
        assert!(
            text.starts_with(first),
            "{name}: first line {:?}",
            text.lines().next()
        );
        assert!(
            !text.lines().any(|l| l.starts_with('#')),
            "{name}: a # line"
        );
        let t = Table::read(&dir.join(name));
        assert!(t.rows.iter().all(|r| r.len() == t.header.len()), "{name}");
    }
}

// ---------------------------------------------------------------------------------------------
// 5. Determinism
// ---------------------------------------------------------------------------------------------

#[test]
fn same_seed_and_one_thread_give_the_same_plan_files() {
    let root = tempfile::tempdir().unwrap();
    let (a, b) = (root.path().join("a"), root.path().join("b"));
    // With 60 s every search ends on its budget of plays, and the plan says so. The second
    // run spells the options short: -o, -s, -j and -t mean what they mean in `wend solve`,
    // and must give the same files.
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
        let summary = json_file(&dir.join("summary.json"));
        assert_eq!(summary["stop_reason"], "searches_done", "{summary}");
    }
    for name in [
        "plan.csv",
        "unscheduled.csv",
        "momentum.csv",
        "visibility.csv",
    ] {
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
    assert!(!rows.is_empty());
    assert!(j["hypervolume_h_g"].as_f64().unwrap() > 0.0);
    assert!(j["propellant_lower_bound_kg"].is_null());
    // front.csv holds the same rows; no plan dominates another (minimising elapsed time and
    // propellant), in the file's figures (milliseconds, micrograms) as in the JSON's.
    let table = Table::read(&dir.join("front.csv"));
    assert_eq!(table.rows.len(), rows.len());
    let csv_pts: Vec<(f64, f64)> = table
        .rows
        .iter()
        .map(|r| (num(r, "elapsed_s"), num(r, "propellant_kg")))
        .collect();
    let json_pts: Vec<(f64, f64)> = rows
        .iter()
        .map(|r| {
            let f = |k: &str| r[k].as_f64().expect("a number");
            (f("elapsed_s"), f("propellant_kg"))
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
    // The fastest end is no slower than the single plan.
    let single = j["elapsed_s"].as_f64().unwrap();
    let fastest = json_pts.iter().map(|p| p.0).fold(f64::INFINITY, f64::min);
    assert!(fastest <= single + 1e-6, "{fastest} > {single}");
    // end_times_differ says whether the ends are more than a second apart.
    let slowest = json_pts
        .iter()
        .map(|p| p.0)
        .fold(f64::NEG_INFINITY, f64::max);
    assert_eq!(j["end_times_differ"], slowest - fastest > 1.0);
    // Every plan passes the same independent checks as single plans, schedules the same set
    // of targets, and its figures in front.csv are those of its own files.
    let targets = read_targets(&demo_targets_path());
    let profile = demo_profile_text();
    let mut first_set: Option<HashSet<String>> = None;
    for (k, row) in table.rows.iter().enumerate() {
        let path = dir.join(format!("plan-{}.csv", k + 1));
        let momentum = dir.join(format!("plan-{}-momentum.csv", k + 1));
        check_plan_rows(&path, &targets, DEMO_START, 30.0, demo_band());
        let facts = check_plan_files(&path, &momentum, &targets, DEMO_START, &profile);
        assert_eq!(facts.ids.len(), num(row, "scheduled") as usize);
        assert!(
            (facts.elapsed_s - num(row, "elapsed_s")).abs() <= 1.0,
            "plan {}",
            k + 1
        );
        assert_eq!(
            field(row, "end_utc"),
            Table::read(&path).rows.last().unwrap()["end_utc"]
        );
        assert_eq!(facts.dumps, num(row, "dumps") as usize, "plan {}", k + 1);
        let tol = propellant_kg(&profile, 1e-5 * (facts.dumps as f64 + 1.0)) + 1e-9;
        assert!(
            (facts.propellant_kg - num(row, "propellant_kg")).abs() <= tol,
            "plan {}: propellant {} vs its momentum.csv {}",
            k + 1,
            num(row, "propellant_kg"),
            facts.propellant_kg
        );
        let set: HashSet<String> = facts.ids.into_iter().collect();
        match &first_set {
            None => first_set = Some(set),
            Some(s) => assert_eq!(&set, s, "plan {} schedules other targets", k + 1),
        }
    }
    let html = std::fs::read_to_string(dir.join("report.html")).unwrap();
    assert!(html.contains("operations team") && html.contains("front.svg"));
    assert!(std::fs::read_to_string(dir.join("CAUTION.txt"))
        .unwrap()
        .contains("operations team"));
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
            present.starts_with("always") || present.starts_with("when "),
            "{heading}: {key}: present must be 'always [(...)]' or 'when ...', not {present:?}"
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
        if present.starts_with("always") {
            assert!(
                seen.iter().any(|k| k == key),
                "{what}: {key} is always present by docs/output-keys.md, but missing"
            );
        }
    }
}

/// The keys of a JSON object, with the keys of its objects `baseline`, `start_pointing`,
/// `hypervolume_reference` and `extremes` as `object.key` (the tables list them so).
fn json_keys(v: &serde_json::Value) -> Vec<String> {
    let obj = v.as_object().expect("a JSON object");
    let mut keys = Vec::new();
    for (k, value) in obj {
        keys.push(k.clone());
        if [
            "baseline",
            "start_pointing",
            "hypervolume_reference",
            "extremes",
        ]
        .contains(&k.as_str())
        {
            if let Some(inner) = value.as_object() {
                keys.extend(inner.keys().map(|i| format!("{k}.{i}")));
            }
        }
    }
    keys
}

fn header_of(path: &Path) -> Vec<String> {
    Table::read(path).header
}

#[test]
fn output_keys_and_columns_are_those_of_the_documented_tables() {
    let root = tempfile::tempdir().unwrap();
    // A single plan, with a start pointing: no front keys.
    let single = root.path().join("single");
    let o = run_demo(
        &single,
        &[
            "--json",
            "--time-limit",
            "1",
            "--start-attitude",
            "120,15,5",
        ],
    );
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys = json_keys(&v);
    check_keys("## sky plan", &keys, "wend sky plan --json");
    assert!(keys.iter().any(|k| k == "start_pointing.ra_deg"));
    assert!(
        !keys.iter().any(|k| k == "front"),
        "front keys without --front"
    );
    check_keys(
        "## sky plan",
        &json_keys(&json_file(&single.join("summary.json"))),
        "summary.json",
    );
    check_keys(
        "## sky plan.csv",
        &header_of(&single.join("plan.csv")),
        "plan.csv",
    );
    check_keys(
        "## sky momentum.csv",
        &header_of(&single.join("momentum.csv")),
        "momentum.csv",
    );
    check_keys(
        "## sky visibility.csv",
        &header_of(&single.join("visibility.csv")),
        "visibility.csv",
    );
    check_keys(
        "## sky unscheduled.csv",
        &header_of(&single.join("unscheduled.csv")),
        "unscheduled.csv",
    );

    // wend sky check --json, on a plan with a broken link (LDS-017 before LDS-004, whose
    // `after` link of demo-links.csv it must follow), so that a violation object is written.
    let broken = root.path().join("broken.csv");
    std::fs::write(&broken, "target\nLDS-017\nLDS-004\n").unwrap();
    let o = wend(&["sky", "check", broken.to_str().unwrap(), "--json"]);
    assert_eq!(o.status.code(), Some(3), "{}", stderr(&o));
    let c: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    check_keys("## sky check", &json_keys(&c), "wend sky check --json");
    let found = c["violations"].as_array().unwrap();
    assert!(!found.is_empty());
    for f in found {
        let k: Vec<String> = f.as_object().unwrap().keys().cloned().collect();
        check_keys(
            "## sky check violations",
            &k,
            "a violation of wend sky check --json",
        );
    }

    // The front: its keys as well, front.csv, plan-K.csv and the JSON front rows.
    let front = root.path().join("front");
    let o = run_demo(&front, &["--front", "--json", "--time-limit", "3"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let keys = json_keys(&v);
    check_keys("## sky plan", &keys, "wend sky plan --front --json");
    for key in [
        "front",
        "hypervolume_h_g",
        "hypervolume_reference.elapsed_h",
        "hypervolume_reference.propellant_g",
        "end_times_differ",
        "front_settled",
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
        check_keys("## sky plan.csv", &header_of(&front.join(&name)), &name);
        let name = format!("plan-{k}-momentum.csv");
        check_keys("## sky momentum.csv", &header_of(&front.join(&name)), &name);
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
    // Far too little time for the demo's searches: at least one is cut, and the plan says so.
    let o = wend(&["sky", "plan", "--time-limit", "0.001", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["stop_reason"], "time_limit", "{v}");
    // Ample time: the demo's searches end on their budgets of plays long before it, and the
    // plan says that more time would not change it.
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
}

// ---------------------------------------------------------------------------------------------
// 9. wend sky check
// ---------------------------------------------------------------------------------------------

#[test]
fn sky_check_passes_the_planners_own_plan_and_flags_a_broken_copy() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("plan");
    run_demo(&dir, &["--time-limit", "1", "--seed", "3"]);
    let plan_path = dir.join("plan.csv");
    // The planner's own plan.csv, read as it is: no violation, exit 0.
    let o = wend(&["sky", "check", plan_path.to_str().unwrap()]);
    let out = String::from_utf8_lossy(&o.stdout).into_owned();
    assert_eq!(o.status.code(), Some(0), "{out}{}", stderr(&o));
    assert!(out.contains("operations team"), "{out}");
    let o = wend(&["sky", "check", plan_path.to_str().unwrap(), "--json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let c: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(c["ok"], true, "{c}");
    assert_eq!(c["violations"], serde_json::json!([]));

    // A hand-broken copy: the targets of the rows of LDS-004 and LDS-017 swapped (start times
    // left in place), so that LDS-017 comes before LDS-004, against the `after` link of
    // demo-links.csv. The check names the file, the line and the target; exit code 3.
    let links = read_links(&sky_dir().join("demo-links.csv"));
    assert!(links
        .iter()
        .any(|l| l.0 == "after" && l.1 == "LDS-004" && l.2 == "LDS-017"));
    let mut records: Vec<csv::StringRecord> = csv::ReaderBuilder::new()
        .has_headers(false)
        .from_path(&plan_path)
        .unwrap()
        .records()
        .map(Result::unwrap)
        .collect();
    let line_of = |id: &str, records: &[csv::StringRecord]| {
        records
            .iter()
            .position(|r| &r[1] == id)
            .unwrap_or_else(|| panic!("{id} not planned"))
    };
    let (i4, i17) = (line_of("LDS-004", &records), line_of("LDS-017", &records));
    assert!(i4 < i17, "the link holds in the planner's plan");
    let swap = |r: &mut Vec<csv::StringRecord>| {
        let (a, b) = (r[i4].clone(), r[i17].clone());
        let mut fields_a: Vec<String> = a.iter().map(str::to_string).collect();
        let mut fields_b: Vec<String> = b.iter().map(str::to_string).collect();
        std::mem::swap(&mut fields_a[1], &mut fields_b[1]);
        r[i4] = csv::StringRecord::from(fields_a);
        r[i17] = csv::StringRecord::from(fields_b);
    };
    swap(&mut records);
    let broken = root.path().join("broken.csv");
    {
        let mut w = csv::Writer::from_path(&broken).unwrap();
        for r in &records {
            w.write_record(r).unwrap();
        }
        w.flush().unwrap();
    }
    let name = broken.to_str().unwrap();
    let o = wend(&["sky", "check", name]);
    let out = String::from_utf8_lossy(&o.stdout).into_owned();
    assert_eq!(o.status.code(), Some(3), "{out}{}", stderr(&o));
    // Line numbers count the header as line 1.
    let prefix = format!("{name}:{}:", i4 + 1);
    assert!(
        out.lines()
            .any(|l| l.starts_with(&prefix) && l.contains("LDS-017")),
        "no line {prefix} … LDS-017 in {out}"
    );
}

// ---------------------------------------------------------------------------------------------
// 10. Priorities, proposal windows and links
// ---------------------------------------------------------------------------------------------

#[test]
fn priorities_windows_and_links_hold_and_the_lower_priority_is_left_out() {
    // An invented pool near RA 120°, Dec 10°, inside the demo band for the whole horizon
    // (checked below with this file's Sun). LOW (priority 6) and HIGH (priority 2) have the
    // same five-hour proposal window and dwells of 3.5 h and 4 h: only one fits in it. LOW
    // comes first in the file and is shorter, so neither file order nor a shorter plan
    // favours HIGH; only its priority does. A → B is an `after` link (B starts 6 to 12 h
    // after A), C → D a group, E has a window on the second day.
    let dir = tempfile::tempdir().unwrap();
    let start = "2027-03-01T00:00:00Z";
    let targets_csv = dir.path().join("pool.csv");
    std::fs::write(
        &targets_csv,
        "id,ra_deg,dec_deg,duration_s,instrument,priority,window_start,window_end\n\
         LOW,121.0,10.0,12600,wide_imager,6,2027-03-01T06:00:00Z,2027-03-01T11:00:00Z\n\
         HIGH,119.0,11.0,14400,wide_imager,2,2027-03-01T06:00:00Z,2027-03-01T11:00:00Z\n\
         A,120.0,9.0,7200,wide_imager,3,,\n\
         B,122.0,8.0,7200,fast_photometer,3,,\n\
         C,118.0,12.0,3600,wide_imager,4,,\n\
         D,118.0,12.0,3600,slit_spectrograph,4,,\n\
         E,123.0,10.0,5400,wide_imager,3,2027-03-02T00:00:00Z,2027-03-02T12:00:00Z\n",
    )
    .unwrap();
    let links_csv = dir.path().join("links.csv");
    std::fs::write(
        &links_csv,
        "kind,first,second,min_lag_s,max_lag_s\nafter,A,B,21600,43200\ngroup,C,D,,\n",
    )
    .unwrap();
    let targets = read_targets(&targets_csv);
    let links = read_links(&links_csv);
    let band = demo_band();
    let horizon = 3.0;
    // The premise: every target is in the band all along (hourly, this file's Sun).
    for (id, t) in &targets {
        for h in 0..=(horizon * 24.0) as usize {
            let e = elongation_at(t.ra, t.dec, parse_utc_jd(start) + h as f64 / 24.0);
            assert!(
                e > band.0 + 1.0 && e < band.1 - 1.0,
                "{id}: {e}° at hour {h}"
            );
        }
    }
    let out = dir.path().join("out");
    let o = wend(&[
        "sky",
        "plan",
        targets_csv.to_str().unwrap(),
        "--links",
        links_csv.to_str().unwrap(),
        "--start",
        start,
        "--horizon-days",
        "3",
        "--time-limit",
        "3",
        "--threads",
        "1",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let plan = Table::read(&out.join("plan.csv"));
    check_plan_rows(&out.join("plan.csv"), &targets, start, horizon, band);
    let facts = check_plan_files(
        &out.join("plan.csv"),
        &out.join("momentum.csv"),
        &targets,
        start,
        &demo_profile_text(),
    );
    check_windows_and_links(&plan, &targets, &links);
    // Everything but LOW fits; LOW is left out for priority.
    let kept: HashSet<&str> = facts.ids.iter().map(String::as_str).collect();
    let left = Table::read(&out.join("unscheduled.csv"));
    let left_ids: Vec<&str> = left.rows.iter().map(|r| field(r, "target")).collect();
    assert_eq!(left_ids, ["LOW"], "kept {kept:?}");
    assert_eq!(field(&left.rows[0], "reason"), "priority");
    assert_eq!(num(&left.rows[0], "priority"), 6.0);
    for id in ["HIGH", "A", "B", "C", "D", "E"] {
        assert!(kept.contains(id), "{id} left out; kept {kept:?}");
    }
    // Where they compete (overlapping proposal windows), what is left out is of lower
    // priority (a larger number) than what was kept.
    for u in &left_ids {
        let tu = &targets[*u];
        let Some((u0, u1)) = tu.window else { continue };
        for k in &kept {
            if let Some((k0, k1)) = targets[*k].window {
                if k0 < u1 && u0 < k1 {
                    assert!(
                        tu.priority > targets[*k].priority,
                        "{u} (priority {}) left out, {k} (priority {}) kept",
                        tu.priority,
                        targets[*k].priority
                    );
                }
            }
        }
    }
}
