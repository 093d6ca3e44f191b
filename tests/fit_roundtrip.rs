//! The fit recovers the parameters of a many-configuration model from the model's
//! own levels: with exact data, least squares returns the parameters that made
//! them (a property of least squares when the parameters are determined; common
//! practice, no source). The model and its values are invented
//! (tests/data/ti-like-model.toml).

use rand::{Rng, SeedableRng, rngs::StdRng};
use termsight::fit::{Convergence, FitOptions, fit_levels};
use termsight::levels::Level;
use termsight::structure::model::{Vary, parse_model};

#[test]
fn thirty_parameters_come_back_from_their_own_levels() {
    let text = include_str!("data/ti-like-model.toml");
    let loaded = parse_model(text, "ti-like-model.toml").unwrap();
    let truth = loaded.model.clone();
    let values = truth.values_for(&loaded.structure);
    let computed = loaded.structure.levels(&values).unwrap();
    // Each level labelled by its leading LS component, as a spectroscopist's table
    // would be; several are strongly mixed and some labels occur twice in one J.
    let table: Vec<Level> = computed
        .iter()
        .map(|l| {
            let lead = loaded
                .structure
                .state_label(l.block, l.composition[0].state);
            Level {
                species: truth.species,
                label: format!("{lead} {}", l.j).parse().unwrap(),
                energy_cm1: l.energy_cm1,
                uncertainty_cm1: 0.01,
                source: "computed".into(),
                energy_status: Default::default(),
            }
        })
        .collect();
    // Start every free parameter up to 5 % off (seeded), ties following.
    let mut start = truth.clone();
    let mut random = StdRng::seed_from_u64(5);
    for p in &mut start.parameters {
        if matches!(p.vary, Vary::Free) {
            p.value *= 1.0 + 0.05 * random.random_range(-1.0..1.0);
        }
    }
    let snapshot = start.parameters.clone();
    for p in &mut start.parameters {
        if let Vary::Tied { to, ratio } = p.vary {
            p.value = ratio * snapshot.iter().find(|q| q.id == to).unwrap().value;
        }
    }
    let result = fit_levels(
        &start,
        &loaded.structure,
        &table,
        &FitOptions::default(),
        |_| {},
    )
    .unwrap();
    assert_eq!(result.free_parameters, 30);
    assert_eq!(result.levels.len(), computed.len());
    assert_eq!(result.convergence, Convergence::Converged);
    // So far off, the compositions at the start point some labels of mixed pairs
    // at the wrong state; matching afresh after the first convergence repairs it.
    assert!(
        result.passes > 1 && result.assignment_settled,
        "{}",
        result.passes
    );
    assert!(result.sigma_cm1.unwrap() < 1e-6, "{:?}", result.sigma_cm1);
    for (fitted, wanted) in result.parameters.iter().zip(&truth.parameters) {
        assert!(
            (fitted.fitted_cm1 - wanted.value).abs() < 1e-6 * wanted.value.abs().max(1.0),
            "{}: {} vs {}",
            fitted.name,
            fitted.fitted_cm1,
            wanted.value
        );
    }
}
