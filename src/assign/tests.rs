//! Tests of the matcher against a plainly correct O(n·m) version, and of its flags.

use proptest::prelude::*;

use super::*;
use crate::levels::{
    Level, LevelLabel, PredictedLine, Predictions, SelectionRules, SpeciesOrigin, TransitionFlags,
};
use crate::linelist::GivenPosition;
use crate::notation::Species;

fn species(name: &str) -> Species {
    name.parse().unwrap()
}

/// A set of lines with given (σ, u) for species "He I" (made-up values: the matcher
/// does not look at the levels).
fn predictions(lines: &[(f64, f64)], model_u: f64) -> Predictions {
    let he = species("He I");
    let level = |label: &str, energy_cm1: f64| Level {
        species: he,
        label: label.parse::<LevelLabel>().unwrap(),
        energy_cm1,
        uncertainty_cm1: 0.0,
        source: "test".into(),
        energy_status: Default::default(),
    };
    let levels = vec![level("1s2 1S 0", 0.0), level("1s.2p 1P° 1", 171134.9)];
    let lines = lines
        .iter()
        .map(|&(sigma, u)| PredictedLine {
            species: he,
            lower: 0,
            upper: 1,
            wavenumber_cm1: sigma,
            uncertainty_cm1: u,
            rules: SelectionRules::Ls,
            flags: TransitionFlags::default(),
            relative_strength: None,
            transition_probability: None,
            bracketed_level: false,
            listing: Default::default(),
        })
        .collect();
    let origins = vec![SpeciesOrigin {
        species: he,
        origin: "test".into(),
        model_uncertainty_cm1: model_u,
    }];
    Predictions::new(levels, lines, origins).unwrap()
}

fn observed(sigma: f64, u: f64) -> ObservedLine {
    ObservedLine {
        row: 1,
        source_line: 2,
        given: GivenPosition::Wavenumber { value: sigma },
        wavenumber_cm1: sigma,
        uncertainty_cm1: u,
        intensity: None,
        extra: vec![],
    }
}

/// The matcher written the plain way: every pair examined, the density counted by
/// scanning all lines. Same formulas as `chance.rs`, different code path.
fn brute_force(
    observed: &[ObservedLine],
    p: &Predictions,
    config: &MatchConfig,
) -> Vec<Vec<(usize, f64)>> {
    let k = config.tolerance_sigma();
    let sigmas: Vec<f64> = p.lines().iter().map(|l| l.wavenumber_cm1).collect();
    let (first, last) = (sigmas[0], *sigmas.last().unwrap());
    observed
        .iter()
        .map(|o| {
            // Every pair within tolerance: (index, deviation, u_c).
            let mut within = Vec::new();
            for (i, line) in p.lines().iter().enumerate() {
                let model = p.model_uncertainty_cm1(line.species);
                let u_c =
                    (o.uncertainty_cm1.powi(2) + line.uncertainty_cm1.powi(2) + model.powi(2))
                        .sqrt();
                let d = o.wavenumber_cm1 - line.wavenumber_cm1;
                if d.abs() <= k * u_c {
                    within.push((i, d, u_c));
                }
            }
            // One density window per observed line, from the widest u_c.
            let u_max = within.iter().map(|w| w.2).fold(0.0, f64::max);
            let w_big = config.density_window_factor() * k * u_max;
            let n = sigmas
                .iter()
                .filter(|&&s| (s - o.wavenumber_cm1).abs() <= w_big)
                .count()
                .saturating_sub(1);
            let low = (o.wavenumber_cm1 - w_big).max(first);
            let high = (o.wavenumber_cm1 + w_big).min(last);
            let length = (high - low).max(w_big);
            let rho = n.max(1) as f64 / length;
            let mut found: Vec<(usize, f64)> = within
                .into_iter()
                .map(|(i, d, u_c)| (i, 1.0 - (-2.0 * rho * d.abs().max(u_c)).exp()))
                .collect();
            found.sort_by_key(|&(i, _)| i);
            found
        })
        .collect()
}

proptest! {
    // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
    #![proptest_config(ProptestConfig { cases: 64, rng_seed: proptest::test_runner::RngSeed::Fixed(14), .. ProptestConfig::default() })]

    #[test]
    fn binary_search_finds_exactly_what_the_full_scan_finds(
        lines in proptest::collection::vec((1000.0f64..1100.0, 0.0f64..0.5), 1..300),
        obs in proptest::collection::vec((995.0f64..1105.0, 0.001f64..0.8), 1..60),
        model_u in prop_oneof![Just(0.0), 0.0f64..0.3],
        k in 0.5f64..5.0,
    ) {
        let p = predictions(&lines, model_u);
        let observed: Vec<_> = obs.iter().map(|&(s, u)| observed(s, u)).collect();
        let config = MatchConfig::default().with_tolerance_sigma(k).unwrap();
        let fast = assign_lines(&observed, &p, &config);
        let slow = brute_force(&observed, &p, &config);
        for (f, s) in fast.iter().zip(&slow) {
            let mut got: Vec<(usize, f64)> = f
                .candidates
                .iter()
                .map(|c| (c.prediction, c.chance_probability))
                .collect();
            got.sort_by_key(|&(i, _)| i);
            prop_assert_eq!(got.len(), s.len());
            for ((gi, gp), (si, sp)) in got.iter().zip(s) {
                prop_assert_eq!(gi, si);
                // Same formula, summed in another order: agree to rounding.
                prop_assert!((gp - sp).abs() <= 1e-12 * sp.max(1e-300), "{} vs {}", gp, sp);
            }
            // Ranked by |Δ|/u_c (no line here breaks a rule).
            let ranks: Vec<f64> = f.candidates.iter().map(|c| c.deviation_sigma.abs()).collect();
            prop_assert!(ranks.windows(2).all(|w| w[0] <= w[1]));
            // Blend exactly when more than one candidate.
            prop_assert_eq!(f.is_blend(), f.candidates.len() > 1);
        }
    }
}

#[test]
fn tolerance_is_k_combined_standard_uncertainties() {
    // u_c = √(0.3² + 0.4²) = 0.5 (common practice, no source: quadrature sum of
    // independent standard uncertainties); k = 3 gives ±1.5 cm⁻¹.
    let p = predictions(&[(1000.0, 0.4)], 0.0);
    let inside = assign_lines(&[observed(1001.49, 0.3)], &p, &MatchConfig::default());
    assert_eq!(inside[0].candidates.len(), 1);
    let c = &inside[0].candidates[0];
    assert!((c.combined_uncertainty_cm1 - 0.5).abs() < 1e-12);
    assert!((c.deviation_sigma - 1.49 / 0.5).abs() < 1e-9);
    let outside = assign_lines(&[observed(1001.51, 0.3)], &p, &MatchConfig::default());
    assert!(outside[0].is_unassigned());
}

#[test]
fn model_uncertainty_widens_the_tolerance() {
    // u_c = √(0.3² + 0 + 0.4²) = 0.5 with a model uncertainty of 0.4.
    let p = predictions(&[(1000.0, 0.0)], 0.4);
    let found = assign_lines(&[observed(1001.49, 0.3)], &p, &MatchConfig::default());
    assert!((found[0].candidates[0].combined_uncertainty_cm1 - 0.5).abs() < 1e-12);
}

#[test]
fn a_wide_line_does_not_hide_narrow_ones() {
    // One line with a huge uncertainty and many sharp ones: all are found correctly.
    let mut lines: Vec<(f64, f64)> = (0..1000).map(|i| (1000.0 + i as f64, 0.001)).collect();
    lines.push((1300.3, 50.0));
    let p = predictions(&lines, 0.0);
    let found = assign_lines(&[observed(1200.0005, 0.001)], &p, &MatchConfig::default());
    let indices: Vec<f64> = found[0]
        .candidates
        .iter()
        .map(|c| p.lines()[c.prediction].wavenumber_cm1)
        .collect();
    assert_eq!(indices, vec![1200.0, 1300.3]);
    assert!(found[0].is_blend());
}

#[test]
fn chance_probability_follows_the_local_density() {
    // Lines every 1 cm⁻¹ (ρ = 1 per cm⁻¹); an observed line 0.01 off one of them with
    // u_c = 0.1: w = 0.1, P = 1 − exp(−2·1·0.1) (Poisson; see chance.rs).
    let lines: Vec<(f64, f64)> = (0..2000).map(|i| (10000.0 + i as f64, 0.0)).collect();
    let p = predictions(&lines, 0.0);
    let found = assign_lines(&[observed(11000.01, 0.1)], &p, &MatchConfig::default());
    let c = &found[0].candidates[0];
    // Window ±300·3·0.1 = ±90 cm⁻¹ (10910.01 … 11090.01) holds 180 lines, 179
    // besides the candidate, over 180 cm⁻¹: ρ = 179/180 per cm⁻¹.
    let expected = 1.0 - (-2.0 * 179.0 / 180.0 * 0.1f64).exp();
    assert!(
        (c.chance_probability - expected).abs() < 1e-12,
        "{}",
        c.chance_probability
    );
    // Sparse lines: far smaller.
    let sparse: Vec<(f64, f64)> = (0..20).map(|i| (10000.0 + 100.0 * i as f64, 0.0)).collect();
    let p = predictions(&sparse, 0.0);
    let found = assign_lines(&[observed(11000.01, 0.1)], &p, &MatchConfig::default());
    assert!(found[0].candidates[0].chance_probability < 0.002);
}

#[test]
fn rule_breaking_lines_rank_as_if_further_off() {
    // Two candidates: an allowed line 0.9σ off and an intercombination line 0.5σ
    // off. With the default penalty p = 2 the allowed one ranks first
    // (√(0.5² + 2²) = 2.06 > 0.9); with p = 0 the nearer one does.
    let mut p = predictions(&[(1000.0, 0.0), (1000.04, 0.0)], 0.0);
    let lines: Vec<PredictedLine> = p
        .lines()
        .iter()
        .cloned()
        .map(|mut l| {
            l.flags.intercombination = l.wavenumber_cm1 > 1000.02;
            l
        })
        .collect();
    p = Predictions::new(
        p.levels().to_vec(),
        lines,
        vec![SpeciesOrigin {
            species: species("He I"),
            origin: "test".into(),
            model_uncertainty_cm1: 0.0,
        }],
    )
    .unwrap();
    let obs = [observed(1000.09, 0.1)];
    let ranked = assign_lines(&obs, &p, &MatchConfig::default());
    let best = &ranked[0].candidates[0];
    assert_eq!(p.lines()[best.prediction].wavenumber_cm1, 1000.0);
    assert!((ranked[0].candidates[1].ranking_sigma - 0.5f64.hypot(2.0)).abs() < 1e-9);
    let plain = MatchConfig::default().with_rule_penalty_sigma(0.0).unwrap();
    let ranked = assign_lines(&obs, &p, &plain);
    assert_eq!(
        p.lines()[ranked[0].candidates[0].prediction].wavenumber_cm1,
        1000.04
    );
    assert_eq!(
        ranked[0].candidates[0].flags(&p.lines()[ranked[0].candidates[0].prediction], true),
        vec![Flag::Intercombination, Flag::Blend]
    );
}

#[test]
fn bad_settings_are_refused() {
    assert!(
        MatchConfig::default()
            .with_rule_penalty_sigma(-1.0)
            .is_err()
    );
    for k in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        assert!(MatchConfig::default().with_tolerance_sigma(k).is_err());
    }
    assert!(
        MatchConfig::default()
            .with_density_window_factor(0.5)
            .is_err()
    );
    assert!(
        MatchConfig::default()
            .with_density_window_factor(10.0)
            .is_ok()
    );
}

#[test]
fn nothing_to_match_against_leaves_lines_unassigned() {
    let empty = Predictions::default();
    let found = assign_lines(&[observed(1000.0, 0.1)], &empty, &MatchConfig::default());
    assert!(found[0].is_unassigned());
    let p = predictions(&[(1000.0, 0.1)], 0.0);
    let found = assign_lines(&[observed(f64::NAN, 0.1)], &p, &MatchConfig::default());
    assert!(found[0].is_unassigned());
}

#[test]
fn progress_is_reported_to_the_end() {
    let p = predictions(&[(1000.0, 0.1)], 0.0);
    let lines: Vec<_> = (0..10).map(|i| observed(1000.0 + i as f64, 0.1)).collect();
    let mut last = None;
    assign_lines_with_progress(&lines, &p, &MatchConfig::default(), &mut |p| last = Some(p));
    assert_eq!(
        last,
        Some(MatchProgress {
            done: 10,
            total: 10
        })
    );
}

#[test]
fn flag_names_round_trip() {
    for flag in Flag::ALL {
        assert_eq!(Flag::from_name(flag.name()), Some(flag));
    }
}

proptest! {
    // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
    #![proptest_config(ProptestConfig { rng_seed: proptest::test_runner::RngSeed::Fixed(15), .. ProptestConfig::default() })]

    // The matching order is that of a stable sort by wavenumber, whatever the
    // input order (reference: the standard library's stable sort).
    #[test]
    fn lines_are_matched_in_the_order_of_a_stable_sort(
        // Few distinct values, so that ties are common.
        values in prop::collection::vec(0u8..20, 0..200)
    ) {
        let lines: Vec<ObservedLine> = values
            .iter()
            .map(|&v| observed(1000.0 + f64::from(v), 0.1))
            .collect();
        let mut expected: Vec<usize> = (0..lines.len()).collect();
        expected.sort_by(|&a, &b| lines[a].wavenumber_cm1.total_cmp(&lines[b].wavenumber_cm1));
        prop_assert_eq!(wavenumber_order(&lines), expected);
    }
}

#[test]
fn a_list_by_increasing_wavelength_with_ties_is_matched_in_stable_order() {
    // Decreasing wavenumber with a tie: reversing would swap the second and third.
    let lines: Vec<ObservedLine> = [30.0, 20.0, 20.0, 10.0]
        .iter()
        .map(|&s| observed(s, 0.1))
        .collect();
    assert_eq!(wavenumber_order(&lines), vec![3, 1, 2, 0]);
    let lines: Vec<ObservedLine> = [30.0, 20.0, 10.0]
        .iter()
        .map(|&s| observed(s, 0.1))
        .collect();
    assert_eq!(wavenumber_order(&lines), vec![2, 1, 0]);
}
