//! Matching a million observed lines against a million predicted lines, beside the
//! time to read and parse the same line list, with lines per second and peak memory.
//!
//! `cargo bench --bench assign_million` (sizes and the uncertainty scale can be
//! changed: `cargo bench --bench assign_million -- 200000 500000 0.1` for 200 000
//! observed and 500 000 predicted lines with uncertainties a tenth of the default).
//!
//! With the defaults (a million lines each over 10 000–50 000 cm⁻¹, observed
//! uncertainties 0.01–0.1 cm⁻¹, predicted 0.001–0.05 cm⁻¹) the predictions are dense
//! (25 per cm⁻¹) and an observed line has about 7 candidates; with scale 0.1 it has
//! about one. The synthetic data come from a seeded generator and are the same in
//! every run.
//!
//! Peak memory is the process's peak resident set (VmHWM of /proc/self/status on
//! Linux), reset between the stages through /proc/self/clear_refs; elsewhere it is
//! reported as unavailable.

use std::io::Write;
use std::time::Instant;

use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::assign::{MatchConfig, assign_lines};
use termsight::levels::{
    Level, PredictedLine, Predictions, SelectionRules, SpeciesOrigin, TransitionFlags,
};
use termsight::linelist::{ReadOptions, read_line_list};
use termsight::notation::Species;

/// Synthetic predictions: `n` lines spread uniformly over 10 000–50 000 cm⁻¹, with
/// uncertainties log-uniform in `scale`·(0.001–0.05) cm⁻¹, all of one made-up species.
fn predictions(n: usize, scale: f64, rng: &mut StdRng) -> Predictions {
    let species: Species = "Fe I".parse().unwrap();
    let level = |label: &str, energy_cm1| Level {
        species,
        label: label.parse().unwrap(),
        energy_cm1,
        uncertainty_cm1: 0.0,
        source: "synthetic".into(),
        energy_status: Default::default(),
    };
    let levels = vec![level("3d6.4s2 5D 4", 0.0), level("3d6.4s.4p 5F° 5", 1.0)];
    let lines = (0..n)
        .map(|_| PredictedLine {
            species,
            lower: 0,
            upper: 1,
            wavenumber_cm1: 10_000.0 + 40_000.0 * rng.random::<f64>(),
            uncertainty_cm1: scale * 0.001 * 50f64.powf(rng.random::<f64>()),
            rules: SelectionRules::Ls,
            flags: TransitionFlags::default(),
            relative_strength: None,
            transition_probability: None,
            bracketed_level: false,
            listing: Default::default(),
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
/// anywhere, uncertainties `scale`·(0.01–0.1) cm⁻¹.
fn line_list_text(n: usize, scale: f64, predictions: &Predictions, rng: &mut StdRng) -> String {
    let mut text = String::from("wavenumber_cm1,uncertainty_cm1,intensity\n");
    let lines = predictions.lines();
    for i in 0..n {
        let u = scale * 0.01 * 10f64.powf(rng.random::<f64>());
        let sigma = if i % 2 == 0 && !lines.is_empty() {
            let pick = ((rng.random::<f64>() * lines.len() as f64) as usize).min(lines.len() - 1);
            lines[pick].wavenumber_cm1 + u * (2.0 * rng.random::<f64>() - 1.0)
        } else {
            10_000.0 + 40_000.0 * rng.random::<f64>()
        };
        text.push_str(&format!(
            "{sigma:.4},{u:.4},{}\n",
            (rng.random::<f64>() * 1000.0).round()
        ));
    }
    text
}

/// CPU time (user + system) of this process so far, in seconds, from
/// /proc/self/stat (Linux; clock ticks of 1/100 s, the usual USER_HZ). On a shared
/// machine it is steadier than wall time. `None` elsewhere.
fn cpu_seconds() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    // Fields after the command name (which is in parentheses and may hold spaces).
    let rest = stat.rsplit_once(')')?.1;
    let fields: Vec<&str> = rest.split_whitespace().collect();
    let utime: f64 = fields.get(11)?.parse().ok()?;
    let stime: f64 = fields.get(12)?.parse().ok()?;
    Some((utime + stime) / 100.0)
}

/// Runs of each stage.
const REPEATS: usize = 3;

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
    let scale: f64 = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .nth(2)
        .unwrap_or(1.0);
    let mut rng = StdRng::seed_from_u64(2024);

    let predictions = predictions(n_predicted, scale, &mut rng);
    let text = line_list_text(n_observed, scale, &predictions, &mut rng);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(&path, &text).unwrap();
    drop(text);
    let before = peak_rss_mib();

    // Each stage runs REPEATS times; the fastest run counts (the machine may be
    // shared, and the fastest run is the least disturbed).
    reset_peak_rss();
    let mut parse_s = f64::INFINITY;
    let mut parse_cpu = f64::INFINITY;
    let mut list = None;
    for _ in 0..REPEATS {
        drop(list.take());
        let start = Instant::now();
        let cpu = cpu_seconds();
        let file = std::io::BufReader::new(std::fs::File::open(&path).unwrap());
        list = Some(read_line_list(file, "lines.csv", &ReadOptions::default()).unwrap());
        parse_s = parse_s.min(start.elapsed().as_secs_f64());
        if let (Some(a), Some(b)) = (cpu, cpu_seconds()) {
            parse_cpu = parse_cpu.min(b - a);
        }
    }
    let list = list.unwrap();
    let parse_peak = peak_rss_mib();

    reset_peak_rss();
    let mut match_s = f64::INFINITY;
    let mut match_cpu = f64::INFINITY;
    let mut result = Vec::new();
    for _ in 0..REPEATS {
        drop(std::mem::take(&mut result));
        let start = Instant::now();
        let cpu = cpu_seconds();
        result = assign_lines(&list.lines, &predictions, &MatchConfig::default());
        match_s = match_s.min(start.elapsed().as_secs_f64());
        if let (Some(a), Some(b)) = (cpu, cpu_seconds()) {
            match_cpu = match_cpu.min(b - a);
        }
    }
    let match_peak = peak_rss_mib();

    let candidates: usize = result.iter().map(|a| a.candidates.len()).sum();
    let unassigned = result.iter().filter(|a| a.is_unassigned()).count();
    println!(
        "observed lines {n_observed}, predicted lines {n_predicted}, uncertainty scale {scale}, candidates {candidates}, unassigned {unassigned}"
    );
    println!("memory before reading (predictions built): {}", mib(before));
    println!(
        "read + parse: {parse_s:.3} s wall, {parse_cpu:.2} s CPU ({:.0} lines/s), peak {}",
        n_observed as f64 / parse_s,
        mib(parse_peak)
    );
    println!(
        "match:        {match_s:.3} s wall, {match_cpu:.2} s CPU ({:.0} lines/s), peak {}",
        n_observed as f64 / match_s,
        mib(match_peak)
    );
    println!(
        "match / parse time ratio: {:.2} wall, {:.2} CPU (fastest of {REPEATS} runs each)",
        match_s / parse_s,
        match_cpu / parse_cpu
    );
}
