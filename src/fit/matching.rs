//! Which computed eigenstate is which experimental level.
//!
//! At the start of a fit each experimental level is matched to one eigenstate of
//! the model (`match_levels`):
//!
//! 1. by parity and J: only states of the same (parity, J) block are candidates;
//! 2. for a label in LS coupling, by the label's configuration and term against
//!    each eigenvector's LS composition: the candidate's score is the percentage of
//!    its composition in basis states of that configuration and term (parent terms,
//!    where both labels give them, must agree too for the first rank of the score).
//!    In each (parity, J) block the levels take the states that give the largest
//!    total score (the Hungarian method), each state once; where exchanging the
//!    states of two levels costs less than 10 % of composition in all (nearly
//!    equal mixtures, or the same label twice), energy order decides;
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
//! of eigenvectors (`track`): in each (parity, J) block the state with the largest
//! |⟨ψ_previous|ψ_new⟩| takes the level, so two levels that cross as the
//! parameters move keep their labels (energy order would swap them).
//!
//! Where states are strongly mixed, the compositions at the starting values may
//! point a label at the wrong one of two states; the fit then converges with that
//! pair exchanged. So after convergence the LS-labelled levels are matched afresh
//! at the fitted values (the energy-order ones keep their tracked states), and the
//! fit is repeated from there while that changes any assignment.

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

/// The (multiplicity, L, repeat index) of the LS parent terms written in a
/// configuration label.
fn ls_parents(configuration: &Configuration) -> Vec<(u32, u32, Option<u32>)> {
    configuration
        .parts
        .iter()
        .filter_map(|part| match part {
            ConfigPart::Intermediate(i) => i.term.as_ls().map(|t| (t.multiplicity, t.l, t.index)),
            _ => None,
        })
        .collect()
}

/// Parent terms agree when either label gives none, or both give the same terms
/// in the same order (repeat indices compared where both give one).
fn parents_agree(a: &[(u32, u32, Option<u32>)], b: &[(u32, u32, Option<u32>)]) -> bool {
    a.is_empty()
        || b.is_empty()
        || (a.len() == b.len()
            && a.iter().zip(b).all(|(x, y)| {
                x.0 == y.0
                    && x.1 == y.1
                    && match (x.2, y.2) {
                        (Some(i), Some(j)) => i == j,
                        _ => true,
                    }
            }))
}

/// How well a computed level fits an LS label: percentages of its composition in
/// basis states with (configuration, term, parents and repeat index), (configuration
/// and term), and (configuration) as in the label.
/// `agrees[c]` says whether model configuration c is the label's.
fn ls_score(
    structure: &LevelStructure,
    level: &Level,
    label: &levels::LevelLabel,
    agrees: &[bool],
) -> [f64; 3] {
    let Some(term) = label.term.as_ls() else {
        return [0.0; 3];
    };
    let parents = ls_parents(&label.configuration);
    let block = &structure.blocks()[level.block];
    let mut score = [0.0; 3];
    for component in &level.composition {
        let basis = &block.basis[component.state];
        if !agrees[basis.configuration] {
            continue;
        }
        score[2] += component.percent;
        if basis.label.term.multiplicity != term.multiplicity || basis.label.term.l != term.l {
            continue;
        }
        score[1] += component.percent;
        let parents_agree = parents_agree(&parents, &ls_parents(&basis.label.configuration));
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

/// Match experimental levels (all of the model's species) to computed `levels`
/// (as [`LevelStructure::levels`] returns them), keeping the assignments in `keep`
/// as they are. Returns the assignments and the unmatched levels with their
/// reasons, both in the order of `experimental`.
pub(crate) fn match_levels(
    structure: &LevelStructure,
    levels: &[Level],
    experimental: &[&levels::Level],
    keep: &[Assignment],
) -> (Vec<Assignment>, Vec<(usize, UnmatchedReason)>) {
    let mut taken = vec![false; levels.len()];
    let mut assigned: Vec<Option<Assignment>> = vec![None; experimental.len()];
    let mut reasons: Vec<Option<UnmatchedReason>> = vec![None; experimental.len()];
    for a in keep {
        taken[a.level] = true;
        assigned[a.experimental] = Some(*a);
    }

    // Which model configurations each level's configuration is.
    let agrees: Vec<Vec<bool>> = experimental
        .iter()
        .map(|level| {
            structure
                .configurations()
                .iter()
                .map(|c| same_configuration(c, &level.label.configuration))
                .collect()
        })
        .collect();
    // Candidate states of each experimental level: same parity and J.
    let mut candidates: Vec<Vec<usize>> = Vec::with_capacity(experimental.len());
    for (e, level) in experimental.iter().enumerate() {
        let label = &level.label;
        let in_model = agrees[e].contains(&true);
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

    // LS labels: per (parity, J) block, the assignment with the largest total
    // score, then near-ties settled by energy order.
    let mut scores: HashMap<(usize, usize), f64> = HashMap::new();
    let mut by_block: HashMap<(usize, usize), Vec<usize>> = HashMap::new();
    for (e, level) in experimental.iter().enumerate() {
        if reasons[e].is_some() || assigned[e].is_some() || !matches!(level.label.term, Term::Ls(_))
        {
            continue;
        }
        let mut any = false;
        for &i in candidates[e].iter().filter(|&&i| !taken[i]) {
            let score = ls_score(structure, &levels[i], &level.label, &agrees[e]);
            if score[1] > 0.0 {
                // The share with parents and repeat index as in the label counts;
                // the looser shares decide only between otherwise equal states.
                scores.insert((e, i), score[0] + 0.01 * score[1] + 1e-4 * score[2]);
                any = true;
            }
        }
        if any {
            let first = &levels[candidates[e][0]];
            by_block
                .entry((first.block, first.j_block))
                .or_default()
                .push(e);
        } else {
            reasons[e] = Some(UnmatchedReason::TermNotInComposition);
        }
    }
    let mut blocks: Vec<_> = by_block.into_iter().collect();
    blocks.sort_unstable_by_key(|(key, _)| *key);
    for ((block, j_block), members) in blocks {
        let states: Vec<usize> = (0..levels.len())
            .filter(|&i| levels[i].block == block && levels[i].j_block == j_block && !taken[i])
            .collect();
        let weights: Vec<Vec<Option<f64>>> = members
            .iter()
            .map(|&e| {
                states
                    .iter()
                    .map(|&i| scores.get(&(e, i)).copied())
                    .collect()
            })
            .collect();
        let mut pairs: Vec<(usize, usize)> = best_assignment(&weights)
            .into_iter()
            .map(|(row, column)| (members[row], states[column]))
            .collect();
        settle_near_ties(&mut pairs, &scores, experimental, levels);
        for (e, i) in pairs {
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
        if reasons[e].is_some() || assigned[e].is_some() || matches!(level.label.term, Term::Ls(_))
        {
            continue;
        }
        let Some(configuration) = agrees[e].iter().position(|&a| a) else {
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

/// Two assignments whose exchange lowers the total score by less than this (in
/// percent of composition) are a near-tie, decided by energy order.
const NEAR_TIE_PERCENT: f64 = 10.0;

/// Exchange the states of pairs of levels whose energy order disagrees with their
/// states' order when that costs less than [`NEAR_TIE_PERCENT`] of score: two
/// states of nearly equal composition are told apart by energy order, which a
/// shift of all computed energies leaves alone. Levels with the same label always
/// take their states in energy order.
fn settle_near_ties(
    pairs: &mut [(usize, usize)],
    scores: &HashMap<(usize, usize), f64>,
    experimental: &[&levels::Level],
    levels: &[Level],
) {
    let score = |e: usize, i: usize| scores.get(&(e, i)).copied();
    // Each exchange puts one more pair in order, so n² rounds suffice.
    for _ in 0..pairs.len() * pairs.len() {
        let mut changed = false;
        for a in 0..pairs.len() {
            for b in a + 1..pairs.len() {
                let ((ea, ia), (eb, ib)) = (pairs[a], pairs[b]);
                let experimental_order = experimental[ea].energy_cm1 - experimental[eb].energy_cm1;
                let state_order = levels[ia].energy_cm1 - levels[ib].energy_cm1;
                if experimental_order * state_order >= 0.0 {
                    continue;
                }
                let (Some(now_a), Some(now_b), Some(swap_a), Some(swap_b)) =
                    (score(ea, ia), score(eb, ib), score(ea, ib), score(eb, ia))
                else {
                    continue;
                };
                if now_a + now_b - (swap_a + swap_b) < NEAR_TIE_PERCENT {
                    pairs[a].1 = ib;
                    pairs[b].1 = ia;
                    changed = true;
                }
            }
        }
        if !changed {
            break;
        }
    }
}

/// The rows-to-columns assignment of largest total weight, each row and column used
/// at most once; `None` marks a forbidden pair, never returned. The Hungarian
/// method (Kuhn 1955; Munkres 1957) in its O(n²m) form with row and column
/// potentials. Written here because the blocks are small (tens to hundreds of
/// states) and the crates that offer it want integer weights and bring a tree of
/// dependencies for these forty lines.
fn best_assignment(weights: &[Vec<Option<f64>>]) -> Vec<(usize, usize)> {
    let rows = weights.len();
    let columns = weights.first().map_or(0, Vec::len);
    if rows == 0 || columns == 0 {
        return Vec::new();
    }
    // Minimise cost = −weight with the smaller side as rows. A forbidden pair
    // costs 0, as much as leaving the row unassigned, so the total is the largest
    // over matchings of allowed pairs (weights are positive) and forbidden pairs
    // picked are dropped at the end.
    const FORBIDDEN: f64 = 0.0;
    let transposed = rows > columns;
    let (n, m) = if transposed {
        (columns, rows)
    } else {
        (rows, columns)
    };
    let cost = |r: usize, c: usize| {
        let w = if transposed {
            weights[c][r]
        } else {
            weights[r][c]
        };
        w.map_or(FORBIDDEN, |w| -w)
    };
    let mut u = vec![0.0; n + 1];
    let mut v = vec![0.0; m + 1];
    let mut owner = vec![0usize; m + 1];
    let mut way = vec![0usize; m + 1];
    for row in 1..=n {
        owner[0] = row;
        let mut column = 0;
        let mut min_v = vec![f64::INFINITY; m + 1];
        let mut used = vec![false; m + 1];
        loop {
            used[column] = true;
            let current = owner[column];
            let mut delta = f64::INFINITY;
            let mut next = 0;
            for j in 1..=m {
                if used[j] {
                    continue;
                }
                let reduced = cost(current - 1, j - 1) - u[current] - v[j];
                if reduced < min_v[j] {
                    min_v[j] = reduced;
                    way[j] = column;
                }
                if min_v[j] < delta {
                    delta = min_v[j];
                    next = j;
                }
            }
            for j in 0..=m {
                if used[j] {
                    u[owner[j]] += delta;
                    v[j] -= delta;
                } else {
                    min_v[j] -= delta;
                }
            }
            column = next;
            if owner[column] == 0 {
                break;
            }
        }
        loop {
            let previous = way[column];
            owner[column] = owner[previous];
            column = previous;
            if column == 0 {
                break;
            }
        }
    }
    (1..=m)
        .filter(|&j| owner[j] != 0)
        .map(|j| {
            let (r, c) = (owner[j] - 1, j - 1);
            if transposed { (c, r) } else { (r, c) }
        })
        .filter(|&(r, c)| weights[r][c].is_some())
        .collect()
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
            energy_status: Default::default(),
        }
    }

    /// The largest total weight of any matching of allowed pairs, by trying them all.
    fn brute_force(weights: &[Vec<Option<f64>>], row: usize, used: &mut Vec<bool>) -> f64 {
        if row == weights.len() {
            return 0.0;
        }
        let mut best = brute_force(weights, row + 1, used);
        for c in 0..used.len() {
            if let (false, Some(w)) = (used[c], weights[row][c]) {
                used[c] = true;
                best = best.max(w + brute_force(weights, row + 1, used));
                used[c] = false;
            }
        }
        best
    }

    proptest::proptest! {
        // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
        #![proptest_config(proptest::test_runner::Config {
            cases: 200,
            rng_seed: proptest::test_runner::RngSeed::Fixed(11),
            ..proptest::test_runner::Config::default()
        })]
        #[test]
        fn the_assignment_has_the_largest_total_weight(
            rows in 1usize..6,
            columns in 1usize..6,
            cells in proptest::collection::vec(proptest::option::weighted(0.7, 0.1f64..100.0), 36),
        ) {
            // Against exhaustive search (the definition of the optimum).
            let weights: Vec<Vec<Option<f64>>> = (0..rows)
                .map(|r| (0..columns).map(|c| cells[r * 6 + c]).collect())
                .collect();
            let pairs = best_assignment(&weights);
            let mut rows_used = vec![false; rows];
            let mut columns_used = vec![false; columns];
            let mut total = 0.0;
            for &(r, c) in &pairs {
                proptest::prop_assert!(!rows_used[r] && !columns_used[c]);
                rows_used[r] = true;
                columns_used[c] = true;
                total += weights[r][c].unwrap();
            }
            let best = brute_force(&weights, 0, &mut vec![false; columns]);
            proptest::prop_assert!((total - best).abs() < 1e-9, "{} vs {}", total, best);
        }
    }

    #[test]
    fn parent_terms_and_their_repeat_index_must_agree() {
        // d³ has two ²D terms (seniority 1 and 3; Condon & Shortley 1935, §8⁴), told
        // apart by the index: 3d3.(2D#2).4p is not 3d3.(2D#1).4p.
        let c = |s: &str| ls_parents(&s.parse::<Configuration>().unwrap());
        assert!(parents_agree(&c("3d3.(2D#1).4p"), &c("3d3.(2D#1).4p")));
        assert!(!parents_agree(&c("3d3.(2D#1).4p"), &c("3d3.(2D#2).4p")));
        assert!(parents_agree(&c("3d3.(2D).4p"), &c("3d3.(2D#2).4p")));
        assert!(parents_agree(&c("3d3.4p"), &c("3d3.(2D#2).4p")));
        assert!(!parents_agree(&c("3d3.(4F).4p"), &c("3d3.(2D#2).4p")));
    }

    #[test]
    fn a_strong_match_is_not_given_up_for_two_weak_ones() {
        // Level 0 is 100 % state 0; level 1 fits state 0 a little and nothing else.
        let weights = vec![vec![Some(100.0), Some(1.0)], vec![Some(1.0), None]];
        assert_eq!(best_assignment(&weights), vec![(0, 0)]);
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
        let (assignments, unmatched) = match_levels(&structure, &levels, &refs, &[]);
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
            energy_status: Default::default(),
        };
        let experimental = [
            ne("2s2.2p5.(2P°<1/2>).3s 2[1/2]° 1", 135888.7173),
            ne("2s2.2p5.(2P°<3/2>).3s 2[3/2]° 1", 134459.2871),
        ];
        let refs: Vec<&TableLevel> = experimental.iter().collect();
        let (assignments, unmatched) = match_levels(&structure, &levels, &refs, &[]);
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
