//! Speed of the parametric fit. `cargo bench --bench fit`.
//!
//! Cases:
//! - "he-1snl": the example model `examples/level-models/he-1snl-fit.toml` (28 free
//!   parameters) against the compiled He I table (34 matched levels).
//! - "ti-like-300": a many-configuration model of a Ti I-like ion, 3d²4s² + 3d³4s +
//!   3d⁴ + 3d³5s (even) and 3d²4s4p + 3d³4p (odd) with configuration interaction,
//!   30 free parameters (F⁴ tied to F² in each configuration, most ζ(3d) tied
//!   together), fitted to the lowest 300 of its 319 levels: levels computed at invented
//!   "true" values, labelled by their leading component, moved by seeded noise of
//!   ±2 cm⁻¹; the fit starts from the true values moved by up to ±3 %. Invented
//!   data of realistic size, for timing only.
//!
//! Besides criterion's medians, one fit of each case is timed alone and its peak
//! resident memory is read (VmHWM of /proc/self/status, reset through
//! /proc/self/clear_refs; Linux only).

use std::hint::black_box;
use std::io::Write;
use std::time::{Duration, Instant};

use criterion::{Criterion, criterion_group, criterion_main};
use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::fit::{FitOptions, fit_levels};
use termsight::levels::{self, embedded_table};
use termsight::structure::model::{LoadedModel, Vary, parse_model};

const TI_LIKE: &str = include_str!("../tests/data/ti-like-model.toml");

/// The Ti-like case: the starting model and 300 synthetic levels.
fn ti_like() -> (LoadedModel, Vec<levels::Level>) {
    let mut loaded = parse_model(TI_LIKE, "ti-like.toml").unwrap();
    let values = loaded.model.values_for(&loaded.structure);
    let computed = loaded.structure.levels(&values).unwrap();
    let mut random = StdRng::seed_from_u64(20_261_202);
    // Keep the lowest 300 (the highest levels of a spectrum are the ones an
    // analysis lacks).
    let table: Vec<levels::Level> = computed
        .iter()
        .take(300)
        .map(|l| {
            let lead = loaded
                .structure
                .state_label(l.block, l.composition[0].state);
            levels::Level {
                species: loaded.model.species,
                label: format!("{lead} {}", l.j).parse().unwrap(),
                energy_cm1: l.energy_cm1 + 2.0 * random.random_range(-1.0..1.0),
                uncertainty_cm1: 0.5,
                source: "invented".into(),
                energy_status: Default::default(),
            }
        })
        .collect();
    for p in &mut loaded.model.parameters {
        if matches!(p.vary, Vary::Free) {
            p.value *= 1.0 + 0.03 * random.random_range(-1.0..1.0);
        }
    }
    // Tied values follow their leaders.
    let snapshot = loaded.model.parameters.clone();
    for p in &mut loaded.model.parameters {
        if let Vary::Tied { to, ratio } = p.vary {
            let leader = snapshot.iter().find(|q| q.id == to).unwrap();
            p.value = ratio * leader.value;
        }
    }
    (loaded, table)
}

fn he_example() -> (LoadedModel, Vec<levels::Level>) {
    let text = include_str!("../examples/level-models/he-1snl-fit.toml");
    let loaded = parse_model(text, "he-1snl-fit.toml").unwrap();
    let table = embedded_table("He I".parse().unwrap())
        .unwrap()
        .load()
        .unwrap();
    (loaded, table.levels)
}

fn peak_rss_mib() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}

fn reset_peak_rss() {
    if let Ok(mut f) = std::fs::OpenOptions::new()
        .write(true)
        .open("/proc/self/clear_refs")
    {
        let _ = f.write_all(b"5");
    }
}

fn benches(c: &mut Criterion) {
    for (name, (loaded, table)) in [("he-1snl", he_example()), ("ti-like-300", ti_like())] {
        let options = FitOptions::default();
        reset_peak_rss();
        let before = peak_rss_mib();
        let start = Instant::now();
        let result =
            fit_levels(&loaded.model, &loaded.structure, &table, &options, |_| {}).unwrap();
        let elapsed = start.elapsed();
        let peak = peak_rss_mib();
        eprintln!(
            "{name}: {} free parameters, {} levels matched of {}, {} iterations, {} evaluations, \
             σ = {:.3} cm⁻¹, {:?}; one fit {:.1} ms; peak resident memory {} MiB (before: {} MiB)",
            result.free_parameters,
            result.levels.len(),
            table.len(),
            result.iterations,
            result.evaluations,
            result.sigma_cm1.unwrap_or(0.0),
            result.convergence,
            elapsed.as_secs_f64() * 1e3,
            peak.map_or("?".into(), |v| format!("{v:.1}")),
            before.map_or("?".into(), |v| format!("{v:.1}")),
        );
        let mut group = c.benchmark_group(name);
        group.sample_size(10);
        group.warm_up_time(Duration::from_millis(500));
        group.measurement_time(Duration::from_secs(3));
        group.bench_function("fit", |b| {
            b.iter(|| {
                fit_levels(
                    black_box(&loaded.model),
                    &loaded.structure,
                    black_box(&table),
                    &options,
                    |_| {},
                )
                .unwrap()
            })
        });
        let values = loaded.model.values_for(&loaded.structure);
        group.bench_function("one evaluation of the levels", |b| {
            b.iter(|| loaded.structure.levels(black_box(&values)).unwrap())
        });
        group.finish();
    }
}

criterion_group!(fit, benches);
criterion_main!(fit);
