//! Bad input through the command line: every user-file reader (TSPLIB problems, TOUR files,
//! targets CSV, observatory profile TOML) fed empty, truncated, binary, CRLF, byte-order-marked,
//! non-finite, huge, overflowing, duplicated and tiny files, run as separate `wend` processes.
//!
//! Each case either gives a correct answer, checked here from the fixture's own numbers, or is
//! refused: exit code 2 and exactly one line on stderr, `wend: ` then the file's path and,
//! where one line is at fault, `:LINE:` (common practice for compilers and linters, so that
//! editors can jump to the place). In every case stderr has no `panicked` or `RUST_BACKTRACE`,
//! and the process ends by itself with an exit code (no signal, no hang).
//!
//! Fixtures are in `tests/bad-input/`; the line numbers below were counted by hand from them.

use std::io::Read;
use std::path::PathBuf;
use std::process::{Child, Output, Stdio};
use std::time::{Duration, Instant};

use wend_tests::{instance, wend_command};

/// A file of `tests/bad-input/`.
fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("bad-input")
        .join(name)
}

/// Longest a case may take before it counts as a hang (the slowest valid case searches for
/// about a second).
const HANG: Duration = Duration::from_secs(60);

/// Runs `wend` with `args`, killing it after [`HANG`].
fn run(args: &[String]) -> Output {
    let mut child = wend_command()
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .env("RUST_BACKTRACE", "0")
        .spawn()
        .expect("wend starts");
    // Read both pipes on threads so that a chatty child cannot block on a full pipe.
    let out = drain(&mut child, true);
    let err = drain(&mut child, false);
    let began = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().expect("wait for wend") {
            break s;
        }
        if began.elapsed() > HANG {
            let _ = child.kill();
            let _ = child.wait();
            panic!("wend {args:?} did not finish within {HANG:?}: a hang");
        }
        std::thread::sleep(Duration::from_millis(10));
    };
    Output {
        status,
        stdout: out.join().expect("stdout reader"),
        stderr: err.join().expect("stderr reader"),
    }
}

fn drain(child: &mut Child, stdout: bool) -> std::thread::JoinHandle<Vec<u8>> {
    let mut pipe: Box<dyn Read + Send> = if stdout {
        Box::new(child.stdout.take().expect("piped stdout"))
    } else {
        Box::new(child.stderr.take().expect("piped stderr"))
    };
    std::thread::spawn(move || {
        let mut buf = Vec::new();
        let _ = pipe.read_to_end(&mut buf);
        buf
    })
}

/// What a case must give.
#[derive(Clone, Copy, Debug)]
enum Expect {
    /// Exit 2; stderr is one line `wend: PATH...` naming the fixture `file`, with `PATH:LINE:`
    /// when `line` is `Some`, and `PATH: ` (no line) when it is `None`.
    Refused {
        file: &'static str,
        line: Option<usize>,
    },
    /// `wend solve --json`: exit 0 and the JSON `length` equal to this.
    Length(i64),
    /// `wend bound --json`: exit 0 and the JSON `lower_bound` equal to this.
    Bound(i64),
    /// `wend measure`: exit 0 and stdout this number.
    Measured(i64),
    /// `wend sky plan --json`: exit 0, `targets` of them read, `scheduled` of them scheduled.
    Planned { targets: u64, scheduled: u64 },
}

use Expect::*;

const fn refused(file: &'static str, line: usize) -> Expect {
    Refused {
        file,
        line: Some(line),
    }
}

const fn refused_whole(file: &'static str) -> Expect {
    Refused { file, line: None }
}

/// TSPLIB's EUC_2D distance: `nint(sqrt(dx² + dy²))` (TSPLIB 95 documentation, Reinelt 1995,
/// section 2.1, Euclidean distance), nint rounding halves up.
fn euc_2d(a: (f64, f64), b: (f64, f64)) -> i64 {
    let (dx, dy) = (a.0 - b.0, a.1 - b.1);
    ((dx * dx + dy * dy).sqrt() + 0.5).floor() as i64
}

/// Length of the closed tour visiting `points` in order, EUC_2D.
fn closed_length(points: &[(f64, f64)]) -> i64 {
    (0..points.len())
        .map(|i| euc_2d(points[i], points[(i + 1) % points.len()]))
        .sum()
}

// Coordinates as written in the fixtures.
const N1: [(f64, f64); 1] = [(5.0, 5.0)];
const N2: [(f64, f64); 2] = [(0.0, 0.0), (3.6, 4.2)];
const N3: [(f64, f64); 3] = [(0.0, 0.0), (10.4, 0.0), (3.3, 7.7)];
const DUP_POINTS: [(f64, f64); 3] = [(1.0, 1.0), (1.0, 1.0), (7.0, 9.0)];
const TRI5: [(f64, f64); 5] = [
    (0.0, 0.0),
    (30.0, 0.0),
    (30.0, 40.0),
    (12.0, 55.0),
    (-8.0, 21.0),
];
/// `tour-good.tour` on `tri5.tsp`: nodes 1 3 2 5 4.
const TOUR_GOOD: [usize; 5] = [1, 3, 2, 5, 4];

fn tour_good_length() -> i64 {
    let points: Vec<(f64, f64)> = TOUR_GOOD.iter().map(|&id| TRI5[id - 1]).collect();
    closed_length(&points)
}

/// A command line; `@name` stands for the fixture `name`.
type Args = &'static [&'static str];

const SOLVE: Args = &[
    "solve",
    "@",
    "--json",
    "--seed",
    "1",
    "--threads",
    "1",
    "--iterations",
    "20",
];
const BOUND: Args = &["bound", "@", "--json", "--time-limit", "1"];
const MEASURE_TRI5: Args = &["measure", "@tri5.tsp", "@"];
const MEASURE_TOUR3: Args = &["measure", "@", "@tour3.tour"];
/// The targets-file cases plan with the test profile; the profile cases plan `targets-3.csv`.
const PLAN_TARGETS: Args = &[
    "sky",
    "plan",
    "@",
    "--profile",
    "@profile-good.toml",
    "--start",
    "2027-03-01T00:00:00Z",
    "--time-limit",
    "1",
    "--threads",
    "1",
    "--json",
];
const PLAN_PROFILE: Args = &[
    "sky",
    "plan",
    "@targets-3.csv",
    "--profile",
    "@",
    "--start",
    "2027-03-01T00:00:00Z",
    "--time-limit",
    "1",
    "--threads",
    "1",
    "--json",
];

/// The table: fixture, command (the fixture goes where the bare `@` is), expected outcome.
///
/// Valid answers: n = 1 has length 0, n = 2 twice the one distance, n = 3 the perimeter (the
/// only tour), all from the coordinates with EUC_2D rounding; the only tour of three nodes is
/// also the cheapest 1-tree, so the Held–Karp bound equals it (Held and Karp 1970: a 1-tree on
/// three nodes is the triangle). Duplicate points are a valid instance (TSPLIB 95 does not
/// forbid them; common practice). Overflow is refused, never wrapped.
fn cases() -> Vec<(&'static str, Args, Expect)> {
    let n3 = closed_length(&N3);
    let tri5 = tour_good_length();
    vec![
        // ---- TSPLIB problems: wend solve FILE --json, wend bound FILE ----
        ("empty.tsp", SOLVE, refused_whole("empty.tsp")),
        ("empty.tsp", BOUND, refused_whole("empty.tsp")),
        // The last node line is cut after its x coordinate.
        ("truncated.tsp", SOLVE, refused("truncated.tsp", 8)),
        // Cut inside the keyword DIMENSION.
        (
            "truncated-header.tsp",
            SOLVE,
            refused("truncated-header.tsp", 3),
        ),
        // A line of NUL bytes.
        ("nul.tsp", SOLVE, refused("nul.tsp", 3)),
        // Random bytes; the first is not UTF-8, whitespace or a letter.
        ("random.bin", SOLVE, refused("random.bin", 1)),
        ("png.tsp", SOLVE, refused("png.tsp", 1)),
        ("png.tsp", BOUND, refused("png.tsp", 1)),
        ("nan.tsp", SOLVE, refused("nan.tsp", 7)),
        ("inf.tsp", SOLVE, refused("inf.tsp", 8)),
        ("1e400.tsp", SOLVE, refused("1e400.tsp", 8)),
        // Finite, but no integer distance can come of it.
        ("1e300.tsp", SOLVE, refused("1e300.tsp", 7)),
        ("1e300.tsp", BOUND, refused("1e300.tsp", 7)),
        ("dup-node.tsp", SOLVE, refused("dup-node.tsp", 8)),
        ("dup-points.tsp", SOLVE, Length(closed_length(&DUP_POINTS))),
        ("dup-points.tsp", BOUND, Bound(closed_length(&DUP_POINTS))),
        ("n0.tsp", SOLVE, refused("n0.tsp", 3)),
        ("n1.tsp", SOLVE, Length(0)),
        ("n1.tsp", BOUND, Bound(0)),
        ("n2.tsp", SOLVE, Length(2 * euc_2d(N2[0], N2[1]))),
        ("n2.tsp", BOUND, Bound(2 * euc_2d(N2[0], N2[1]))),
        ("n3.tsp", SOLVE, Length(n3)),
        ("n3.tsp", BOUND, Bound(n3)),
        ("crlf-n3.tsp", SOLVE, Length(n3)),
        ("bom-n3.tsp", SOLVE, Length(n3)),
        ("crlf-bad.tsp", SOLVE, refused("crlf-bad.tsp", 7)),
        ("bom-bad.tsp", SOLVE, refused("bom-bad.tsp", 6)),
        // DIMENSION 10^12 over three node lines: refused at once, nothing allocated for it.
        ("huge-dim.tsp", SOLVE, refused("huge-dim.tsp", 3)),
        ("huge-dim.tsp", BOUND, refused("huge-dim.tsp", 3)),
        ("neg-dim.tsp", SOLVE, refused("neg-dim.tsp", 3)),
        // Three of four nodes: the section ends short after its last line.
        ("few-nodes.tsp", SOLVE, refused("few-nodes.tsp", 8)),
        ("many-nodes.tsp", SOLVE, refused("many-nodes.tsp", 9)),
        // Three weights of 4e18: every tour sums to 1.2e19 > i64::MAX. No single line is at
        // fault; the file is named.
        ("sum-overflow.tsp", SOLVE, refused_whole("sum-overflow.tsp")),
        ("sum-overflow.tsp", BOUND, refused_whole("sum-overflow.tsp")),
        (
            "sum-overflow.tsp",
            MEASURE_TOUR3,
            refused_whole("sum-overflow.tsp"),
        ),
        // 2^63 and 1e19 do not fit i64 at all.
        (
            "weight-overflow.tsp",
            SOLVE,
            refused("weight-overflow.tsp", 8),
        ),
        ("weight-1e19.tsp", SOLVE, refused("weight-1e19.tsp", 7)),
        ("few-weights.tsp", SOLVE, refused("few-weights.tsp", 9)),
        ("many-weights.tsp", SOLVE, refused("many-weights.tsp", 10)),
        // Weights 5, 7 and 9 (UPPER_ROW): the only tour costs 5 + 7 + 9.
        ("explicit3.tsp", SOLVE, Length(5 + 7 + 9)),
        ("explicit3.tsp", BOUND, Bound(5 + 7 + 9)),
        ("explicit3.tsp", MEASURE_TOUR3, Measured(5 + 7 + 9)),
        ("n3.tsp", MEASURE_TOUR3, Measured(n3)),
        // A bad instance is named even when the tour is fine.
        ("nan.tsp", MEASURE_TOUR3, refused("nan.tsp", 7)),
        // ---- TOUR files: wend measure tri5.tsp TOUR ----
        ("tour-good.tour", MEASURE_TRI5, Measured(tri5)),
        ("tour-crlf.tour", MEASURE_TRI5, Measured(tri5)),
        ("tour-dup.tour", MEASURE_TRI5, refused("tour-dup.tour", 8)),
        (
            "tour-range.tour",
            MEASURE_TRI5,
            refused("tour-range.tour", 8),
        ),
        ("tour-zero.tour", MEASURE_TRI5, refused("tour-zero.tour", 7)),
        // No -1: the section ends with its last line.
        (
            "tour-no-end.tour",
            MEASURE_TRI5,
            refused("tour-no-end.tour", 9),
        ),
        (
            "tour-empty.tour",
            MEASURE_TRI5,
            refused_whole("tour-empty.tour"),
        ),
        (
            "tour-binary.tour",
            MEASURE_TRI5,
            refused("tour-binary.tour", 1),
        ),
        // DIMENSION 4 (line 3) on a five-node instance.
        ("tour-dim.tour", MEASURE_TRI5, refused("tour-dim.tour", 3)),
        ("tour3.tour", MEASURE_TRI5, refused("tour3.tour", 3)),
        // DIMENSION 5 but four nodes, closed by the -1 on line 9.
        (
            "tour-count.tour",
            MEASURE_TRI5,
            refused("tour-count.tour", 9),
        ),
        // A byte-order mark and CRLF endings do not shift the line numbers.
        (
            "tour-bom-crlf.tour",
            MEASURE_TRI5,
            refused("tour-bom-crlf.tour", 7),
        ),
        // No DIMENSION, so only the instance shows that node 9 (line 5) does not exist.
        (
            "tour-nodim-range.tour",
            MEASURE_TRI5,
            refused("tour-nodim-range.tour", 5),
        ),
        // No DIMENSION, three of five nodes: the whole tour is short.
        (
            "tour-short.tour",
            MEASURE_TRI5,
            refused_whole("tour-short.tour"),
        ),
        // ---- Targets CSV: wend sky plan FILE --profile profile-good.toml ----
        // The targets are about 90 degrees from the Sun for the whole horizon (the north
        // ecliptic pole, and equator points 90 degrees of right ascension either side of the
        // Sun at the start), inside the test profile's band of 30 to 150 degrees, so every one
        // is scheduled.
        ("targets-0.csv", PLAN_TARGETS, refused("targets-0.csv", 1)),
        (
            "targets-1.csv",
            PLAN_TARGETS,
            Planned {
                targets: 1,
                scheduled: 1,
            },
        ),
        (
            "targets-2.csv",
            PLAN_TARGETS,
            Planned {
                targets: 2,
                scheduled: 2,
            },
        ),
        (
            "targets-3.csv",
            PLAN_TARGETS,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "targets-crlf.csv",
            PLAN_TARGETS,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "targets-bom.csv",
            PLAN_TARGETS,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "targets-empty.csv",
            PLAN_TARGETS,
            refused_whole("targets-empty.csv"),
        ),
        (
            "targets-nan-ra.csv",
            PLAN_TARGETS,
            refused("targets-nan-ra.csv", 3),
        ),
        (
            "targets-inf-dec.csv",
            PLAN_TARGETS,
            refused("targets-inf-dec.csv", 4),
        ),
        (
            "targets-ra-360.csv",
            PLAN_TARGETS,
            refused("targets-ra-360.csv", 3),
        ),
        // A comment line first: the bad row is on line 5.
        (
            "targets-dec-91.csv",
            PLAN_TARGETS,
            refused("targets-dec-91.csv", 5),
        ),
        (
            "targets-ra-huge.csv",
            PLAN_TARGETS,
            refused("targets-ra-huge.csv", 2),
        ),
        (
            "targets-dur-neg.csv",
            PLAN_TARGETS,
            refused("targets-dur-neg.csv", 3),
        ),
        // A dwell of 1e300 s fits no window of a 14-day horizon: read, left unscheduled.
        (
            "targets-dur-huge.csv",
            PLAN_TARGETS,
            Planned {
                targets: 2,
                scheduled: 1,
            },
        ),
        (
            "targets-crlf-bad.csv",
            PLAN_TARGETS,
            refused("targets-crlf-bad.csv", 4),
        ),
        // A blank line 4; the second T-1 is on line 5.
        (
            "targets-dup.csv",
            PLAN_TARGETS,
            refused("targets-dup.csv", 5),
        ),
        // A quoted id with a line break, repeated: still one line of error.
        (
            "targets-newline-id.csv",
            PLAN_TARGETS,
            refused("targets-newline-id.csv", 5),
        ),
        (
            "targets-nul.csv",
            PLAN_TARGETS,
            refused("targets-nul.csv", 3),
        ),
        (
            "targets-binary.csv",
            PLAN_TARGETS,
            refused("targets-binary.csv", 2),
        ),
        (
            "targets-png.csv",
            PLAN_TARGETS,
            refused("targets-png.csv", 1),
        ),
        (
            "targets-fields.csv",
            PLAN_TARGETS,
            refused("targets-fields.csv", 3),
        ),
        // The optional columns: priority, proposal window, roll range. The windows hold the
        // whole 14-day horizon, so every target is still scheduled.
        (
            "targets-new-columns.csv",
            PLAN_TARGETS,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "targets-priority-0.csv",
            PLAN_TARGETS,
            refused("targets-priority-0.csv", 3),
        ),
        // A comment line first: the window that ends before it starts is on line 4.
        (
            "targets-window-reversed.csv",
            PLAN_TARGETS,
            refused("targets-window-reversed.csv", 4),
        ),
        // `roll_min_deg` without `roll_max_deg`: the header is at fault.
        (
            "targets-roll-half.csv",
            PLAN_TARGETS,
            refused("targets-roll-half.csv", 1),
        ),
        (
            "targets-roll-nan.csv",
            PLAN_TARGETS,
            refused("targets-roll-nan.csv", 2),
        ),
        // ---- Profile TOML: wend sky plan targets-3.csv --profile FILE ----
        (
            "profile-good.toml",
            PLAN_PROFILE,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "profile-crlf.toml",
            PLAN_PROFILE,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        (
            "profile-bom.toml",
            PLAN_PROFILE,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        // Missing keys concern the whole document: no line.
        (
            "profile-empty.toml",
            PLAN_PROFILE,
            refused_whole("profile-empty.toml"),
        ),
        (
            "profile-missing.toml",
            PLAN_PROFILE,
            refused_whole("profile-missing.toml"),
        ),
        (
            "profile-no-instrument.toml",
            PLAN_PROFILE,
            refused_whole("profile-no-instrument.toml"),
        ),
        (
            "profile-binary.toml",
            PLAN_PROFILE,
            refused("profile-binary.toml", 1),
        ),
        // A NUL inside the name string (line 2) is not valid TOML.
        (
            "profile-nul.toml",
            PLAN_PROFILE,
            refused("profile-nul.toml", 2),
        ),
        // `nan` and `inf` are valid TOML floats, not valid rates or times.
        (
            "profile-nan.toml",
            PLAN_PROFILE,
            refused("profile-nan.toml", 3),
        ),
        (
            "profile-crlf-bad.toml",
            PLAN_PROFILE,
            refused("profile-crlf-bad.toml", 3),
        ),
        (
            "profile-inf.toml",
            PLAN_PROFILE,
            refused("profile-inf.toml", 18),
        ),
        (
            "profile-neg.toml",
            PLAN_PROFILE,
            refused("profile-neg.toml", 4),
        ),
        (
            "profile-zero.toml",
            PLAN_PROFILE,
            refused("profile-zero.toml", 17),
        ),
        (
            "profile-zero-wheel.toml",
            PLAN_PROFILE,
            refused("profile-zero-wheel.toml", 14),
        ),
        // An acceleration of 1e-300 deg/s² (line 4): a slew would take ~1e151 s.
        (
            "profile-tiny.toml",
            PLAN_PROFILE,
            refused("profile-tiny.toml", 4),
        ),
        // A settling time of 1e300 s (line 22).
        (
            "profile-settle-huge.toml",
            PLAN_PROFILE,
            refused("profile-settle-huge.toml", 22),
        ),
        // A slew rate of 1e300 deg/s is absurd but harmless: slews are then limited by the
        // acceleration alone.
        (
            "profile-huge.toml",
            PLAN_PROFILE,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        // The optional keys, every one given.
        (
            "profile-optional.toml",
            PLAN_PROFILE,
            Planned {
                targets: 3,
                scheduled: 3,
            },
        ),
        // A start momentum of 16 N·m·s is not below 20 × 0.8 (line 19).
        (
            "profile-start-momentum.toml",
            PLAN_PROFILE,
            refused("profile-start-momentum.toml", 19),
        ),
        // One candidate roll (line 21): at least 2 are needed.
        (
            "profile-roll-steps.toml",
            PLAN_PROFILE,
            refused("profile-roll-steps.toml", 21),
        ),
        // A second instrument named "a\nb" without setup tables: refused, in one line.
        (
            "profile-newline-name.toml",
            PLAN_PROFILE,
            refused_whole("profile-newline-name.toml"),
        ),
    ]
}

/// The command line of a case: `@` is the fixture, `@name` another fixture.
fn command_line(file: &str, args: Args) -> Vec<String> {
    args.iter()
        .map(|a| match a.strip_prefix('@') {
            Some("") => fixture(file).display().to_string(),
            Some(other) => fixture(other).display().to_string(),
            None => a.to_string(),
        })
        .collect()
}

fn json_of(stdout: &[u8], what: &str) -> serde_json::Value {
    let text = String::from_utf8_lossy(stdout);
    serde_json::from_str(text.trim())
        .unwrap_or_else(|e| panic!("{what}: stdout is not one JSON object ({e}): {text}"))
}

/// Checks one case; returns a description of what went wrong, if anything.
fn check(file: &str, args: Args, expect: Expect) -> Result<(), String> {
    let argv = command_line(file, args);
    let what = format!("wend {}", argv.join(" "));
    let out = run(&argv);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    let fail = |m: String| {
        Err(format!(
            "{what}\n  {m}\n  stdout: {stdout}\n  stderr: {stderr}"
        ))
    };
    if stderr.contains("panicked") || stderr.contains("RUST_BACKTRACE") {
        return fail("panicked".into());
    }
    let Some(code) = out.status.code() else {
        return fail(format!("killed by a signal: {:?}", out.status));
    };
    match expect {
        Refused { file, line } => {
            if code != 2 {
                return fail(format!("exit code {code}, expected 2"));
            }
            let body = stderr.strip_suffix('\n').unwrap_or(&stderr);
            if body.contains('\n') || body.contains('\r') || body.is_empty() {
                return fail("stderr is not exactly one line".into());
            }
            let path = fixture(file).display().to_string();
            let Some(rest) = body.strip_prefix("wend: ") else {
                return fail("stderr does not start with `wend: `".into());
            };
            let want = match line {
                Some(l) => format!("{path}:{l}: "),
                None => format!("{path}: "),
            };
            if !rest.starts_with(&want) {
                return fail(format!("stderr does not start with `wend: {want}`"));
            }
        }
        _ if code != 0 => return fail(format!("exit code {code}, expected 0 and {expect:?}")),
        Length(want) => {
            let got = json_of(&out.stdout, &what)["length"].as_i64();
            if got != Some(want) {
                return fail(format!("length {got:?}, expected {want}"));
            }
        }
        Bound(want) => {
            let got = json_of(&out.stdout, &what)["lower_bound"].as_i64();
            if got != Some(want) {
                return fail(format!("lower bound {got:?}, expected {want}"));
            }
        }
        Measured(want) => {
            if stdout.trim() != want.to_string() {
                return fail(format!("measured {:?}, expected {want}", stdout.trim()));
            }
        }
        Planned { targets, scheduled } => {
            let j = json_of(&out.stdout, &what);
            let got = (
                j["targets"].as_u64(),
                j["scheduled"].as_u64(),
                j["unscheduled"].as_u64(),
            );
            if got != (Some(targets), Some(scheduled), Some(targets - scheduled)) {
                return fail(format!(
                    "(targets, scheduled, unscheduled) {got:?}, expected ({targets}, \
                     {scheduled}, {})",
                    targets - scheduled
                ));
            }
        }
    }
    Ok(())
}

#[test]
fn every_case_of_the_table() {
    let cases = cases();
    // Cases are independent processes: run them on a few threads, report every failure.
    let next = std::sync::atomic::AtomicUsize::new(0);
    let failures = std::sync::Mutex::new(Vec::new());
    std::thread::scope(|s| {
        for _ in 0..2 {
            s.spawn(|| loop {
                let k = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                let Some(&(file, args, expect)) = cases.get(k) else {
                    break;
                };
                if let Err(e) = check(file, args, expect) {
                    failures.lock().unwrap().push(e);
                }
            });
        }
    });
    let failures = failures.into_inner().unwrap();
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n")
    );
}

/// The fixtures' expectations rest on a few hand computations; check those against the
/// definitions too, so that a wrong table fails here rather than blaming the code.
#[test]
fn the_table_rests_on_correct_arithmetic() {
    // EUC_2D rounds to the nearest integer (TSPLIB 95 documentation, section 2.1).
    assert_eq!(euc_2d((0.0, 0.0), (3.0, 4.0)), 5);
    assert_eq!(euc_2d((0.0, 0.0), (0.0, 2.5)), 3);
    assert_eq!(euc_2d((0.0, 0.0), (0.0, 2.49)), 2);
    assert_eq!(closed_length(&N1), 0);
    // 4e18 three times exceeds i64::MAX, which is about 9.22e18.
    assert!(4_000_000_000_000_000_000i64.checked_mul(3).is_none());
    // The random fixture starts with a byte that is no start of a UTF-8 character.
    let bytes = std::fs::read(fixture("random.bin")).unwrap();
    assert_eq!(bytes.len(), 256);
    assert!((0x80..0xC0).contains(&bytes[0]));
    // The PNG fixture starts with the PNG signature (PNG specification, section 5.2).
    let png = std::fs::read(fixture("png.tsp")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    // The CRLF fixtures really have CRLF endings, and the BOM ones a byte-order mark (git must
    // not have normalised them; see .gitattributes).
    for name in [
        "crlf-n3.tsp",
        "crlf-bad.tsp",
        "tour-crlf.tour",
        "tour-bom-crlf.tour",
        "targets-crlf.csv",
        "targets-crlf-bad.csv",
        "profile-crlf.toml",
        "profile-crlf-bad.toml",
    ] {
        let text = std::fs::read(fixture(name)).unwrap();
        let lf = text.iter().filter(|&&b| b == b'\n').count();
        let crlf = text.windows(2).filter(|w| w == b"\r\n").count();
        assert!(lf > 0 && lf == crlf, "{name}: not CRLF throughout");
    }
    for name in [
        "bom-n3.tsp",
        "bom-bad.tsp",
        "tour-bom-crlf.tour",
        "targets-bom.csv",
        "targets-crlf-bad.csv",
        "profile-bom.toml",
        "profile-crlf-bad.toml",
    ] {
        let text = std::fs::read(fixture(name)).unwrap();
        assert!(
            text.starts_with(b"\xEF\xBB\xBF"),
            "{name}: no byte-order mark"
        );
    }
}

/// A CRLF copy and a byte-order-marked copy of berlin52 give exactly the same length as the
/// plain file with the same seed and budget, and never less than its published optimum 7542
/// (TSPLIB published optima, `instances/optima.txt`).
#[test]
fn crlf_and_bom_copies_of_berlin52_solve_alike() {
    let plain = instance("berlin52.tsp");
    let text = std::fs::read_to_string(&plain).unwrap();
    assert!(!text.contains('\r'));
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join(format!("bad-input-berlin52-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let crlf = dir.join("berlin52-crlf.tsp");
    let bom = dir.join("berlin52-bom.tsp");
    std::fs::write(&crlf, text.replace('\n', "\r\n")).unwrap();
    std::fs::write(&bom, format!("\u{feff}{text}")).unwrap();
    let length = |p: &PathBuf| {
        let argv: Vec<String> = [
            "solve",
            &p.display().to_string(),
            "--json",
            "--seed",
            "7",
            "--threads",
            "1",
            "--iterations",
            "30",
            "--runs",
            "1",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        let out = run(&argv);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        json_of(&out.stdout, "berlin52")["length"]
            .as_i64()
            .expect("a length")
    };
    let (a, b, c) = (length(&plain), length(&crlf), length(&bom));
    assert_eq!(
        (b, c),
        (a, a),
        "CRLF and BOM copies differ from the plain file"
    );
    // Published optimum of berlin52 (TSPLIB, instances/optima.txt).
    assert!(a >= 7542, "length {a} below the published optimum 7542");
    let _ = std::fs::remove_dir_all(&dir);
}
