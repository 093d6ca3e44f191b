//! Speed of the level model: building the coefficient matrices once, and
//! evaluating levels (Σ P·C per block, then diagonalisation) as a fit does on
//! every iteration. `cargo bench --bench structure`.
//!
//! Models: all levels of 3d⁵ (252 determinants); 3d⁴4s + 3d³4s² + 3d⁴4p with
//! configuration interaction between the even pair (hundreds of levels); 4f³.

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, criterion_group, criterion_main};
use nalgebra::SymmetricEigen;
use termsight::notation::Configuration;
use termsight::structure::LevelStructure;

mod common;
use common::values;

fn model(name: &str) -> (Vec<Configuration>, Vec<(usize, usize)>) {
    let (labels, interactions): (&[&str], Vec<(usize, usize)>) = match name {
        "3d5" => (&["3d5"], vec![]),
        "3d4.4s+3d3.4s2+3d4.4p" => (&["3d4.4s", "3d3.4s2", "3d4.4p"], vec![(0, 1)]),
        "4f3" => (&["4f3"], vec![]),
        _ => unreachable!(),
    };
    (
        labels.iter().map(|l| l.parse().unwrap()).collect(),
        interactions,
    )
}

fn benches(c: &mut Criterion) {
    for name in ["3d5", "3d4.4s+3d3.4s2+3d4.4p", "4f3"] {
        let (configs, interactions) = model(name);
        // The first build also fills the process-wide 3j/6j/Clebsch–Gordan memo.
        let start = std::time::Instant::now();
        let structure = LevelStructure::build(&configs, &interactions).unwrap();
        let first_build = start.elapsed();
        let v = values(&structure);
        let levels = structure.levels(&v).unwrap();
        let largest = structure
            .blocks()
            .iter()
            .flat_map(|b| b.j_blocks.iter().map(|j| j.states.len()))
            .max()
            .unwrap_or(0);
        eprintln!(
            "{name}: {} levels, {} parameters, largest J block {largest}, first build {:.1} ms",
            levels.len(),
            structure.parameters().len(),
            first_build.as_secs_f64() * 1e3
        );
        let mut group = c.benchmark_group(name);
        group.sample_size(10);
        group.warm_up_time(Duration::from_millis(500));
        group.measurement_time(Duration::from_secs(3));
        group.bench_function("build", |b| {
            b.iter(|| LevelStructure::build(black_box(&configs), &interactions).unwrap())
        });
        group.bench_function("levels", |b| {
            b.iter(|| structure.levels(black_box(&v)).unwrap())
        });
        group.bench_function("assemble", |b| {
            b.iter(|| {
                for block in structure.blocks() {
                    for j in &block.j_blocks {
                        black_box(j.hamiltonian(black_box(&v)));
                    }
                }
            })
        });
        let matrices: Vec<_> = structure
            .blocks()
            .iter()
            .flat_map(|b| b.j_blocks.iter().map(|j| j.hamiltonian(&v)))
            .collect();
        group.bench_function("diagonalise", |b| {
            b.iter(|| {
                for h in &matrices {
                    black_box(SymmetricEigen::new(h.clone()));
                }
            })
        });
        group.finish();
    }
}

criterion_group!(structure, benches);
criterion_main!(structure);
