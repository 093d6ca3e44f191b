//! Criterion benchmarks of the assign path: Ritz predictions from a compiled table,
//! and matching at several sizes. (`benches/assign_million.rs` gives the figures at
//! a million lines with peak memory.)

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};

use termsight::assign::{MatchConfig, assign_lines};
use termsight::levels::{EMBEDDED_TABLES, Predictions, predict_from_table};
use termsight::linelist::{GivenPosition, ObservedLine};

fn compiled() -> Predictions {
    let sets = EMBEDDED_TABLES
        .iter()
        .map(|t| predict_from_table(&t.load().unwrap()).unwrap());
    Predictions::combine(sets).unwrap()
}

fn ritz(c: &mut Criterion) {
    let neon = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == "Ne I")
        .unwrap();
    let table = neon.load().unwrap();
    c.bench_function("ritz/Ne I table (223 levels)", |b| {
        b.iter(|| predict_from_table(&table).unwrap())
    });
    c.bench_function("ritz/all six compiled tables, read and predicted", |b| {
        b.iter(compiled)
    });
}

fn matching(c: &mut Criterion) {
    let predictions = compiled();
    let mut group = c.benchmark_group("assign/against all compiled tables");
    for n in [1_000usize, 10_000, 100_000] {
        // Observed lines spread over 11 000–27 000 cm⁻¹ (370–900 nm), 0.1 cm⁻¹ each.
        let lines: Vec<ObservedLine> = (0..n)
            .map(|i| {
                let sigma = 11_000.0 + 16_000.0 * (i as f64 + 0.5) / n as f64;
                ObservedLine {
                    row: i + 1,
                    source_line: i + 2,
                    given: GivenPosition::Wavenumber { value: sigma },
                    wavenumber_cm1: sigma,
                    uncertainty_cm1: 0.1,
                    intensity: None,
                    extra: vec![],
                }
            })
            .collect();
        group.bench_with_input(BenchmarkId::from_parameter(n), &lines, |b, lines| {
            b.iter(|| assign_lines(lines, &predictions, &MatchConfig::default()))
        });
    }
    group.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(10);
    targets = ritz, matching
}
criterion_main!(benches);
