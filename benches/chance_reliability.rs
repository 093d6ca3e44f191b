//! Reliability of the chance probability P on lines at random positions: the
//! fraction of lines whose rank-1 candidate has P ≤ α, at several α, measurement
//! uncertainties and floors of the chance distance, for the intensity-aware
//! assignment and for the position-only ranking.
//!
//! `cargo bench --bench chance_reliability` (arguments: lines per setting, default
//! 20 000, then `all` to match against every compiled spectrum instead of the four
//! of the default set). Prints a Markdown table; the dated record is
//! `benches/results/2026-12-03-chance-reliability.md`.
//!
//! Why it measures what it should: an observed line at a random position has no
//! relation to any prediction, so P is a valid p-value when Pr(P ≤ α) ≤ α for every
//! α (the definition of a p-value; for the nearest of Poisson-distributed
//! predictions P = 1 − exp(−2ρ|Δ|) is uniform, see `src/assign/chance.rs`). A line
//! with no candidate counts as P > α. The fraction is binomial: its standard
//! deviation √(α(1 − α)/n) is printed beside it.
//!
//! The floors other than the assignment's own (0.1 u_c) are computed from each
//! rank-1 candidate's P: P = 1 − exp(−2ρw) with w = max(|Δ|, f u_c), so for another
//! floor f′ the same density gives 1 − (1 − P)^(w′/w), exactly.
//!
//! Random positions and intensities come from a seeded generator (the same in every
//! run): uniform in 11 000–28 000 cm⁻¹ (about 357–909 nm), intensities log-uniform
//! over four decades, uncertainties the same for every line of a setting.

use std::time::Instant;

use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::assign::evidence::CHANCE_FLOOR_FRACTION;
use termsight::assign::{
    EvidenceConfig, LineAssignment, LineIntensity, MatchConfig, assign_lines, assign_with_evidence,
};
use termsight::levels::{EMBEDDED_TABLES, Predictions, compiled_predictions, embedded_table};
use termsight::linelist::{GivenPosition, ObservedLine};

const ALPHAS: [f64; 6] = [0.001, 0.003, 0.01, 0.03, 0.1, 0.3];
const UNCERTAINTIES_CM1: [f64; 4] = [0.01, 0.05, 0.2, 1.0];
const FLOORS: [f64; 5] = [1.0, 0.3, 0.1, 0.03, 0.01];

fn random_lines(n: usize, u: f64, seed: u64) -> (Vec<ObservedLine>, Vec<Option<LineIntensity>>) {
    let mut rng = StdRng::seed_from_u64(seed);
    let lines: Vec<ObservedLine> = (0..n)
        .map(|i| {
            let sigma = rng.random_range(11_000.0..28_000.0);
            ObservedLine {
                row: i + 1,
                source_line: i + 2,
                given: GivenPosition::Wavenumber { value: sigma },
                wavenumber_cm1: sigma,
                uncertainty_cm1: u,
                intensity: None,
                extra: vec![],
            }
        })
        .collect();
    let intensities = (0..n)
        .map(|_| LineIntensity::new(10f64.powf(rng.random_range(0.0..4.0)), None))
        .collect();
    (lines, intensities)
}

/// P of each line's rank-1 candidate recomputed at floor `f` from its P at floor
/// `f0` (see the module documentation); 1 for an unassigned line.
fn rank_one_p(assignments: &[LineAssignment], f0: f64, f: f64) -> Vec<f64> {
    assignments
        .iter()
        .map(|a| match a.candidates.first() {
            None => 1.0,
            Some(c) => {
                let u = c.combined_uncertainty_cm1;
                let w0 = c.deviation_cm1.abs().max(f0 * u);
                let w = c.deviation_cm1.abs().max(f * u);
                let p = c.chance_probability;
                if p >= 1.0 || w0 <= 0.0 {
                    p
                } else {
                    -((w / w0) * (-p).ln_1p()).exp_m1()
                }
            }
        })
        .collect()
}

fn fraction_at(p: &[f64], alpha: f64) -> f64 {
    p.iter().filter(|&&x| x <= alpha).count() as f64 / p.len().max(1) as f64
}

fn main() {
    let mut n = 20_000;
    let mut all = false;
    for arg in std::env::args().skip(1) {
        if arg == "all" {
            all = true;
        } else if let Ok(v) = arg.parse() {
            n = v;
        }
    }
    let tables: Vec<_> = if all {
        EMBEDDED_TABLES.iter().collect()
    } else {
        ["He I", "Ne I", "Ar I", "Fe I"]
            .iter()
            .map(|s| embedded_table(s.parse().unwrap()).unwrap())
            .collect()
    };
    let names: Vec<&str> = tables.iter().map(|t| t.species).collect();
    let predictions: Predictions = compiled_predictions(&tables).unwrap();
    let in_range = predictions
        .lines()
        .iter()
        .filter(|l| (11_000.0..28_000.0).contains(&l.wavenumber_cm1))
        .count();
    let rho = in_range as f64 / 17_000.0;
    println!(
        "# Chance reliability: {n} random lines per setting against {} ({} predicted lines in \
         11 000–28 000 cm⁻¹, mean density ρ = {rho:.3} per cm⁻¹)\n",
        names.join(", "),
        in_range
    );
    println!(
        "Fraction of random lines whose rank-1 candidate has P ≤ α (valid: ≤ α; sharp: near α). \
         `evidence f` = the intensity-aware assignment with the chance distance floored at f·u_c \
         (0.1 is its own); `position f=1` = the position-only ranking (floor u_c). 2ρ·f·u is the \
         smallest P the floor allows at the mean density.\n"
    );
    let mut header = String::from("| u, cm⁻¹ | ranking | 2ρfu |");
    let mut rule = String::from("|---|---|---|");
    for a in ALPHAS {
        header.push_str(&format!(" α = {a} |"));
        rule.push_str("---|");
    }
    println!("{header}\n{rule}");
    for (k, &u) in UNCERTAINTIES_CM1.iter().enumerate() {
        let (lines, intensities) = random_lines(n, u, 17 + k as u64);
        let config = MatchConfig::default();
        let start = Instant::now();
        let evidence = assign_with_evidence(
            &lines,
            &intensities,
            &predictions,
            &config,
            &EvidenceConfig::default(),
            &mut |_| {},
        );
        let seconds = start.elapsed().as_secs_f64();
        let position = assign_lines(&lines, &predictions, &config);
        let mut rows: Vec<(String, f64, Vec<f64>)> = FLOORS
            .iter()
            .map(|&f| {
                (
                    format!("evidence f={f}"),
                    2.0 * rho * f * u,
                    rank_one_p(&evidence.assignments, CHANCE_FLOOR_FRACTION, f),
                )
            })
            .collect();
        rows.push((
            "position f=1".into(),
            2.0 * rho * u,
            rank_one_p(&position, 1.0, 1.0),
        ));
        for (name, smallest, p) in rows {
            let mut row = format!("| {u} | {name} | {smallest:.2e} |");
            for a in ALPHAS {
                let fr = fraction_at(&p, a);
                let sd = (a * (1.0 - a) / n as f64).sqrt();
                row.push_str(&format!(" {fr:.4} ({:.2}α, ±{sd:.4}) |", fr / a));
            }
            println!("{row}");
        }
        eprintln!("u = {u}: intensity-aware assignment of {n} lines in {seconds:.2} s");
    }
}
