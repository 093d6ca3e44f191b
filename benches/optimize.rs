//! Level optimisation of a synthetic spectrum of 3,000 levels and 20,000 lines.
//!
//! The spectrum: levels of both parities with J = 0 … 4 spread over 0–100 000 cm⁻¹;
//! each line joins levels of opposite parity with |ΔJ| ≤ 1 (E1), every level taking
//! part in several lines, as in a well-studied spectrum of a complex ion.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::levels::optimize::{LineConstraint, OptimizeProblem, optimize_levels};

fn synthetic_spectrum(level_count: usize, line_count: usize, seed: u64) -> OptimizeProblem {
    let mut rng = StdRng::seed_from_u64(seed);
    let energies: Vec<f64> = (0..level_count)
        .map(|i| {
            if i == 0 {
                0.0
            } else {
                rng.random_range(1_000.0..100_000.0)
            }
        })
        .collect();
    let parity: Vec<bool> = (0..level_count).map(|i| i % 2 == 1).collect();
    let twice_j: Vec<i32> = (0..level_count)
        .map(|_| 2 * rng.random_range(0..5))
        .collect();
    let mut lines = Vec::with_capacity(line_count);
    // First a chain so the graph is connected, then random E1 pairs.
    while lines.len() < line_count {
        let a = if lines.len() + 1 < level_count {
            lines.len() + 1
        } else {
            rng.random_range(0..level_count)
        };
        let b = rng.random_range(0..level_count);
        let chain = lines.len() + 1 < level_count;
        if a == b || (!chain && (parity[a] == parity[b] || (twice_j[a] - twice_j[b]).abs() > 2)) {
            continue;
        }
        let (lower, upper) = if energies[a] < energies[b] {
            (a, b)
        } else {
            (b, a)
        };
        let u = rng.random_range(0.002..0.02);
        lines.push(LineConstraint {
            lower,
            upper,
            wavenumber_cm1: energies[upper] - energies[lower] + rng.random_range(-u..u),
            uncertainty_cm1: u,
        });
    }
    OptimizeProblem::new(energies.into_iter().map(Some).collect(), lines)
}

fn bench(c: &mut Criterion) {
    let mut group = c.benchmark_group("level_optimisation");
    group.sample_size(10);
    for (levels, lines) in [(300, 2_000), (1_000, 7_000), (3_000, 20_000)] {
        let problem = synthetic_spectrum(levels, lines, 7);
        group.bench_function(format!("{levels}_levels_{lines}_lines"), |b| {
            b.iter(|| optimize_levels(black_box(&problem)).unwrap())
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
