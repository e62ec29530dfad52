use std::time::{Duration, Instant};
use wend_sky::output::{parse_utc, random_targets};
use wend_sky::plan::{plan, PlanOptions};
use wend_sky::schedule::Context;
fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: usize = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(0);
    let days: f64 = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(30.0);
    let secs: f64 = args.get(3).and_then(|s| s.parse().ok()).unwrap_or(5.0);
    let mut p = wend_sky::demo_profile();
    if let Ok(r) = std::env::var("RCP") { let v: Vec<f64> = r.split(',').map(|x| x.parse().unwrap()).collect(); p.pressure_offset_m = [v[0], v[1], v[2]]; }
    if let Ok(r) = std::env::var("ROLL") { let x: f64 = r.parse().unwrap(); p.roll_range_deg = (-x, x); }
    let targets = if n == 0 { wend_sky::read_targets(std::path::Path::new(&std::env::var("TARGETS").unwrap()), &p).unwrap() } else { random_targets(n, 1, &p) };
    let start = parse_utc("2027-03-01").unwrap();
    let ctx = Context::new(&p, &targets, start, days).unwrap();
    let (c, s) = ctx.screen();
    println!("targets {} candidates {} screened {}", targets.len(), c.len(), s.len());
    let t = Instant::now();
    let mut o = PlanOptions::new(start);
    o.horizon_days = days;
    o.time_limit = Some(Duration::from_secs_f64(secs));
    let pl = plan(&p, &targets, &[], &o).unwrap();
    let sc = &pl.schedule;
    println!("plan {:.2}s scheduled {} elapsed {:.2} d busy {:.2} h wait {:.2} d dumps {} kg {:.4} peak {:.2} core_feasible {} core_point {:?} plays {}",
        t.elapsed().as_secs_f64(), sc.observations.len(), sc.elapsed_s()/86400.0, sc.busy_s/3600.0, sc.wait_s/86400.0, sc.dumps, sc.propellant_kg, sc.peak_momentum_nms, pl.core_feasible, pl.core_point, pl.polish_plays);
    let b = &pl.baseline;
    println!("baseline scheduled {} elapsed {:.2} d dumps {} kg {:.4}", b.observations.len(), b.elapsed_s()/86400.0, b.dumps, b.propellant_kg);
    let idle: Vec<_> = sc.observations.iter().map(|o| o.idle.code()).collect();
    let mut counts = std::collections::BTreeMap::new();
    for i in idle { *counts.entry(i).or_insert(0) += 1; }
    println!("idle {:?}", counts);
    let mut reasons = std::collections::BTreeMap::new();
    for u in &sc.unscheduled { *reasons.entry(u.reason.code()).or_insert(0) += 1; }
    println!("reasons {:?}", reasons);
}
