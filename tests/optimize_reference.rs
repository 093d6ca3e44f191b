//! The level optimisation checked against the NIST ASD (2014) He I export
//! (tests/data/HeI-lines-asd2014.csv and the compiled He I levels; Kramida, Ralchenko,
//! Reader and NIST ASD Team, NIST Atomic Spectra Database, version of March 2014).

use termsight::assign::{Flag, MatchConfig, assign_lines, records};
use termsight::levels::optimize::{
    BlendPolicy, ClassifiedLine, ClassifiedLines, OptimizeOptions, optimize_classified,
};

use crate::assign_reference::{helium_measured_list, helium_predictions};

/// The 36 distinct observed He I wavelengths of the export, assigned as in the assign
/// test (k = 4), then optimised the way a spectroscopist treats this list: the
/// rank-1 assignments are accepted, and the blends (triplet lines whose observed
/// wavelength is the centroid of unresolved fine-structure components, observed −
/// Ritz up to 0.013 Å per export-notes.md) are kept with their uncertainty doubled.
/// The optimised levels must agree with the published ones within twice the combined
/// standard uncertainty (coverage factor 2, common practice, no source), each system
/// being held at its lowest published level.
#[test]
fn optimised_helium_levels_reproduce_the_published_levels() {
    let list = helium_measured_list();
    let predictions = helium_predictions();
    let config = MatchConfig::default().with_tolerance_sigma(4.0).unwrap();
    let assignments = assign_lines(&list.lines, &predictions, &config);
    let rows = records(&list, &predictions, &assignments);
    let lines: Vec<ClassifiedLine> = rows
        .iter()
        .filter_map(|row| {
            let candidate = row.candidate.as_ref()?;
            Some(ClassifiedLine {
                line: row.line,
                source_line: row.line + 1,
                species: candidate.species,
                lower: candidate.lower.clone(),
                upper: candidate.upper.clone(),
                wavenumber_cm1: row.observed_wavenumber_cm1,
                uncertainty_cm1: row.observed_uncertainty_cm1,
                rank: row.rank,
                blend: row.flags.contains(&Flag::Blend),
                accept: None,
                lower_energy_cm1: Some(candidate.lower_energy_cm1),
                upper_energy_cm1: Some(candidate.upper_energy_cm1),
                intensity: row.observed_intensity,
            })
        })
        .collect();
    let input = ClassifiedLines {
        source: "HeI-lines-asd2014.csv".into(),
        lines,
        unassigned_rows: 0,
        has_accept_column: false,
    };
    let options = OptimizeOptions {
        blends: BlendPolicy::Widen(2.0),
        ..OptimizeOptions::default()
    };
    let report = optimize_classified(&input, &options).unwrap();
    assert_eq!(report.species.len(), 1);
    let helium = &report.species[0];
    assert_eq!(report.selection.used, 36, "{:?}", report.selection);
    // No intercombination line is among them: the singlets and the triplets are
    // separate systems (at least two).
    assert!(helium.systems.len() >= 2, "{:?}", helium.systems);
    let mut checked = 0;
    for level in &helium.levels {
        let published = level.prior_energy_cm1.unwrap();
        // Published He I levels carry 1e-7 cm⁻¹ (their last printed digit).
        let combined = (level.uncertainty_cm1.powi(2) + 1e-14).sqrt();
        let difference = level.energy_cm1 - published;
        if level.label.to_string() == "1s.8s 1S 0" {
            // Fixed by one line only, 3935.912 Å, which the source itself prints
            // 0.033 Å from its Ritz value 3935.9452 Å (the assign test's 3.3σ line):
            // the optimised level carries exactly that discrepancy, 0.21 cm⁻¹.
            assert!(level.single_line());
            let sigma = |angstrom: f64| 1e8 / (angstrom * 1.000_276_2);
            let expected = sigma(3935.912) - sigma(3935.9452076);
            assert!(
                (difference - expected).abs() < 0.002,
                "{difference} vs {expected}"
            );
            continue;
        }
        assert!(
            difference.abs() <= 2.0 * combined,
            "{}: optimised {} ± {}, published {published}",
            level.label,
            level.energy_cm1,
            level.uncertainty_cm1
        );
        checked += 1;
    }
    assert!(checked >= 20, "only {checked} levels");
    // χ²/ν of a sound optimisation is of order 1 (not far above: no mis-assignment).
    let reduced = helium.chi_squared / helium.degrees_of_freedom.max(1) as f64;
    assert!(reduced < 3.0, "χ²/ν = {reduced}");
}
