//! Reading speed of the line-list reader: 1,000,000 generated rows (seeded), as CSV
//! with air wavelengths in increasing order, as a spectrometer gives them (the
//! air→vacuum iteration on every row), and as whitespace columns of wavenumbers in
//! random order (the full sort). Run with `cargo bench --bench linelist`.

use std::fmt::Write;
use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::linelist::{ReadOptions, read_line_list};

const ROWS: usize = 1_000_000;

/// A demo scan: air wavelengths 200–1000 nm in increasing order, with uncertainties,
/// intensities and a note column, in CSV.
fn csv_air_wavelengths(rows: usize) -> String {
    let mut rng = StdRng::seed_from_u64(2024);
    let mut text =
        String::from("# generated demo scan\nwavelength_nm,uncertainty_nm,intensity,note\n");
    for i in 0..rows {
        // Steps of 0.0004–0.0012 nm: strictly increasing at the 5 decimals printed.
        let lambda = 200.0 + 800.0 * (i as f64 + 0.5 * rng.random::<f64>()) / rows as f64;
        let u = 0.0005 + 0.005 * rng.random::<f64>();
        let intensity = (rng.random::<f64>() * 10_000.0).round();
        let _ = writeln!(text, "{lambda:.5},{u:.4},{intensity},peak{i}");
    }
    text
}

/// Wavenumbers in random order as whitespace columns, with a global uncertainty.
fn whitespace_wavenumbers(rows: usize) -> String {
    let mut rng = StdRng::seed_from_u64(7);
    let mut text = String::from("wavenumber_cm1   intensity\n");
    for _ in 0..rows {
        let sigma = 10_000.0 + 40_000.0 * rng.random::<f64>();
        let intensity = (rng.random::<f64>() * 10_000.0).round();
        let _ = writeln!(text, "{sigma:.4}   {intensity}");
    }
    text
}

fn bench_read(c: &mut Criterion) {
    let mut group = c.benchmark_group("read_line_list");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(10));
    group.throughput(Throughput::Elements(ROWS as u64));

    let csv = csv_air_wavelengths(ROWS);
    group.bench_function("csv_air_wavelengths_sorted_1M_rows", |b| {
        b.iter(|| {
            let list = read_line_list(csv.as_bytes(), "bench.csv", &ReadOptions::default())
                .expect("generated rows are valid");
            black_box(list.lines.len())
        })
    });

    let spaced = whitespace_wavenumbers(ROWS);
    let options = ReadOptions {
        uncertainty: Some("0.02cm-1".parse().expect("a valid uncertainty")),
        ..ReadOptions::default()
    };
    group.bench_function("whitespace_wavenumbers_random_1M_rows", |b| {
        b.iter(|| {
            let list = read_line_list(spaced.as_bytes(), "bench.txt", &options)
                .expect("generated rows are valid");
            black_box(list.lines.len())
        })
    });
    group.finish();
    println!(
        "input sizes: CSV {:.1} MB, whitespace {:.1} MB",
        csv.len() as f64 / 1e6,
        spaced.len() as f64 / 1e6
    );
}

criterion_group!(benches, bench_read);
criterion_main!(benches);
