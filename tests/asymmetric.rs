//! Asymmetric costs and path variants: `lk` against published ATSP optima, and every path
//! variant of the heuristic against the dynamic programme's optimal path.

use proptest::prelude::*;
use wend::closed_length;
use wend::path_length;
use wend::{optimal_path, DEFAULT_DP_MEMORY};
use wend::{prove_optimal, ProveOptions};
use wend::{AsymmetricMode, Cost, Ends, MatrixCost, Solution, SolveError, Solver, StopHandle};
use wend_tests::instance;
use wend_tsplib::read_instance;

/// `lk` with a fixed kick budget (deterministic for any number of threads) on `name`.
fn lk_length(name: &str, mode: AsymmetricMode) -> i64 {
    let inst = read_instance(&instance(name)).unwrap();
    let s = Solver::new(inst.cost())
        .asymmetric_mode(mode)
        .seed(1)
        .kicks(2_000)
        .solve()
        .unwrap();
    let order = s.tour.order().to_vec();
    wend::Tour::new(order.clone(), inst.dimension).unwrap();
    assert_eq!(closed_length(inst.cost(), &order), Ok(s.length), "{name}");
    s.length
}

#[test]
fn lk_on_the_transformation_reaches_published_atsp_optima() {
    // Optimal lengths from memory of the TSPLIB list of optimal solutions (ATSP); they agree
    // with ../shared/tsplib/optima.txt.
    assert_eq!(lk_length("br17.atsp", AsymmetricMode::Transformed), 39);
    assert_eq!(lk_length("ftv33.atsp", AsymmetricMode::Transformed), 1286);
    assert_eq!(lk_length("ftv38.atsp", AsymmetricMode::Transformed), 1530);
}

#[test]
fn direct_moves_stay_above_published_atsp_optima() {
    // Same source as above: TSPLIB list of optimal solutions (ATSP), from memory; agrees with
    // ../shared/tsplib/optima.txt.
    assert!(lk_length("br17.atsp", AsymmetricMode::Direct) >= 39);
    assert!(lk_length("ftv33.atsp", AsymmetricMode::Direct) >= 1286);
    assert!(lk_length("ftv38.atsp", AsymmetricMode::Direct) >= 1530);
}

/// Random integer costs on `n` nodes: rounded Euclidean distances between random points
/// (symmetric), or independent random entries in 1..=100 (asymmetric).
fn random_costs(n: usize, seed: u64, asym: bool) -> MatrixCost {
    let mut state = seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let pts: Vec<(f64, f64)> = (0..n)
        .map(|_| ((next() % 1000) as f64, (next() % 1000) as f64))
        .collect();
    let mut rows = vec![vec![0i64; n]; n];
    for i in 0..n {
        for j in 0..n {
            if i != j {
                rows[i][j] = if asym {
                    1 + (next() % 100) as i64
                } else {
                    let (dx, dy) = (pts[i].0 - pts[j].0, pts[i].1 - pts[j].1);
                    ((dx * dx + dy * dy).sqrt() + 0.5) as i64
                };
            }
        }
    }
    MatrixCost::from_rows(&rows).unwrap()
}

/// Every variant, fixed nodes picked from `seed`.
fn variants(n: usize, seed: u64) -> Vec<Ends> {
    let s = (seed as usize) % n;
    let e = (seed as usize / 7 + 1) % n;
    vec![
        Ends::Closed,
        Ends::Open,
        Ends::Start(s),
        Ends::End(e),
        Ends::StartEnd(s, e),
        Ends::StartEnd(s, s),
    ]
}

fn heuristic(c: &MatrixCost, ends: Ends, seed: u64) -> Solution {
    Solver::new(c.clone())
        .ends(ends)
        .seed(seed)
        .kicks(60)
        .solve()
        .unwrap()
}

/// Checks `sol` against the optimum; returns whether it is optimal.
fn check(c: &MatrixCost, ends: Ends, sol: &Solution) -> bool {
    let n = c.len();
    let order = sol.tour.order().to_vec();
    let mut sorted = order.clone();
    sorted.sort_unstable();
    assert_eq!(
        sorted,
        (0..n).collect::<Vec<_>>(),
        "{ends:?}: not a permutation"
    );
    assert!(
        ends.respected_by(&order),
        "{ends:?}: ends not kept in {order:?}"
    );
    if let Ends::StartEnd(s, s2) = ends {
        if s == s2 {
            assert_eq!(order.first(), Some(&s), "closed tour from {s}");
        }
    }
    let recomputed = if ends.is_path() {
        path_length(c, &order).unwrap()
    } else {
        closed_length(c, &order).unwrap()
    };
    assert_eq!(sol.length, recomputed, "{ends:?}: reported length");
    let opt = optimal_path(c, ends, DEFAULT_DP_MEMORY, &mut || false).unwrap();
    assert!(ends.respected_by(&opt.order), "{ends:?}: optimum's ends");
    assert!(
        sol.length >= opt.length,
        "{ends:?}: heuristic {} below the optimum {}",
        sol.length,
        opt.length
    );
    sol.length == opt.length
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    // Reference: the dynamic programme over subsets (exact) on the same costs.
    #[test]
    fn every_variant_is_a_valid_path_never_below_the_optimum(
        n in 1usize..=12,
        seed in 0u64..10_000,
        asym in any::<bool>(),
    ) {
        let c = random_costs(n, seed, asym);
        for ends in variants(n, seed) {
            let sol = heuristic(&c, ends, seed);
            check(&c, ends, &sol);
        }
    }
}

#[test]
fn the_heuristic_finds_the_optimal_path_on_most_instances() {
    // Reference: the exact dynamic programme's optimal path for each variant.
    let (mut hits, mut total) = (0, 0);
    for seed in 0..20u64 {
        for asym in [false, true] {
            let n = 9 + (seed as usize % 4); // 9..=12: above the enumeration limit for paths
            let c = random_costs(n, seed, asym);
            for ends in variants(n, seed) {
                total += 1;
                hits += check(&c, ends, &heuristic(&c, ends, seed)) as usize;
            }
        }
    }
    assert!(
        hits * 100 >= total * 80,
        "optimal on {hits} of {total} (instance, variant) pairs"
    );
}

/// Shortest order with `ends` by trying every permutation (independent of the solver).
fn brute_force(c: &MatrixCost, ends: Ends) -> i64 {
    fn permute(k: usize, order: &mut Vec<usize>, visit: &mut dyn FnMut(&[usize])) {
        if k == order.len() {
            visit(order);
            return;
        }
        for i in k..order.len() {
            order.swap(k, i);
            permute(k + 1, order, visit);
            order.swap(k, i);
        }
    }
    let mut order: Vec<usize> = (0..c.len()).collect();
    let mut best = i64::MAX;
    permute(0, &mut order, &mut |o| {
        if ends.respected_by(o) {
            let l = if ends.is_path() {
                path_length(c, o).unwrap()
            } else {
                closed_length(c, o).unwrap()
            };
            best = best.min(l);
        }
    });
    best
}

#[test]
fn prove_optimal_gives_the_brute_force_optimum_of_every_variant() {
    // Reference: every permutation tried (7! = 5,040 orders).
    for seed in 0..6u64 {
        for asym in [false, true] {
            let c = random_costs(7, seed, asym);
            for ends in variants(7, seed) {
                let opts = ProveOptions {
                    ends,
                    ..Default::default()
                };
                let cert = prove_optimal(&c, &opts, &StopHandle::new()).unwrap();
                assert!(cert.proven_optimal);
                assert!(ends.respected_by(cert.tour.order()), "{ends:?}");
                assert_eq!(cert.length, brute_force(&c, ends), "{ends:?} asym {asym}");
            }
        }
    }
}

#[test]
fn degenerate_sizes_and_bad_ends() {
    let empty = MatrixCost::from_rows(&[]).unwrap();
    let s = Solver::new(empty.clone()).ends(Ends::Open).solve().unwrap();
    assert!(s.tour.is_empty());
    assert_eq!(s.length, 0);
    assert!(matches!(
        Solver::new(empty).ends(Ends::Start(0)).solve(),
        Err(SolveError::Ends(_))
    ));
    let one = MatrixCost::from_rows(&[vec![0]]).unwrap();
    let s = Solver::new(one).ends(Ends::StartEnd(0, 0)).solve().unwrap();
    assert_eq!(s.tour.order(), &[0]);
    let two = MatrixCost::from_rows(&[vec![0, 3], vec![5, 0]]).unwrap();
    let s = Solver::new(two.clone()).ends(Ends::End(0)).solve().unwrap();
    assert_eq!((s.tour.order(), s.length), (&[1, 0][..], 5));
    let s = Solver::new(two.clone()).ends(Ends::Open).solve().unwrap();
    assert_eq!(s.length, 3);
    let e = Solver::new(two.clone())
        .ends(Ends::StartEnd(1, 2))
        .solve()
        .unwrap_err();
    assert!(e.to_string().contains("end node 2"), "{e}");
    assert!(optimal_path(&two, Ends::Start(7), DEFAULT_DP_MEMORY, &mut || false).is_err());
}

/// Not a check: the measurement behind the default [`AsymmetricMode`]. Runs `lk` in both modes
/// on the ATSP instances of `../shared/tsplib/atsp` for `WEND_ATSP_SECONDS` seconds (default
/// 10) and seeds `0..WEND_ATSP_SEEDS` (default 5), one line per run on stdout:
/// `cargo test --release -p wend-tests --test asymmetric -- --ignored --nocapture`.
#[test]
#[ignore]
fn measure_asymmetric_modes() {
    let dir = wend_tests::instances_dir().join("../../shared/tsplib/atsp");
    let secs: f64 = std::env::var("WEND_ATSP_SECONDS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(10.0);
    let seeds: u64 = std::env::var("WEND_ATSP_SEEDS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(5);
    for name in [
        "br17", "ft53", "ftv33", "ftv38", "ftv47", "ftv55", "kro124p",
    ] {
        let path = dir.join(format!("{name}.atsp"));
        let Ok(inst) = read_instance(&path) else {
            println!("{name}: not found at {}", path.display());
            continue;
        };
        for seed in 0..seeds {
            for mode in [AsymmetricMode::Transformed, AsymmetricMode::Direct] {
                let s = Solver::new(inst.cost())
                    .asymmetric_mode(mode)
                    .seed(seed)
                    .time_limit(std::time::Duration::from_secs_f64(secs))
                    .solve()
                    .unwrap();
                println!(
                    "RUN {name} {mode:?} seed {seed} length {} kicks {} runs {}",
                    s.length, s.iterations, s.runs
                );
            }
        }
    }
}
