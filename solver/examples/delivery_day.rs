//! A delivery day: one van leaves the depot at 8:00, serves customers inside their delivery
//! windows, picks up a parcel at a shop before dropping it at a customer, and may skip a
//! low-priority stop at a price. Travel times are in minutes from invented coordinates
//! (one unit of distance is one minute of driving).
//!
//! Run with `cargo run --release -p wend --example delivery_day`.

use wend::constraints::{Constraints, Precedence, Window, solve_sequence};
use wend::{FnCost, Hooks, Settings};

/// Minutes after midnight.
fn at(hours: i64, minutes: i64) -> i64 {
    hours * 60 + minutes
}

fn clock(t: i64) -> String {
    format!("{:02}:{:02}", t / 60, t % 60)
}

/// Name, position (minutes east, minutes north), delivery window, minutes on site.
type Stop = (&'static str, (f64, f64), Option<(i64, i64)>, i64);

fn main() {
    let stops: [Stop; 9] = [
        ("depot", (0.0, 0.0), None, 0),
        (
            "bakery (pick-up)",
            (12.0, 5.0),
            Some((at(8, 0), at(9, 30))),
            5,
        ),
        (
            "Linden Street 4",
            (25.0, 18.0),
            Some((at(9, 0), at(10, 0))),
            8,
        ),
        (
            "Harbour Office",
            (-14.0, 22.0),
            Some((at(10, 30), at(11, 30))),
            10,
        ),
        ("Mill Lane 17 (drop-off)", (30.0, -6.0), None, 6),
        (
            "School kitchen",
            (-20.0, -8.0),
            Some((at(11, 30), at(12, 15))),
            12,
        ),
        (
            "Orchard Farm",
            (40.0, 30.0),
            Some((at(8, 30), at(13, 0))),
            7,
        ),
        ("Clinic", (5.0, 28.0), Some((at(9, 45), at(10, 45))), 5),
        ("Garden centre (optional)", (-35.0, 35.0), None, 15),
    ];
    let n = stops.len();
    let points: Vec<(f64, f64)> = stops.iter().map(|s| s.1).collect();
    let cost = FnCost::new(n, true, move |i, j| {
        let (a, b) = (points[i], points[j]);
        ((a.0 - b.0).hypot(a.1 - b.1)).round() as i64
    });
    let mut c = Constraints::new(n);
    for (s, stop) in stops.iter().enumerate() {
        if let Some((earliest, latest)) = stop.2 {
            c.windows[s] = vec![Window { earliest, latest }];
        }
        c.service[s] = stop.3;
    }
    // Back at the depot by 14:00.
    c.windows[0] = vec![Window {
        earliest: at(8, 0),
        latest: at(14, 0),
    }];
    c.start_time = at(8, 0);
    // The parcel is picked up at the bakery before it is dropped at Mill Lane.
    c.precedence.push(Precedence {
        before: 1,
        after: 4,
        min_lag: None,
        max_lag: None,
    });
    // The garden centre may be left out at a price of 60 minutes of driving.
    c.penalty[8] = Some(60);

    let settings = Settings {
        seed: 1,
        time_limit: Some(2.0),
        ..Default::default()
    };
    let out = match solve_sequence(&cost, &c, &settings, None, Hooks::default()) {
        Ok(out) => out,
        Err(e) => {
            eprintln!("delivery_day: {e}");
            std::process::exit(2);
        }
    };
    if !out.feasible {
        println!("No order meets every window; what the best order breaks:");
        for v in &out.evaluation.violations {
            println!("  {v}");
        }
        std::process::exit(3);
    }
    println!("stop                       arrive  start  leave  slack");
    for row in &out.evaluation.rows {
        println!(
            "{:<26} {:>6} {:>6} {:>6} {:>6}",
            stops[row.stop].0,
            clock(row.arrival),
            clock(row.start),
            clock(row.departure),
            row.slack.map_or("-".into(), |s| format!("{s} min")),
        );
    }
    println!(
        "back at the depot {}; driving {} min, waiting {} min",
        clock(out.evaluation.completion_time),
        out.evaluation.travel_cost,
        out.evaluation.wait
    );
    for &s in &out.evaluation.skipped {
        println!(
            "left out: {} (penalty {})",
            stops[s].0,
            c.penalty[s].unwrap_or(0)
        );
    }
}
