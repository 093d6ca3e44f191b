//! Self-consistent fields of the speed goal (well under a second each):
//! Hartree–Fock for neutral argon and for the 3d⁶4s² configuration of iron, and,
//! for comparison, the local-exchange field alone and the Slater integrals of one
//! orbital pair.
//!
//! `cargo bench --bench radial`. The iteration counts are printed once before the
//! timings.

use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

use termsight::notation::Configuration;
use termsight::radial::slater::{fk_integral, gk_integral};
use termsight::radial::{ScfOptions, Silent, hartree_fock, local_exchange};

const CASES: [(&str, u32, &str); 2] = [
    ("Ar 3p6", 18, "1s2 2s2 2p6 3s2 3p6"),
    ("Fe 3d6.4s2", 26, "1s2 2s2 2p6 3s2 3p6 3d6 4s2"),
];

fn self_consistent_fields(c: &mut Criterion) {
    let options = ScfOptions::default();
    let mut group = c.benchmark_group("hartree_fock");
    group.sample_size(10);
    for (name, z, config) in CASES {
        let config: Configuration = config.parse().unwrap();
        let mut local_iterations = 0;
        let solution = hartree_fock(
            z,
            &config,
            &options,
            &mut |p: &termsight::radial::ScfProgress| {
                if p.stage == termsight::radial::ScfStage::LocalExchange {
                    local_iterations = p.iteration;
                }
            },
        )
        .unwrap();
        println!(
            "{name}: {local_iterations} local-exchange + {} Hartree–Fock iterations, \
             E = {:.9} hartree, {} grid points",
            solution.iterations,
            solution.energy.total_hartree,
            solution.grid.len()
        );
        group.bench_function(name, |b| {
            b.iter(|| hartree_fock(z, black_box(&config), &options, &mut Silent).unwrap())
        });
    }
    group.finish();

    let mut group = c.benchmark_group("local_exchange");
    group.sample_size(10);
    for (name, z, config) in CASES {
        let config: Configuration = config.parse().unwrap();
        group.bench_function(name, |b| {
            b.iter(|| local_exchange(z, black_box(&config), &options, &mut Silent).unwrap())
        });
    }
    group.finish();
}

fn slater_integrals(c: &mut Criterion) {
    let config: Configuration = CASES[1].2.parse().unwrap();
    let fe = hartree_fock(26, &config, &ScfOptions::default(), &mut Silent).unwrap();
    let (d, s) = (&fe.orbitals[5].p, &fe.orbitals[6].p);
    c.bench_function("slater/F2(3d,3d)+G2(3d,4s)", |b| {
        b.iter(|| {
            fk_integral(&fe.grid, 2, black_box(d), d) + gk_integral(&fe.grid, 2, black_box(d), s)
        })
    });
}

criterion_group!(benches, self_consistent_fields, slater_integrals);
criterion_main!(benches);
