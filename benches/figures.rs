//! SVG generation of the figures that can get 10⁵ lines: the stick spectrum (10⁵
//! observed lines, each assigned, and 10⁵ predicted), the observed − Ritz residuals
//! (10⁵ lines) and the level-model spectrum (10⁵ lines); 10³ and 10⁴ for the trend.
//!
//! `cargo bench --bench figures`. Prints, per figure and size, the median time of
//! `REPEATS` runs, the size of the SVG and whether the figure says it binned. Invented
//! data, seeded: positions uniform over 15 000–25 000 cm⁻¹ (400–667 nm), intensities
//! and gf log-uniform over four decades, residuals normal.

use std::time::{Duration, Instant};

use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::{Distribution, Normal};
use termsight::report::figures::{
    AssignedStick, ModelSpectrumFigure, ModelStick, ObservedStick, PredictedStick, RitzResidual,
    RitzResiduals, StickSpectrum, StickWindow, model_spectrum_svg, ritz_residuals_svg,
    stick_spectrum_svg,
};

const REPEATS: usize = 5;

fn log_uniform(rng: &mut StdRng) -> f64 {
    10f64.powf(rng.random_range(0.0..4.0))
}

fn stick(n: usize, rng: &mut StdRng) -> StickSpectrum {
    let observed = (0..n)
        .map(|_| {
            let sigma = rng.random_range(15_000.0..25_000.0);
            ObservedStick {
                wavenumber_cm1: sigma,
                intensity: Some(log_uniform(rng)),
                assignment: Some(AssignedStick {
                    predicted_wavenumber_cm1: sigma + rng.random_range(-0.05..0.05),
                    label: "Fe I 4s 5D 4 – 4p 5F° 5".into(),
                }),
            }
        })
        .collect();
    let predicted = (0..n)
        .map(|_| PredictedStick {
            wavenumber_cm1: rng.random_range(15_000.0..25_000.0),
            gf: Some(log_uniform(rng) * 1e-4),
        })
        .collect();
    StickSpectrum {
        source: "bench.csv".into(),
        species: vec!["Fe I".into()],
        observed,
        predicted,
    }
}

fn ritz(n: usize, rng: &mut StdRng) -> RitzResiduals {
    let normal = Normal::new(0.0, 1.0).unwrap();
    RitzResiduals {
        source: "bench.csv".into(),
        outlier_sigma: 3.0,
        lines: (0..n)
            .map(|_| {
                let r: f64 = normal.sample(rng);
                RitzResidual {
                    species: "Fe I".into(),
                    wavenumber_cm1: rng.random_range(15_000.0..25_000.0),
                    residual_sigma: r,
                    outlier: r.abs() > 3.0,
                }
            })
            .collect(),
    }
}

fn model(n: usize, rng: &mut StdRng) -> ModelSpectrumFigure {
    ModelSpectrumFigure {
        species: "Fe I".into(),
        source: "bench.toml".into(),
        all_vacuum: false,
        selection: "every line".into(),
        lines: (0..n)
            .map(|i| ModelStick {
                wavelength_nm: rng.random_range(400.0..667.0),
                gf: log_uniform(rng) * 1e-4,
                intercombination: i % 5 == 0,
            })
            .collect(),
    }
}

/// Median time of `REPEATS` runs of `draw`, and the SVG of the last.
fn time(draw: impl Fn() -> String) -> (Duration, String) {
    let mut times = Vec::with_capacity(REPEATS);
    let mut svg = String::new();
    for _ in 0..REPEATS {
        let start = Instant::now();
        svg = draw();
        times.push(start.elapsed());
    }
    times.sort();
    (times[REPEATS / 2], svg)
}

fn report(figure: &str, n: usize, (elapsed, svg): (Duration, String)) {
    println!(
        "| {figure} | {n} | {:.1} ms | {:.0} kB | {} |",
        elapsed.as_secs_f64() * 1e3,
        svg.len() as f64 / 1e3,
        if svg.contains("binned") { "yes" } else { "no" }
    );
}

fn main() {
    println!("| figure | lines | median time | SVG size | says it binned |");
    println!("|---|---|---|---|---|");
    for n in [1_000, 10_000, 100_000] {
        let mut rng = StdRng::seed_from_u64(13);
        let data = stick(n, &mut rng);
        let window = StickWindow::default();
        report(
            "stick spectrum (n observed + n predicted)",
            n,
            time(|| stick_spectrum_svg(&data, &window).unwrap()),
        );
        let data = ritz(n, &mut rng);
        report(
            "observed − Ritz residuals",
            n,
            time(|| ritz_residuals_svg(&data).unwrap()),
        );
        let data = model(n, &mut rng);
        report(
            "level-model spectrum",
            n,
            time(|| model_spectrum_svg(&data).unwrap()),
        );
    }
}
