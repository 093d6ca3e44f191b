//! The level search on published spectra: a level removed from the compiled He I,
//! Ne I and Ar I tables (NIST ASD 2014, see reference-levels/SOURCES.md) is found
//! again from the published observed lines that involve it (NIST ASD lines exports
//! retrieved 2014-03-04: tests/data/HeI-lines-asd2014.csv,
//! tests/data/reference-data/NeI-lines.csv, tests/data/ArI-lines-asd2014.csv),
//! mixed with the list's unclassified lines and seeded random lines.

use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use termsight::levels::search::{SearchConfig, SearchLine, find_levels};
use termsight::levels::{Level, LevelLabel, embedded_table};
use termsight::notation::Species;
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

/// An observed line of an export: vacuum wavenumber, its uncertainty, and the
/// indices of its two levels in the compiled table (none for an unclassified line).
struct Observed {
    sigma: f64,
    uncertainty: f64,
    levels: Option<(usize, usize)>,
}

/// The observed lines (`wl=observed`) of an export, with their levels in `table`.
/// The standard uncertainty of each: the rms of observed − Ritz wavelength over
/// the export's classified observed lines (the scatter of the published values
/// about the published levels), in Å, converted to wavenumber (Δσ = σ²Δλ).
fn observed_lines(text: &str, table: &[Level]) -> Vec<Observed> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let find = |c: &str, t: &str, j: &str| {
        let label = LevelLabel::from_fields(c, t, j).ok()?;
        table.iter().position(|l| l.label == label)
    };
    let mut out = Vec::new();
    for row in reader.records() {
        let row = row.unwrap();
        if !row[10].contains("wl=observed") {
            continue;
        }
        let wavelength = Wavelength {
            value: row[0].parse().unwrap(),
            unit: LengthUnit::Angstrom,
            medium: if &row[2] == "air" {
                Medium::Air
            } else {
                Medium::Vacuum
            },
        };
        let sigma = wavelength
            .to_wavenumber_cm1(AirFormula::BirchDowns1994)
            .unwrap();
        let levels = if row[4].is_empty() && row[7].is_empty() {
            None
        } else {
            match (
                find(&row[4], &row[5], &row[6]),
                find(&row[7], &row[8], &row[9]),
            ) {
                (Some(a), Some(b)) => Some((a, b)),
                _ => continue, // a level the compiled table lacks: not usable
            }
        };
        out.push(Observed {
            sigma,
            uncertainty: 0.0,
            levels,
        });
    }
    // Δλ = Δσ/σ² (λ in cm; 1e8 Å per cm).
    let residuals_a: Vec<f64> = out
        .iter()
        .filter_map(|l| {
            let (a, b) = l.levels?;
            let ritz = (table[a].energy_cm1 - table[b].energy_cm1).abs();
            Some((l.sigma - ritz) / (l.sigma * l.sigma) * 1e8)
        })
        .collect();
    let rms_a = (residuals_a.iter().map(|r| r * r).sum::<f64>() / residuals_a.len() as f64).sqrt();
    eprintln!(
        "rms observed − Ritz: {rms_a:.4} Å over {} lines",
        residuals_a.len()
    );
    for l in &mut out {
        l.uncertainty = l.sigma * l.sigma * rms_a * 1e-8;
    }
    out
}

/// For every level with at least 3 observed lines to other levels of the table:
/// remove it, search its lines mixed with the unclassified ones and 100 random
/// lines, and count how often the most significant candidate is the removed level
/// (energy within 3 combined standard uncertainties, same parity, true J allowed).
/// Returns (recovered, tried).
fn recover(species: &str, text: &str, seed: u64) -> (usize, usize) {
    let species: Species = species.parse().unwrap();
    let table = embedded_table(species).unwrap().load().unwrap().levels;
    let lines = observed_lines(text, &table);
    let (low, high) = lines.iter().fold((f64::MAX, 0.0f64), |(lo, hi), l| {
        (lo.min(l.sigma), hi.max(l.sigma))
    });
    let mut rng = StdRng::seed_from_u64(seed);
    let mut tried = 0;
    let mut recovered = 0;
    for (index, removed) in table.iter().enumerate() {
        let involving: Vec<&Observed> = lines
            .iter()
            .filter(|l| l.levels.is_some_and(|(a, b)| a == index || b == index))
            .collect();
        if involving.len() < 3 {
            continue;
        }
        tried += 1;
        let known: Vec<Level> = table
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != index)
            .map(|(_, l)| l.clone())
            .collect();
        let mut search: Vec<SearchLine> = involving
            .iter()
            .chain(
                lines
                    .iter()
                    .filter(|l| l.levels.is_none())
                    .collect::<Vec<_>>()
                    .iter(),
            )
            .map(|l| SearchLine {
                row: 0,
                wavenumber_cm1: l.sigma,
                uncertainty_cm1: l.uncertainty,
                intensity: None,
            })
            .collect();
        let typical = involving[0].uncertainty;
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
        let found = find_levels(&search, &known, &SearchConfig::default(), &mut |_| {});
        let ok = found.candidates.first().is_some_and(|best| {
            (best.energy_cm1 - removed.energy_cm1).abs()
                <= 3.0 * best.uncertainty_cm1.hypot(removed.uncertainty_cm1)
                && best.parity == removed.label.parity()
                && best.allowed_j.contains(&removed.label.j)
        });
        if ok {
            recovered += 1;
        } else {
            eprintln!(
                "{species}: {} at {} ({} lines) not recovered: {:?}",
                removed.label,
                removed.energy_cm1,
                involving.len(),
                found.candidates.first().map(|c| (
                    c.energy_cm1,
                    c.uncertainty_cm1,
                    c.parity,
                    c.allowed_j.clone(),
                    c.supports.len(),
                    c.chance_probability
                ))
            );
        }
    }
    eprintln!("{species}: recovered {recovered} of {tried}");
    (recovered, tried)
}

#[test]
fn removed_helium_levels_are_found_again() {
    let (recovered, tried) = recover("He I", include_str!("data/HeI-lines-asd2014.csv"), 1);
    // Measured 2026-12-03: 1 of 12. Most He I observed wavelengths are the centres of
    // unresolved fine-structure multiplets (SOURCES.md), so the level found from them
    // is the multiplet's centre, 0.02–0.04 cm⁻¹ from the J level removed, far outside
    // the uncertainty of a mean of 10–25 lines: the published data's oddity, kept.
    assert!(tried >= 10, "{tried}");
    assert!(recovered >= 1, "{recovered} of {tried}");
}

#[test]
fn removed_neon_levels_are_found_again() {
    let (recovered, tried) = recover("Ne I", include_str!("data/reference-data/NeI-lines.csv"), 2);
    // Measured 2026-12-03: 83 of 135. The levels missed are mostly those with 3 or 4
    // lines, whose agreement is not significant at P ≤ 0.01 against ~10⁵ candidate
    // energies of the whole window.
    assert!(tried >= 100, "{tried}");
    assert!(recovered * 100 >= tried * 55, "{recovered} of {tried}");
}

#[test]
fn removed_argon_levels_are_found_again() {
    let (recovered, tried) = recover("Ar I", include_str!("data/ArI-lines-asd2014.csv"), 3);
    // Measured 2026-12-03: 17 of 28 (as for Ne I, the misses have few lines).
    assert!(tried >= 20, "{tried}");
    assert!(recovered * 100 >= tried * 55, "{recovered} of {tried}");
}
