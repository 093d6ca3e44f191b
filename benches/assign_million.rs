//! Matching a million observed lines against a million predicted lines, beside the
//! time to read and parse the same line list, with lines per second and peak memory.
//!
//! `cargo bench --bench assign_million` (sizes can be changed:
//! `cargo bench --bench assign_million -- 200000 500000` for observed, predicted).
//!
//! Peak memory is the process's peak resident set (VmHWM of /proc/self/status on
//! Linux), reset between the stages through /proc/self/clear_refs; elsewhere it is
//! reported as unavailable.

use std::io::Write;
use std::time::Instant;

use termsight::assign::{MatchConfig, assign_lines};
use termsight::levels::{
    Level, PredictedLine, Predictions, SelectionRules, SpeciesOrigin, TransitionFlags,
};
use termsight::linelist::{ReadOptions, read_line_list};
use termsight::notation::Species;

/// SplitMix64 (Steele, Lea & Flood 2014): a seeded generator for the synthetic data.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// Synthetic predictions: `n` lines spread uniformly over 10 000–50 000 cm⁻¹, with
/// uncertainties log-uniform in 0.001–0.05 cm⁻¹, all of one made-up species.
fn predictions(n: usize, rng: &mut SplitMix64) -> Predictions {
    let species: Species = "Fe I".parse().unwrap();
    let level = |label: &str, energy_cm1| Level {
        species,
        label: label.parse().unwrap(),
        energy_cm1,
        uncertainty_cm1: 0.0,
        source: "synthetic".into(),
    };
    let levels = vec![level("3d6.4s2 5D 4", 0.0), level("3d6.4s.4p 5F° 5", 1.0)];
    let lines = (0..n)
        .map(|_| PredictedLine {
            species,
            lower: 0,
            upper: 1,
            wavenumber_cm1: 10_000.0 + 40_000.0 * rng.next(),
            uncertainty_cm1: 0.001 * 50f64.powf(rng.next()),
            rules: SelectionRules::Ls,
            flags: TransitionFlags::default(),
            relative_strength: None,
        })
        .collect();
    let origin = SpeciesOrigin {
        species,
        origin: "synthetic".into(),
        model_uncertainty_cm1: 0.0,
    };
    Predictions::new(levels, lines, vec![origin]).unwrap()
}

/// A line list file of `n` vacuum wavenumbers: half near a predicted line, half
/// anywhere, uncertainties 0.01–0.1 cm⁻¹.
fn line_list_text(n: usize, predictions: &Predictions, rng: &mut SplitMix64) -> String {
    let mut text = String::from("wavenumber_cm1,uncertainty_cm1,intensity\n");
    let lines = predictions.lines();
    for i in 0..n {
        let u = 0.01 * 10f64.powf(rng.next());
        let sigma = if i % 2 == 0 && !lines.is_empty() {
            let pick = ((rng.next() * lines.len() as f64) as usize).min(lines.len() - 1);
            lines[pick].wavenumber_cm1 + u * (2.0 * rng.next() - 1.0)
        } else {
            10_000.0 + 40_000.0 * rng.next()
        };
        text.push_str(&format!("{sigma:.4},{u:.4},{}\n", (rng.next() * 1000.0).round()));
    }
    text
}

fn peak_rss_mib() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}

fn reset_peak_rss() {
    if let Ok(mut f) = std::fs::OpenOptions::new().write(true).open("/proc/self/clear_refs") {
        let _ = f.write_all(b"5");
    }
}

fn mib(value: Option<f64>) -> String {
    value.map_or("unavailable".into(), |v| format!("{v:.0} MiB"))
}

fn main() {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let n_observed = sizes.first().copied().unwrap_or(1_000_000);
    let n_predicted = sizes.get(1).copied().unwrap_or(1_000_000);
    let mut rng = SplitMix64(2024);

    let predictions = predictions(n_predicted, &mut rng);
    let text = line_list_text(n_observed, &predictions, &mut rng);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(&path, &text).unwrap();
    drop(text);
    let before = peak_rss_mib();

    reset_peak_rss();
    let start = Instant::now();
    let file = std::io::BufReader::new(std::fs::File::open(&path).unwrap());
    let list = read_line_list(file, "lines.csv", &ReadOptions::default()).unwrap();
    let parse_s = start.elapsed().as_secs_f64();
    let parse_peak = peak_rss_mib();

    reset_peak_rss();
    let start = Instant::now();
    let result = assign_lines(&list.lines, &predictions, &MatchConfig::default());
    let match_s = start.elapsed().as_secs_f64();
    let match_peak = peak_rss_mib();

    let candidates: usize = result.iter().map(|a| a.candidates.len()).sum();
    let unassigned = result.iter().filter(|a| a.is_unassigned()).count();
    println!(
        "observed lines {n_observed}, predicted lines {n_predicted}, candidates {candidates}, unassigned {unassigned}"
    );
    println!("memory before reading (predictions built): {}", mib(before));
    println!(
        "read + parse: {parse_s:.3} s ({:.0} lines/s), peak {}",
        n_observed as f64 / parse_s,
        mib(parse_peak)
    );
    println!(
        "match:        {match_s:.3} s ({:.0} lines/s), peak {}",
        n_observed as f64 / match_s,
        mib(match_peak)
    );
    println!("match / parse time ratio: {:.2}", match_s / parse_s);
}
