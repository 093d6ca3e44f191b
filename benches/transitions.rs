//! Speed of the predicted spectrum: building the dipole operator between two
//! configuration groups, against building the level structure it joins, and
//! evaluating every line. `cargo bench --bench transitions`.
//!
//! Models: 3d⁴4s + 3d³4s² (with configuration interaction) against 3d⁴4p, and
//! against 3d⁴4p + 3d³4s4p; then 3d⁴4s + 3d³4s² + 3d⁴4d against 3d⁴4p + 3d³4s4p
//! (hundreds of levels on each side).

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, criterion_group, criterion_main};
use termsight::notation::Configuration;
use termsight::structure::LevelStructure;

mod common;
use common::values;
use termsight::transitions::{DipoleOperator, model_spectrum};

fn model(name: &str) -> (Vec<Configuration>, Vec<(usize, usize)>) {
    let labels: &[&str] = match name {
        "3d4.4s+3d3.4s2 – 3d4.4p" => &["3d4.4s", "3d3.4s2", "3d4.4p"],
        "3d4.4s+3d3.4s2 – 3d4.4p+3d3.4s.4p" => &["3d4.4s", "3d3.4s2", "3d4.4p", "3d3.4s.4p"],
        "3d4.4s+3d3.4s2+3d4.4d – 3d4.4p+3d3.4s.4p" => {
            &["3d4.4s", "3d3.4s2", "3d4.4d", "3d4.4p", "3d3.4s.4p"]
        }
        _ => unreachable!(),
    };
    (
        labels.iter().map(|l| l.parse().unwrap()).collect(),
        vec![(0, 1)],
    )
}

fn benches(c: &mut Criterion) {
    for name in [
        "3d4.4s+3d3.4s2 – 3d4.4p",
        "3d4.4s+3d3.4s2 – 3d4.4p+3d3.4s.4p",
        "3d4.4s+3d3.4s2+3d4.4d – 3d4.4p+3d3.4s.4p",
    ] {
        let (configs, interactions) = model(name);
        let structure = LevelStructure::build(&configs, &interactions).unwrap();
        let v = values(&structure);
        let operator = DipoleOperator::build(&structure).unwrap();
        let dipole: Vec<f64> = operator
            .integrals()
            .iter()
            .enumerate()
            .map(|(i, _)| 1.5 + i as f64)
            .collect();
        let spectrum = model_spectrum(&structure, &operator, &v, &dipole).unwrap();
        let count = |parity| {
            spectrum
                .levels
                .iter()
                .filter(|l| l.level.parity == parity)
                .count()
        };
        eprintln!(
            "{name}: {} even and {} odd levels, {} lines, {} dipole integrals",
            count(termsight::notation::Parity::Even),
            count(termsight::notation::Parity::Odd),
            spectrum.lines.len(),
            operator.integrals().len()
        );
        let mut group = c.benchmark_group(name);
        group.sample_size(10);
        group.warm_up_time(Duration::from_millis(500));
        group.measurement_time(Duration::from_secs(4));
        group.bench_function("structure build", |b| {
            b.iter(|| LevelStructure::build(black_box(&configs), &interactions).unwrap())
        });
        group.bench_function("dipole build", |b| {
            b.iter(|| DipoleOperator::build(black_box(&structure)).unwrap())
        });
        group.bench_function("levels", |b| {
            b.iter(|| structure.levels(black_box(&v)).unwrap())
        });
        group.bench_function("spectrum (levels + lines)", |b| {
            b.iter(|| model_spectrum(&structure, &operator, black_box(&v), &dipole).unwrap())
        });
        group.finish();
    }
}

criterion_group!(transitions, benches);
criterion_main!(transitions);
