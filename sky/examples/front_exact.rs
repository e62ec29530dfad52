//! Benchmark: the front search against fronts made by enumerating every plan of small pools.
//!
//! `cargo run --release -p wend-sky --example front_exact -- KIND POOLS [SECONDS]`
//!
//! - `orders`: pools of 8 targets at the nominal roll, every order (40,320) played;
//! - `rolls`: pools of 6 targets with 3 candidate rolls each (the demo profile's range split
//!   in three), every order and roll combination (720 × 729 = 524,880) played.
//!
//! Pools: random targets (seeded by the pool number) that are in the band at some time of a
//! 6-day horizon from 2027-03-01, dwells from 30 minutes to 10 hours. Every plan is played by
//! the planner's own rules (parking, dumps); the exact front is the non-dominated set of the
//! plays that schedule every target. The front search runs as `wend sky plan --front` runs it
//! (default options; SECONDS overrides its time limit) and is scored by the hypervolume ratio
//! against 1.1 × the exact front's worst values. Prints one line per pool and a summary.

use std::time::Duration;

use rand::{Rng, SeedableRng};
use wend_sky::front::{dominates, hypervolume, search_front, FrontOptions};
use wend_sky::output::{parse_utc, random_targets};
use wend_sky::plan::PlanOptions;
use wend_sky::schedule::{Context, Visit};

fn permutations(n: usize) -> Vec<Vec<usize>> {
    fn rec(k: usize, a: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if k == a.len() {
            out.push(a.clone());
            return;
        }
        for i in k..a.len() {
            a.swap(k, i);
            rec(k + 1, a, out);
            a.swap(k, i);
        }
    }
    let mut out = Vec::new();
    rec(0, &mut (0..n).collect(), &mut out);
    out
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let kind = args.get(1).map_or("orders", String::as_str);
    let pools: u64 = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(20);
    let seconds: Option<f64> = args.get(3).and_then(|s| s.parse().ok());
    let (n, rolls) = match kind {
        "orders" => (8, false),
        "rolls" => (6, true),
        _ => {
            eprintln!("usage: front_exact orders|rolls POOLS [SECONDS]");
            std::process::exit(2);
        }
    };
    let mut p = wend_sky::demo_profile();
    if !rolls {
        p.roll_range_deg = (0.0, 0.0);
    }
    p.roll_steps = 3;
    let start = parse_utc("2027-03-01").expect("a valid date");
    let days = 6.0;
    println!(
        "pool,plays,full_plays,exact_front,found_front,hypervolume_ratio,front_seconds,evaluations"
    );
    let mut good = 0;
    let mut worst: f64 = f64::INFINITY;
    for pool in 0..pools {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(pool);
        let mut targets = Vec::new();
        let mut k = 0;
        while targets.len() < n {
            k += 1;
            let mut t = random_targets(1, pool * 1000 + k, &p).remove(0);
            t.id = format!("P{}", targets.len());
            t.duration_s = rng.gen_range(1800.0..36_000.0_f64).round();
            let one = [t.clone()];
            let ctx = Context::new(&p, &one, start, days).expect("valid inputs");
            if ctx.screen().0.len() == 1 {
                targets.push(t);
            }
        }
        let ctx = Context::new(&p, &targets, start, days).expect("valid inputs");
        let counts: Vec<usize> = (0..n).map(|j| ctx.rolls(j).len()).collect();
        let combos: usize = counts.iter().product();
        let mut points = Vec::new();
        let mut plays = 0u64;
        for order in permutations(n) {
            for c in 0..combos {
                let mut c = c;
                let v: Vec<Visit> = order
                    .iter()
                    .map(|&j| {
                        let r = c % counts[j];
                        c /= counts[j];
                        Visit {
                            target: j,
                            roll: r as u8,
                        }
                    })
                    .collect();
                plays += 1;
                if let Ok(Ok(s)) = ctx.play(&v) {
                    points.push((s.elapsed_s(), s.propellant_kg));
                }
            }
        }
        let mut exact: Vec<(f64, f64)> = points
            .iter()
            .copied()
            .filter(|a| !points.iter().any(|b| dominates(*b, *a)))
            .collect();
        exact.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
        exact.dedup();
        let reference = (
            1.1 * exact.iter().map(|x| x.0).fold(0.0, f64::max),
            1.1 * exact.iter().map(|x| x.1).fold(0.0, f64::max),
        );
        let mut po = PlanOptions::new(start);
        po.horizon_days = days;
        po.seed = pool;
        let mut fo = FrontOptions::new(po);
        if let Some(s) = seconds {
            fo.time_limit = Duration::from_secs_f64(s);
        }
        let f = search_front(&p, &targets, &[], &fo, &|_| {}).expect("a front");
        let all_in = f.single.schedule.observations.len() == n;
        let ratio = if all_in {
            hypervolume(&f.archive_points, reference) / hypervolume(&exact, reference)
        } else {
            0.0
        };
        if ratio >= 0.999 {
            good += 1;
        }
        worst = worst.min(ratio);
        println!(
            "{pool},{plays},{},{},{},{ratio:.6},{:.1},{}",
            points.len(),
            exact.len(),
            f.archive_plans,
            f.seconds,
            f.evaluations
        );
    }
    println!("# {kind}: {good}/{pools} pools with hypervolume ratio >= 0.999 (lowest {worst:.6})");
}
