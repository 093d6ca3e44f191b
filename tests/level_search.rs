//! The level search on published spectra: a level removed from the compiled He I,
//! Ne I and Ar I tables (NIST ASD 2014, see reference-levels/SOURCES.md) is found
//! again from the published observed lines that involve it (NIST ASD lines exports
//! retrieved 2014-03-04: tests/data/HeI-lines-asd2014.csv,
//! tests/data/reference-data/NeI-lines.csv, tests/data/ArI-lines-asd2014.csv),
//! mixed with the list's unclassified lines and seeded random lines.
//!
//! One observed line is one printed observed wavelength: the exports print a blend
//! (one observed wavelength for several transitions, the intensity marked `*`,
//! "intensity shared by a blend of components", shared/reference-data/
//! export-notes.md) on one row per component. A blend is offered to the search once,
//! as the single line it is. Its wavelength is the centre of its components: for the
//! He I triplets, where every observed line is such a blend, the centre of an
//! unresolved fine-structure multiplet (SOURCES.md: observed − Ritz up to 0.013 Å),
//! the difference of no two levels. So a removed level's "lines in the list", the
//! ones the check counts (at least 3), are the lines the export gives to it alone,
//! not marked as blends; its blends are searched with the rest but not counted.

use std::collections::HashMap;

use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use termsight::levels::search::{SearchConfig, SearchLine, find_levels};
use termsight::levels::{Level, LevelLabel, embedded_table};
use termsight::notation::Species;
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

/// An observed line of an export: vacuum wavenumber, its uncertainty, the pairs of
/// levels (indices in the compiled table) of its components, and whether the
/// export marks it as a blend.
struct Observed {
    sigma: f64,
    uncertainty: f64,
    components: Vec<(usize, usize)>,
    blend: bool,
    /// Decimals of the printed wavelength.
    decimals: usize,
}

impl Observed {
    fn involves(&self, level: usize) -> bool {
        self.components
            .iter()
            .any(|&(a, b)| a == level || b == level)
    }
}

/// The observed lines (`wl=observed`) of an export, one per printed observed
/// wavelength, with their components' levels in `table` (components with a level
/// the compiled table lacks are left out; a line with none left is dropped unless
/// it was unclassified).
///
/// The standard uncertainty of each line: the rms of observed − Ritz wavelength (Ritz
/// from the table's levels) over the export's lines of its kind, the scatter of the
/// published values about the published levels: lines not marked as blends by the
/// number of printed decimals (the usual guide to a value's precision, SOURCES.md),
/// blends together; at least the rounding of the printed digits (10^−d/√12 Å, the
/// standard deviation of a uniform rounding error); in Å, converted to wavenumber
/// (Δσ = σ²Δλ).
fn observed_lines(text: &str, table: &[Level]) -> Vec<Observed> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let find = |c: &str, t: &str, j: &str| {
        let label = LevelLabel::from_fields(c, t, j).ok()?;
        table.iter().position(|l| l.label == label)
    };
    let mut out: Vec<Observed> = Vec::new();
    let mut by_print: HashMap<(String, String), usize> = HashMap::new();
    for row in reader.records() {
        let row = row.unwrap();
        if !row[10].contains("wl=observed") {
            continue;
        }
        let key = (row[0].to_string(), row[3].to_string());
        let index = *by_print.entry(key).or_insert_with(|| {
            let wavelength = Wavelength {
                value: row[0].parse().unwrap(),
                unit: LengthUnit::Angstrom,
                medium: if &row[2] == "air" {
                    Medium::Air
                } else {
                    Medium::Vacuum
                },
            };
            out.push(Observed {
                sigma: wavelength
                    .to_wavenumber_cm1(AirFormula::BirchDowns1994)
                    .unwrap(),
                uncertainty: 0.0,
                components: Vec::new(),
                blend: row[3].contains('*'),
                decimals: row[0].split('.').nth(1).map_or(0, str::len),
            });
            out.len() - 1
        });
        let line = &mut out[index];
        if row[4].is_empty() && row[7].is_empty() {
            continue; // unclassified
        }
        match (
            find(&row[4], &row[5], &row[6]),
            find(&row[7], &row[8], &row[9]),
        ) {
            (Some(a), Some(b)) => line.components.push((a, b)),
            _ => line.blend = true, // a component the compiled table lacks
        }
    }
    for l in &mut out {
        l.blend |= l.components.len() > 1;
    }
    // Observed − Ritz in Å (Δλ = Δσ/σ², λ in cm; 1e8 Å per cm), per kind of line.
    let mut residuals: HashMap<(bool, usize), Vec<f64>> = HashMap::new();
    for l in &out {
        for &(a, b) in &l.components {
            let ritz = (table[a].energy_cm1 - table[b].energy_cm1).abs();
            let kind = (l.blend, if l.blend { 0 } else { l.decimals });
            residuals
                .entry(kind)
                .or_default()
                .push((l.sigma - ritz) / (l.sigma * l.sigma) * 1e8);
        }
    }
    let rms: HashMap<(bool, usize), f64> = residuals
        .iter()
        .map(|(&kind, r)| {
            let value = (r.iter().map(|x| x * x).sum::<f64>() / r.len() as f64).sqrt();
            eprintln!(
                "rms observed − Ritz, {} {}: {value:.4} Å over {} components",
                if kind.0 { "blends" } else { "lines of" },
                if kind.0 {
                    String::new()
                } else {
                    format!("{} decimals", kind.1)
                },
                r.len()
            );
            (kind, value)
        })
        .collect();
    let pooled = {
        let all: Vec<f64> = residuals.values().flatten().copied().collect();
        (all.iter().map(|x| x * x).sum::<f64>() / all.len().max(1) as f64).sqrt()
    };
    for l in &mut out {
        let kind = (l.blend, if l.blend { 0 } else { l.decimals });
        let rounding = 10f64.powi(-(l.decimals as i32)) / 12f64.sqrt();
        let scatter = rms.get(&kind).copied().unwrap_or(pooled);
        l.uncertainty = l.sigma * l.sigma * scatter.max(rounding) * 1e-8;
    }
    out
}

/// What one spectrum's removals gave.
struct Recovery {
    /// Levels with at least 3 lines of their own in the list.
    tried: usize,
    /// Of those, found again as the most significant candidate.
    recovered: usize,
    /// Of those, with a chance probability of at most 0.01 as well.
    recovered_significant: usize,
}

/// For every level with at least 3 observed lines of its own (not blends) to other
/// levels of the table: remove it, search its lines (and its blends) mixed with the
/// unclassified ones and 100 random lines, and see whether the most significant
/// candidate is the removed level (energy within 3 combined standard uncertainties,
/// same parity, true J allowed). Every candidate is reported (no limit on the
/// chance probability): the check is on the ranking.
fn recover(species: &str, text: &str, seed: u64) -> Recovery {
    let species: Species = species.parse().unwrap();
    let table = embedded_table(species).unwrap().load().unwrap().levels;
    let lines = observed_lines(text, &table);
    let (low, high) = lines.iter().fold((f64::MAX, 0.0f64), |(lo, hi), l| {
        (lo.min(l.sigma), hi.max(l.sigma))
    });
    let mut typical: Vec<f64> = lines.iter().map(|l| l.uncertainty).collect();
    typical.sort_by(f64::total_cmp);
    let typical = typical[typical.len() / 2];
    let mut rng = StdRng::seed_from_u64(seed);
    let config = SearchConfig::default()
        .with_max_chance_probability(1.0)
        .unwrap();
    let mut result = Recovery {
        tried: 0,
        recovered: 0,
        recovered_significant: 0,
    };
    eprintln!("{species}: misses (level, own lines + blends, what ranked first):");
    for (index, removed) in table.iter().enumerate() {
        let own = lines
            .iter()
            .filter(|l| !l.blend && l.involves(index))
            .count();
        if own < 3 {
            continue;
        }
        result.tried += 1;
        let known: Vec<Level> = table
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != index)
            .map(|(_, l)| l.clone())
            .collect();
        let offered: Vec<&Observed> = lines
            .iter()
            .filter(|l| l.involves(index) || l.components.is_empty())
            .collect();
        let mut search: Vec<SearchLine> = offered
            .iter()
            .map(|l| SearchLine {
                row: 0,
                wavenumber_cm1: l.sigma,
                uncertainty_cm1: l.uncertainty,
                intensity: None,
            })
            .collect();
        for _ in 0..100 {
            search.push(SearchLine {
                row: 0,
                wavenumber_cm1: rng.random_range(low..high),
                uncertainty_cm1: typical,
                intensity: None,
            });
        }
        for (i, l) in search.iter_mut().enumerate() {
            l.row = i + 1;
        }
        let found = find_levels(&search, &known, &config, &mut |_| {});
        let best = found.candidates.first();
        let ok = best.is_some_and(|best| {
            (best.energy_cm1 - removed.energy_cm1).abs()
                <= 3.0 * best.uncertainty_cm1.hypot(removed.uncertainty_cm1)
                && best.parity == removed.label.parity()
                && best.allowed_j.contains(&removed.label.j)
        });
        if ok {
            result.recovered += 1;
            if best.is_some_and(|b| b.chance_probability <= 0.01) {
                result.recovered_significant += 1;
            }
            continue;
        }
        let blends = offered.iter().filter(|l| l.blend).count();
        let winner = best.map_or("nothing".to_string(), |c| {
            let theirs = c.supports.iter().filter(|s| s.line < offered.len()).count();
            format!(
                "{:.4} ± {:.4} {} J {:?}, {} lines ({} of the level's), P = {:.2e}, local {:.2e}",
                c.energy_cm1,
                c.uncertainty_cm1,
                c.parity,
                c.allowed_j
                    .iter()
                    .map(|j| j.to_string())
                    .collect::<Vec<_>>(),
                c.supports.len(),
                theirs,
                c.chance_probability,
                c.local_probability
            )
        });
        let truth = found
            .candidates
            .iter()
            .position(|c| {
                (c.energy_cm1 - removed.energy_cm1).abs()
                    <= 3.0 * c.uncertainty_cm1.hypot(removed.uncertainty_cm1)
                    && c.parity == removed.label.parity()
            })
            .map_or("absent".to_string(), |r| {
                let c = &found.candidates[r];
                format!(
                    "rank {} at {:.4} ± {:.4}, {} lines, J {:?}, local {:.2e}",
                    r + 1,
                    c.energy_cm1,
                    c.uncertainty_cm1,
                    c.supports.len(),
                    c.allowed_j
                        .iter()
                        .map(|j| j.to_string())
                        .collect::<Vec<_>>(),
                    c.local_probability
                )
            });
        eprintln!(
            "  {} {:.4} ({} + {} blends): first {}; the level: {}",
            removed.label, removed.energy_cm1, own, blends, winner, truth
        );
    }
    eprintln!(
        "{species}: recovered {} of {} ({} also at P ≤ 0.01)",
        result.recovered, result.tried, result.recovered_significant
    );
    result
}

// The check of issue 12 asks for every level with at least 3 lines of its own.
// Measured 2026-12-03 (seeded): He I 3 of 3, Ne I 116 of 128, Ar I 21 of 28 (with
// the chance probability of the window count alone, before the span entered the
// ranking and blends were offered once: He I 1 of 12, Ne I 83 of 135, Ar I 17 of
// 28). The misses, as the table printed by `recover` shows, are of two kinds:
// - the mean of the level's own lines lies 3–5 of its standard uncertainties from
//   the published level (Ar I 4s 2[3/2]°2, 4s' 2[1/2]°1, 4p 2[3/2]1; Ne I 5d, 7d,
//   8d levels): the listed wavelengths of that level are offset together from the
//   adopted energy (Ar I 4s' 2[1/2]°1: its 16 lines put it 0.0012 cm⁻¹ above, with
//   a scatter of 0.0015 cm⁻¹ about their mean), so the level is found where its
//   lines put it, not where the compilation, from other measurements, puts it;
// - a level of 3 lines (Ne I 6p, 9d, 10d, 12s; Ar I 5p) outranked by a chance
//   cluster of 4 lines among the 100 random ones: 3 lines are weaker evidence
//   than 4, whatever their agreement.
// The assertions hold what is measured, so that a change that loses a level fails.

#[test]
fn removed_helium_levels_are_found_again() {
    let r = recover("He I", include_str!("data/HeI-lines-asd2014.csv"), 1);
    // Only the singlet levels have 3 lines of their own: every observed line of a
    // triplet level is a blend of its fine-structure components (see above).
    assert!(r.tried >= 3, "{}", r.tried);
    assert_eq!(r.recovered, r.tried, "He I");
}

#[test]
fn removed_neon_levels_are_found_again() {
    let r = recover("Ne I", include_str!("data/reference-data/NeI-lines.csv"), 2);
    assert!(r.tried >= 120, "{}", r.tried);
    assert!(
        r.recovered * 100 >= r.tried * 90,
        "Ne I: {} of {}",
        r.recovered,
        r.tried
    );
}

#[test]
fn removed_argon_levels_are_found_again() {
    let r = recover("Ar I", include_str!("data/ArI-lines-asd2014.csv"), 3);
    assert!(r.tried >= 25, "{}", r.tried);
    assert!(
        r.recovered * 100 >= r.tried * 75,
        "Ar I: {} of {}",
        r.recovered,
        r.tried
    );
}
