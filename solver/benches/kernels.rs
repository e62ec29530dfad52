//! Criterion benchmarks of the building blocks on random uniform instances.
//! Run with `cargo bench -p wend --features internals --bench kernels`.

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use rand::{Rng, SeedableRng};
use wend::internals::greedy_edge;
use wend::internals::k_nearest;
use wend::internals::{ArrayTour, two_opt_or_opt};
use wend::{CoordCost, Cost, MatrixCost, Metric};
use wend::{DEFAULT_DP_MEMORY, dynamic_programme};

fn uniform(n: usize, seed: u64) -> CoordCost {
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    let pts: Vec<[f64; 2]> = (0..n)
        .map(|_| [rng.gen_range(0.0..1.0e6), rng.gen_range(0.0..1.0e6)])
        .collect();
    CoordCost::plane(Metric::Euc2d, &pts).expect("finite points")
}

/// The hot kernels: one distance evaluation, one 2-opt move evaluation, and neighbour lists for
/// 100,000 points.
fn kernels(c: &mut Criterion) {
    let mut group = c.benchmark_group("kernel");
    let cost = uniform(100_000, 3);
    let mut rng = rand_pcg::Pcg64::seed_from_u64(4);
    let pairs: Vec<(usize, usize)> = (0..4096)
        .map(|_| (rng.gen_range(0..100_000), rng.gen_range(0..100_000)))
        .collect();
    group.bench_function("euc_2d_distance_x4096", |b| {
        b.iter(|| pairs.iter().map(|&(i, j)| cost.cost(i, j)).sum::<i64>())
    });
    let tour = ArrayTour::new((0..100_000).collect());
    group.bench_function("two_opt_move_gain_x4096", |b| {
        b.iter(|| {
            pairs
                .iter()
                .map(|&(a, c)| {
                    let (bn, d) = (tour.next(a), tour.next(c));
                    cost.cost(a, bn) + cost.cost(c, d) - cost.cost(a, c) - cost.cost(bn, d)
                })
                .max()
        })
    });
    group.sample_size(10);
    group.bench_function("k_nearest_10_of_100000", |b| {
        b.iter(|| k_nearest(&cost, 10))
    });
    group.finish();
}

fn bench(c: &mut Criterion) {
    let mut group = c.benchmark_group("uniform");
    group.sample_size(10);
    for n in [1_000usize, 10_000] {
        let cost = uniform(n, 1);
        group.bench_with_input(BenchmarkId::new("k_nearest_10", n), &n, |b, _| {
            b.iter(|| k_nearest(&cost, 10))
        });
        let nb = k_nearest(&cost, 10);
        let mut rng = rand_pcg::Pcg64::seed_from_u64(2);
        group.bench_with_input(BenchmarkId::new("greedy_edge", n), &n, |b, _| {
            b.iter(|| greedy_edge(&cost, &nb, 0.0, &mut rng))
        });
        let start = greedy_edge(&cost, &nb, 0.0, &mut rng);
        group.bench_with_input(
            BenchmarkId::new("two_opt_or_opt_from_greedy", n),
            &n,
            |b, _| {
                b.iter(|| {
                    let mut t = ArrayTour::new(start.clone());
                    two_opt_or_opt(&cost, &nb, &mut t, &mut || false)
                })
            },
        );
    }
    group.finish();
}

/// The exact dynamic programme on random asymmetric integer costs (uniform in 1..1000) of 20
/// and 24 nodes, on all cores.
fn exact(c: &mut Criterion) {
    let mut group = c.benchmark_group("dynamic_programme");
    group.sample_size(10);
    for n in [20usize, 24] {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(n as u64);
        let rows: Vec<Vec<i64>> = (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| if i == j { 0 } else { rng.gen_range(1..1000) })
                    .collect()
            })
            .collect();
        let cost = MatrixCost::from_rows(&rows).expect("a square matrix");
        group.bench_with_input(BenchmarkId::new("asymmetric", n), &n, |b, _| {
            b.iter(|| dynamic_programme(&cost, DEFAULT_DP_MEMORY, &mut || false).expect("fits"))
        });
    }
    group.finish();
}

criterion_group!(benches, kernels, bench, exact);
criterion_main!(benches);
