//! Which computed eigenstate is which experimental level.
//!
//! At the start of a fit each experimental level is matched to one eigenstate of
//! the model ([`match_levels`]):
//!
//! 1. by parity and J: only states of the same (parity, J) block are candidates;
//! 2. for a label in LS coupling, by the label's configuration and term against
//!    each eigenvector's LS composition: the candidate's score is the percentage of
//!    its composition in basis states of that configuration and term (parent terms,
//!    where both labels give them, must agree too for the first rank of the score).
//!    Pairs are taken greedily, best score first, each state and each level once;
//!    equal scores are decided by the smaller energy difference;
//! 3. for a label in pair or jj coupling, which LS composition cannot check, by
//!    energy order: within one (parity, J) block and configuration, the k-th lowest
//!    experimental level goes to the k-th lowest free state whose largest share is
//!    that configuration.
//!
//! Configurations are compared without closed subshells that only one of the two
//! labels writes (`2s2.2p5.(2P°<3/2>).3s` is the model's `2p5.3s`), and without
//! parent terms.
//!
//! During the iterations the identity of each matched state is kept by the overlap
//! of eigenvectors ([`track`]): in each (parity, J) block the state with the largest
//! |⟨ψ_previous|ψ_new⟩| takes the level, so two levels that cross as the
//! parameters move keep their labels (energy order would swap them).

use std::collections::HashMap;

use serde::Serialize;

use crate::levels;
use crate::notation::{ConfigPart, Configuration, Term};
use crate::structure::{Level, LevelStructure};

/// How an experimental level was matched to a computed state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MatchedBy {
    /// By its configuration and LS term against the eigenvector's composition.
    Composition,
    /// By energy order within its (parity, J) block and configuration (labels in
    /// pair or jj coupling).
    EnergyOrder,
}

/// Why an experimental level has no computed state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum UnmatchedReason {
    /// Its configuration is not one of the model's.
    ConfigurationNotInModel,
    /// The model has no level of its parity and J.
    NoSuchJ,
    /// No state of its parity and J has the label's configuration and term in its
    /// composition.
    TermNotInComposition,
    /// Every state that fits is already taken by another experimental level.
    AllStatesTaken,
}

impl UnmatchedReason {
    /// A sentence for reports.
    pub fn describe(self) -> &'static str {
        match self {
            UnmatchedReason::ConfigurationNotInModel => "its configuration is not in the model",
            UnmatchedReason::NoSuchJ => "the model has no level of this parity and J",
            UnmatchedReason::TermNotInComposition => {
                "no state of this parity and J has this configuration and term in its composition"
            }
            UnmatchedReason::AllStatesTaken => {
                "every state of this parity, J and configuration is matched to another level"
            }
        }
    }
}

/// One experimental level matched to a computed state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Assignment {
    /// Index into the experimental levels.
    pub experimental: usize,
    /// Index into the computed levels.
    pub level: usize,
    /// How.
    pub matched_by: MatchedBy,
}

/// True when a model configuration and a label's configuration have the same
/// electrons outside closed subshells: equal occupancy in every orbital both
/// write, and only closed subshells in the orbitals one of them leaves out.
/// Parent terms are ignored.
pub fn same_configuration(model: &Configuration, label: &Configuration) -> bool {
    let occupancy = |c: &Configuration| -> HashMap<(u32, u32), (u32, bool)> {
        c.subshells()
            .map(|s| ((s.n, s.l), (s.occupancy, s.is_closed())))
            .collect()
    };
    let (a, b) = (occupancy(model), occupancy(label));
    a.iter()
        .all(|(orbital, &(count, closed))| match b.get(orbital) {
            Some(&(other, _)) => other == count,
            None => closed,
        })
        && b.iter()
            .all(|(orbital, &(_, closed))| a.contains_key(orbital) || closed)
}

/// The (multiplicity, L) of the LS parent terms written in a configuration label.
fn ls_parents(configuration: &Configuration) -> Vec<(u32, u32)> {
    configuration
        .parts
        .iter()
        .filter_map(|part| match part {
            ConfigPart::Intermediate(i) => i.term.as_ls().map(|t| (t.multiplicity, t.l)),
            ConfigPart::Subshell(_) => None,
        })
        .collect()
}

/// How well a computed level fits an LS label: percentages of its composition in
/// basis states with (configuration, term, parents and repeat index), (configuration
/// and term), and (configuration) as in the label.
fn ls_score(structure: &LevelStructure, level: &Level, label: &levels::LevelLabel) -> [f64; 3] {
    let Some(term) = label.term.as_ls() else {
        return [0.0; 3];
    };
    let parents = ls_parents(&label.configuration);
    let block = &structure.blocks()[level.block];
    let mut score = [0.0; 3];
    for component in &level.composition {
        let basis = &block.basis[component.state];
        if !same_configuration(
            &structure.configurations()[basis.configuration],
            &label.configuration,
        ) {
            continue;
        }
        score[2] += component.percent;
        if basis.label.term.multiplicity != term.multiplicity || basis.label.term.l != term.l {
            continue;
        }
        score[1] += component.percent;
        let basis_parents = ls_parents(&basis.label.configuration);
        let parents_agree =
            parents.is_empty() || basis_parents.is_empty() || parents == basis_parents;
        let index_agrees = match (term.index, basis.label.term.index) {
            (Some(a), Some(b)) => a == b,
            _ => true,
        };
        if parents_agree && index_agrees {
            score[0] += component.percent;
        }
    }
    score
}

/// A score in millionths of a percent, so that equal shares compare equal.
fn quantised(percent: f64) -> i64 {
    (percent * 1e6).round() as i64
}

/// Match experimental levels (all of the model's species) to computed `levels`
/// (as [`LevelStructure::levels`] returns them). Returns the assignments and the
/// unmatched levels with their reasons, both in the order of `experimental`.
pub(crate) fn match_levels(
    structure: &LevelStructure,
    levels: &[Level],
    experimental: &[&levels::Level],
) -> (Vec<Assignment>, Vec<(usize, UnmatchedReason)>) {
    let mut taken = vec![false; levels.len()];
    let mut assigned: Vec<Option<Assignment>> = vec![None; experimental.len()];
    let mut reasons: Vec<Option<UnmatchedReason>> = vec![None; experimental.len()];

    // Candidate states of each experimental level: same parity and J.
    let mut candidates: Vec<Vec<usize>> = Vec::with_capacity(experimental.len());
    for (e, level) in experimental.iter().enumerate() {
        let label = &level.label;
        let in_model = structure
            .configurations()
            .iter()
            .any(|c| same_configuration(c, &label.configuration));
        let list: Vec<usize> = levels
            .iter()
            .enumerate()
            .filter(|(_, l)| l.parity == label.parity() && l.j == label.j)
            .map(|(i, _)| i)
            .collect();
        if !in_model {
            reasons[e] = Some(UnmatchedReason::ConfigurationNotInModel);
        } else if list.is_empty() {
            reasons[e] = Some(UnmatchedReason::NoSuchJ);
        }
        candidates.push(list);
    }

    // LS labels: greedy over (level, state) pairs, best composition first.
    let mut pairs = Vec::new();
    for (e, level) in experimental.iter().enumerate() {
        if reasons[e].is_some() || !matches!(level.label.term, Term::Ls(_)) {
            continue;
        }
        for &i in &candidates[e] {
            let score = ls_score(structure, &levels[i], &level.label);
            if score[1] > 0.0 {
                let distance = (levels[i].energy_cm1 - level.energy_cm1).abs();
                pairs.push((
                    [
                        quantised(score[0]),
                        quantised(score[1]),
                        quantised(score[2]),
                    ],
                    distance,
                    e,
                    i,
                ));
            }
        }
        if !pairs.iter().any(|p| p.2 == e) {
            reasons[e] = Some(UnmatchedReason::TermNotInComposition);
        }
    }
    pairs.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.total_cmp(&b.1)));
    for (_, _, e, i) in pairs {
        if assigned[e].is_none() && !taken[i] {
            taken[i] = true;
            assigned[e] = Some(Assignment {
                experimental: e,
                level: i,
                matched_by: MatchedBy::Composition,
            });
        }
    }

    // Pair- and jj-coupled labels: energy order within (block, J, configuration).
    let mut groups: HashMap<(usize, usize, usize), Vec<usize>> = HashMap::new();
    for (e, level) in experimental.iter().enumerate() {
        if reasons[e].is_some() || matches!(level.label.term, Term::Ls(_)) {
            continue;
        }
        let Some(configuration) = structure
            .configurations()
            .iter()
            .position(|c| same_configuration(c, &level.label.configuration))
        else {
            continue;
        };
        let Some(&first) = candidates[e].first() else {
            continue;
        };
        let key = (levels[first].block, levels[first].j_block, configuration);
        groups.entry(key).or_default().push(e);
    }
    let mut keys: Vec<_> = groups.keys().copied().collect();
    keys.sort_unstable();
    for key in keys {
        let mut members = groups.remove(&key).unwrap_or_default();
        members.sort_by(|&a, &b| {
            experimental[a]
                .energy_cm1
                .total_cmp(&experimental[b].energy_cm1)
        });
        let (block, j_block, configuration) = key;
        let mut free: Vec<usize> = (0..levels.len())
            .filter(|&i| {
                let l = &levels[i];
                l.block == block
                    && l.j_block == j_block
                    && !taken[i]
                    && same_configuration(
                        &structure.configurations()[l.configuration],
                        &structure.configurations()[configuration],
                    )
            })
            .collect();
        free.sort_by(|&a, &b| levels[a].energy_cm1.total_cmp(&levels[b].energy_cm1));
        for (&e, &i) in members.iter().zip(&free) {
            taken[i] = true;
            assigned[e] = Some(Assignment {
                experimental: e,
                level: i,
                matched_by: MatchedBy::EnergyOrder,
            });
        }
    }

    let mut assignments = Vec::new();
    let mut unmatched = Vec::new();
    for e in 0..experimental.len() {
        match (assigned[e], reasons[e]) {
            (Some(a), _) => assignments.push(a),
            (None, Some(reason)) => unmatched.push((e, reason)),
            (None, None) => unmatched.push((e, UnmatchedReason::AllStatesTaken)),
        }
    }
    (assignments, unmatched)
}

/// The computed levels of every (parity block, J block), by index into `levels`.
pub(crate) fn index_blocks(levels: &[Level]) -> HashMap<(usize, usize), Vec<usize>> {
    let mut index: HashMap<(usize, usize), Vec<usize>> = HashMap::new();
    for (i, level) in levels.iter().enumerate() {
        index
            .entry((level.block, level.j_block))
            .or_default()
            .push(i);
    }
    index
}

/// Follow matched states to new eigenvectors: `blocks[t]` is the (parity block,
/// J block) of target t and `reference[t]` its eigenvector at the last accepted
/// parameters. Returns, per target, the index into `levels` of the state with the
/// largest overlap, each state given to one target only (greedy, largest overlap
/// first).
pub(crate) fn track(
    levels: &[Level],
    blocks: &[(usize, usize)],
    reference: &[Vec<f64>],
) -> Vec<usize> {
    let index = index_blocks(levels);
    let mut by_block: HashMap<(usize, usize), Vec<usize>> = HashMap::new();
    for (t, key) in blocks.iter().enumerate() {
        by_block.entry(*key).or_default().push(t);
    }
    let mut chosen = vec![usize::MAX; blocks.len()];
    for (key, targets) in by_block {
        let roots = index.get(&key).map(Vec::as_slice).unwrap_or_default();
        let mut pairs = Vec::with_capacity(targets.len() * roots.len());
        for &t in &targets {
            for &i in roots {
                let overlap: f64 = reference[t]
                    .iter()
                    .zip(&levels[i].eigenvector)
                    .map(|(a, b)| a * b)
                    .sum();
                pairs.push((overlap.abs(), t, i));
            }
        }
        pairs.sort_by(|a, b| b.0.total_cmp(&a.0));
        let mut used = vec![false; levels.len()];
        for (_, t, i) in pairs {
            if chosen[t] == usize::MAX && !used[i] {
                chosen[t] = i;
                used[i] = true;
            }
        }
    }
    chosen
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::levels::{Level as TableLevel, LevelLabel};
    use crate::structure::LevelStructure;

    fn table_level(label: &str, energy: f64) -> TableLevel {
        TableLevel {
            species: "Mg I".parse().unwrap(),
            label: label.parse().unwrap(),
            energy_cm1: energy,
            uncertainty_cm1: 0.01,
            source: String::new(),
        }
    }

    #[test]
    fn configurations_compare_without_closed_core_and_parents() {
        let c = |s: &str| s.parse::<Configuration>().unwrap();
        assert!(same_configuration(
            &c("2p5.3s"),
            &c("2s2.2p5.(2P°<3/2>).3s")
        ));
        assert!(same_configuration(&c("3s2"), &c("2p6.3s2")));
        assert!(same_configuration(&c("1s.2s"), &c("1s.2s")));
        assert!(!same_configuration(&c("3s2"), &c("3p2")));
        assert!(!same_configuration(&c("3s.3p"), &c("3s.4p")));
        assert!(!same_configuration(&c("2p5.3s"), &c("2p6.3s")));
    }

    #[test]
    fn mixed_sp_levels_go_to_their_larger_component() {
        // s.p with G¹ = 6000, ζ = 1000: the J = 1 states are 97.7 % ³P and 97.7 % ¹P
        // (intermediate_coupling.csv, sympy); the label ¹P°1 must take the upper one
        // even when listed first, and ³P°0,2 are alone in their J.
        let structure = LevelStructure::build(&["3s.3p".parse().unwrap()], &[]).unwrap();
        let values: Vec<f64> = structure
            .parameters()
            .iter()
            .map(|p| match p.radial.to_string().as_str() {
                "Eav" => 0.0,
                "zeta(3p)" => 1000.0,
                _ => 6000.0,
            })
            .collect();
        let levels = structure.levels(&values).unwrap();
        let experimental = [
            table_level("3s.3p 1P° 1", 2000.0),
            table_level("3s.3p 3P° 1", -2600.0),
            table_level("3s.3p 3P° 2", -1500.0),
            table_level("3s.3p 3P° 0", -3000.0),
            table_level("3s.4p 3P° 0", 9000.0),
            table_level("3s.3p 1D° 2", 9000.0),
        ];
        let refs: Vec<&TableLevel> = experimental.iter().collect();
        let (assignments, unmatched) = match_levels(&structure, &levels, &refs);
        assert_eq!(assignments.len(), 4);
        for a in &assignments {
            let level = &levels[a.level];
            let leading = structure.state_label(level.block, level.composition[0].state);
            let wanted = &experimental[a.experimental].label;
            assert_eq!(
                leading.to_string(),
                format!("{} {}", wanted.configuration, wanted.term)
            );
            assert_eq!(level.j, wanted.j);
        }
        assert_eq!(
            unmatched,
            vec![
                (4, UnmatchedReason::ConfigurationNotInModel),
                (5, UnmatchedReason::TermNotInComposition)
            ]
        );
    }

    #[test]
    fn pair_coupled_labels_match_by_energy_order() {
        // Ne I 2p⁵3s in pair coupling (NIST ASD 2014): two J = 1 levels,
        // 2[3/2]°1 below 2[1/2]°1. They must go to the lower and upper computed
        // J = 1 states, whatever order the table lists them in.
        let structure = LevelStructure::build(&["2p5.3s".parse().unwrap()], &[]).unwrap();
        let values: Vec<f64> = structure
            .parameters()
            .iter()
            .map(|p| match p.radial.to_string().as_str() {
                "Eav" => 134500.0,
                "zeta(2p)" => 520.0,
                _ => 1000.0,
            })
            .collect();
        let levels = structure.levels(&values).unwrap();
        let ne = |label: &str, energy| TableLevel {
            species: "Ne I".parse().unwrap(),
            label: label.parse::<LevelLabel>().unwrap(),
            energy_cm1: energy,
            uncertainty_cm1: 0.0001,
            source: String::new(),
        };
        let experimental = [
            ne("2s2.2p5.(2P°<1/2>).3s 2[1/2]° 1", 135888.7173),
            ne("2s2.2p5.(2P°<3/2>).3s 2[3/2]° 1", 134459.2871),
        ];
        let refs: Vec<&TableLevel> = experimental.iter().collect();
        let (assignments, unmatched) = match_levels(&structure, &levels, &refs);
        assert!(unmatched.is_empty());
        assert!(
            assignments
                .iter()
                .all(|a| a.matched_by == MatchedBy::EnergyOrder)
        );
        let energy_of = |e: usize| {
            levels[assignments
                .iter()
                .find(|a| a.experimental == e)
                .unwrap()
                .level]
                .energy_cm1
        };
        assert!(energy_of(0) > energy_of(1));
    }
}
