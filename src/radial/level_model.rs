//! A starting level model from computed radial integrals.
//!
//! [`starting_model`] turns the scaled integrals of [`super::radial_integrals`]
//! into a [`LevelModel`]: the configurations (without the closed core they all
//! share), every parameter their level structure needs, the configuration
//! interactions for which R^k integrals were computed (except one-electron
//! jumps nl → n'l, see [`starting_model`]), and the radial dipole
//! integrals for the lines. All parameters are free, ready for `termsight fit`.
//! [`model_file`] writes it with a header that states how the numbers were made.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use crate::notation::{Configuration, Species, Subshell};
use crate::structure::model::{LevelModel, ModelParameter, PairDipole, Vary, write_model};
use crate::structure::{DipoleIntegral, LevelStructure, Orbital, Radial, Scope};

use super::RadialError;
use super::integrals::{IntegralKind, RadialIntegral, ScaleFactors, replacement};

/// The level model of `configurations` (the configurations the integrals were
/// computed for, in the same order) with the scaled values of `integrals`.
///
/// Subshells closed in every configuration are left out of the labels (the level
/// structure treats a common closed core as inert). Configuration pairs become
/// interactions when they have R^k integrals and the level structure needs at
/// least one of them, except pairs that differ by one electron moved between
/// orbitals of the same l (1s² – 1s2s, 3d⁶4s² – 3d⁶4s5s): their interaction has a
/// one-electron part ⟨nl|h|n'l⟩ that the level model lacks and that, for
/// Hartree–Fock orbitals, nearly cancels the R^k part (Brillouin's theorem;
/// Cowan 1981, ch. 13), so the R^k part alone would mix them far too much.
/// Where several configuration pairs give a dipole integral between the same two
/// orbitals (Mg 3s²–3s3p and 3s3p–3p² both P(3s,3p)), the first pair's value is
/// the model's value for the orbital pair, and each other pair keeps its own as a
/// value for that configuration pair ([`PairDipole`]), so none is dropped. Values are rounded to 0.001 cm⁻¹ and dipole
/// integrals to 10⁻⁶ bohr, far below what the scaling leaves uncertain.
pub fn starting_model(
    species: Species,
    configurations: &[Configuration],
    integrals: &[RadialIntegral],
) -> Result<LevelModel, RadialError> {
    let labels = without_common_core(configurations);
    let candidates: Vec<(usize, usize)> = pairs_with_interaction_integrals(integrals)
        .into_iter()
        .filter(|&(a, b)| !moves_one_electron_within_l(&configurations[a], &configurations[b]))
        .collect();
    let structure =
        LevelStructure::build(&labels, &candidates).map_err(|e| RadialError::LevelModel {
            problem: e.to_string(),
        })?;
    let interactions: Vec<(usize, usize)> = candidates
        .into_iter()
        .filter(|&(a, b)| {
            structure
                .parameters()
                .iter()
                .any(|p| p.scope == Scope::Interaction(a, b))
        })
        .collect();
    // The pairs left out have no parameters, so the structure's parameter list is
    // already that of the model with `interactions` alone.

    let mut parameters = Vec::with_capacity(structure.parameters().len());
    let mut missing = Vec::new();
    for id in structure.parameters() {
        match scaled_value(id.radial, id.scope, integrals) {
            Some(value) => parameters.push(ModelParameter {
                id: *id,
                value: round(value, 1e3),
                vary: Vary::Free,
                uncertainty: None,
            }),
            None => missing.push(id.full_name(&labels)),
        }
    }
    if !missing.is_empty() {
        return Err(RadialError::LevelModel {
            problem: format!(
                "the level structure needs {}, which were not computed",
                missing.join(", ")
            ),
        });
    }

    Ok(LevelModel {
        species,
        configurations: labels,
        interactions,
        parameters,
        dipole: dipole_integrals(integrals),
        pair_dipole: pair_dipole_integrals(integrals),
        model_uncertainty_cm1: None,
    })
}

/// The model as the text of a model file, with a header of comment lines: what
/// made it (`method`, e.g. "Hartree–Fock, configuration average"), the scale
/// factors, and each parameter's unscaled value.
pub fn model_file(
    model: &LevelModel,
    method: &str,
    scales: &ScaleFactors,
    integrals: &[RadialIntegral],
) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "# Starting level model of {}, made by `termsight radial`: {method}.",
        model.species
    );
    let _ = writeln!(
        out,
        "# Energies in cm-1, radial dipole integrals in bohr. Computed integrals scaled by:\n\
         #   F^k and G^k {}, R^k {}, zeta {}, E_av differences {} (dipole integrals unscaled).\n\
         # Every parameter is free; fit them with `termsight fit`. Interactions between\n\
         # configurations that differ by one electron nl -> n'l are left out (Brillouin).",
        scales.direct_exchange, scales.interaction, scales.spin_orbit, scales.average_energy
    );
    out.push_str(&write_model(model));
    let _ = writeln!(out, "\n# Unscaled values, cm-1:");
    for p in &model.parameters {
        if let Some(i) = find(p.id.radial, p.id.scope, integrals) {
            let _ = writeln!(
                out,
                "#   {} = {:.3}",
                p.id.full_name(&model.configurations),
                i.value
            );
        }
    }
    out
}

/// The configurations without the subshells closed in all of them; unchanged
/// when that would leave one empty (a single closed-shell configuration).
fn without_common_core(configurations: &[Configuration]) -> Vec<Configuration> {
    let closed_everywhere = |s: &Subshell| {
        configurations.iter().all(|c| {
            c.subshells()
                .any(|t| t.n == s.n && t.l == s.l && t.is_closed())
        })
    };
    let stripped: Vec<Configuration> = configurations
        .iter()
        .map(|c| {
            Configuration::from_subshells(c.subshells().copied().filter(|s| !closed_everywhere(s)))
        })
        .collect();
    if stripped.iter().any(|c| c.parts.is_empty()) {
        configurations.to_vec()
    } else {
        stripped
    }
}

/// Pairs of configurations (first < second) with at least one R^k integral.
fn pairs_with_interaction_integrals(integrals: &[RadialIntegral]) -> Vec<(usize, usize)> {
    let mut pairs: Vec<(usize, usize)> = integrals
        .iter()
        .filter(|i| matches!(i.kind, IntegralKind::Interaction { .. }))
        .filter_map(|i| {
            let other = i.other_configuration?;
            Some((i.configuration.min(other), i.configuration.max(other)))
        })
        .collect();
    pairs.sort_unstable();
    pairs.dedup();
    pairs
}

/// True when the configurations differ by one electron moved nl → n'l.
fn moves_one_electron_within_l(a: &Configuration, b: &Configuration) -> bool {
    matches!(replacement(a, b), Some((removed, added))
        if removed.len() == 1 && removed[0].l == added[0].l)
}

/// The computed integral that is parameter `radial` of `scope`.
fn find(radial: Radial, scope: Scope, integrals: &[RadialIntegral]) -> Option<&RadialIntegral> {
    integrals.iter().find(|i| {
        let in_scope = match (scope, i.other_configuration) {
            (Scope::Configuration(c), None) => i.configuration == c,
            (Scope::Interaction(a, b), Some(other)) => {
                (i.configuration.min(other), i.configuration.max(other)) == (a, b)
            }
            _ => false,
        };
        in_scope
            && i.name
                .parse::<Radial>()
                .is_ok_and(|computed| computed.same_integral(&radial))
    })
}

fn scaled_value(radial: Radial, scope: Scope, integrals: &[RadialIntegral]) -> Option<f64> {
    find(radial, scope, integrals).map(|i| i.scaled)
}

/// `value` rounded to a multiple of 1/`per_unit`.
fn round(value: f64, per_unit: f64) -> f64 {
    (value * per_unit).round() / per_unit
}

/// One value per orbital pair, the first computed, in [`DipoleIntegral`] order.
fn dipole_integrals(integrals: &[RadialIntegral]) -> Vec<(DipoleIntegral, f64)> {
    let mut by_pair = BTreeMap::new();
    for i in integrals {
        let IntegralKind::Dipole { a, b } = &i.kind else {
            continue;
        };
        let (Ok(a), Ok(b)) = (a.parse::<Orbital>(), b.parse::<Orbital>()) else {
            continue;
        };
        if let Some(pair) = DipoleIntegral::new(a, b) {
            by_pair.entry(pair).or_insert(round(i.scaled, 1e6));
        }
    }
    by_pair.into_iter().collect()
}

/// The dipole integrals of the configuration pairs after the first that give each
/// orbital pair's integral, in (integral, pair) order.
fn pair_dipole_integrals(integrals: &[RadialIntegral]) -> Vec<PairDipole> {
    let mut seen: Vec<DipoleIntegral> = Vec::new();
    let mut out = Vec::new();
    for i in integrals {
        let IntegralKind::Dipole { a, b } = &i.kind else {
            continue;
        };
        let (Ok(a), Ok(b)) = (a.parse::<Orbital>(), b.parse::<Orbital>()) else {
            continue;
        };
        let (Some(pair), Some(other)) = (DipoleIntegral::new(a, b), i.other_configuration) else {
            continue;
        };
        if !seen.contains(&pair) {
            seen.push(pair);
            continue;
        }
        out.push(PairDipole {
            integral: pair,
            configurations: (i.configuration.min(other), i.configuration.max(other)),
            value: round(i.scaled, 1e6),
        });
    }
    out.sort_by_key(|p| (p.integral, p.configurations));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::{ScfOptions, Silent, hartree_fock, radial_integrals};
    use crate::structure::model::parse_model;

    fn configurations(list: &[&str]) -> Vec<Configuration> {
        list.iter().map(|c| c.parse().unwrap()).collect()
    }

    #[test]
    fn common_closed_core_is_left_out() {
        let configs = configurations(&["1s2 2s2 2p6 3s2", "1s2 2s2 2p6 3s 3p", "1s2 2s2 2p6 3p2"]);
        let labels: Vec<String> = without_common_core(&configs)
            .iter()
            .map(|c| c.to_string())
            .collect();
        assert_eq!(labels, ["3s2", "3s.3p", "3p2"]);
        let single = configurations(&["1s2 2s2"]);
        assert_eq!(without_common_core(&single), single);
    }

    #[test]
    fn magnesium_model_has_every_parameter_and_reads_back() {
        let configs = configurations(&["1s2 2s2 2p6 3s2", "1s2 2s2 2p6 3s 3p", "1s2 2s2 2p6 3p2"]);
        let options = ScfOptions::default();
        let solutions: Vec<_> = configs
            .iter()
            .map(|c| hartree_fock(12, c, &options, &mut Silent).unwrap())
            .collect();
        let scales = ScaleFactors::default();
        let integrals = radial_integrals(&solutions, &scales).unwrap();
        let species: Species = "Mg I".parse().unwrap();
        let model = starting_model(species, &configs, &integrals).unwrap();
        let names: Vec<String> = model
            .parameters
            .iter()
            .map(|p| model.full_name(&p.id))
            .collect();
        // 3s2: Eav; 3s3p: Eav, G1(3s,3p), zeta(3p); 3p2: Eav, F2(3p), zeta(3p);
        // 3s2–3p2: R1(3s3s,3p3p) (Condon & Shortley 1935 term energies; common
        // practice, no source, for which integrals a model of these needs).
        assert_eq!(
            names,
            [
                "Eav@3s2",
                "Eav@3s.3p",
                "G1(3s,3p)@3s.3p",
                "zeta(3p)@3s.3p",
                "Eav@3p2",
                "F2(3p)@3p2",
                "zeta(3p)@3p2",
                "R1(3s3s,3p3p)@3s2~3p2",
            ]
        );
        assert_eq!(model.interactions, [(0, 2)]);
        let g1 = integrals.iter().find(|i| i.name == "G1(3s,3p)").unwrap();
        assert!((model.parameters[2].value - 0.85 * g1.value).abs() <= 5e-4);
        assert_eq!(model.dipole.len(), 1);
        assert_eq!(model.dipole[0].0.to_string(), "P(3s,3p)");
        // 3s2–3s.3p gives the plain value, 3s.3p–3p2 its own: both computed ones
        // are kept (issue: −3.503 and −3.283 bohr), and they differ, the orbitals
        // being those of different configurations.
        let computed: Vec<f64> = integrals
            .iter()
            .filter(|i| i.name == "P(3s,3p)")
            .map(|i| i.value)
            .collect();
        assert_eq!(computed.len(), 2);
        assert!((model.dipole[0].1 - computed[0]).abs() <= 5e-7);
        assert_eq!(model.pair_dipole.len(), 1);
        assert_eq!(model.pair_dipole[0].configurations, (1, 2));
        assert!((model.pair_dipole[0].value - computed[1]).abs() <= 5e-7);
        assert!((computed[0] - computed[1]).abs() > 0.1, "{computed:?}");

        let text = model_file(&model, "Hartree–Fock", &scales, &integrals);
        assert!(text.starts_with("# Starting level model of Mg I"));
        assert!(text.contains("#   G1(3s,3p)@3s.3p = "));
        let again = parse_model(&text, "mg.toml").unwrap();
        assert_eq!(again.model, model);
    }
}
