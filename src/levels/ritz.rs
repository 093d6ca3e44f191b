//! Ritz predictions: every E1 line between the levels of a table, its wavenumber the
//! difference of the two level energies (the Ritz combination principle).

use std::collections::HashMap;

use super::e1::RuleKey;
use super::predicted::{
    Listing, PredictedLine, PredictionError, Predictions, SpeciesOrigin, TransitionProbability,
    UnkeptLines,
};
use super::reach::Reach;
use super::table::{Level, LevelTable};
use crate::notation::Species;

/// The Ritz wavenumber of the line between two levels and its standard uncertainty,
/// cm⁻¹: σ = E_upper − E_lower, u(σ) = √(u_lower² + u_upper²).
///
/// The uncertainty treats the two level energies as uncorrelated. Levels that come
/// out of one least-squares optimisation are correlated (usually positively, so
/// that differences are better known than this); without the covariances, the
/// quadrature sum is the conservative choice (GUM, JCGM 100:2008, eq. 10).
pub fn ritz_wavenumber(lower: &Level, upper: &Level) -> (f64, f64) {
    (
        upper.energy_cm1 - lower.energy_cm1,
        lower.uncertainty_cm1.hypot(upper.uncertainty_cm1),
    )
}

/// A range of vacuum wavenumbers, cm⁻¹, both ends included.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WavenumberRange {
    /// Lowest wavenumber kept.
    pub low_cm1: f64,
    /// Highest wavenumber kept.
    pub high_cm1: f64,
}

/// Predict the E1 lines of every species in `table`.
///
/// Every pair of levels of one species with opposite parity and ΔJ = 0, ±1 (not
/// 0 ↔ 0) gives a line (see [`super::e1`]); the higher level is the upper one.
/// Pairs of equal energy give no line, and neither do pairs whose energies are not
/// on one scale: a level relative to an unknown offset (`+x`) combines only with
/// levels relative to the same offset, for which the offset cancels. Each line is
/// classified with [`super::e1::classify`]: LS rules where both labels are LS,
/// parity and J rules only otherwise; intercombination, L-forbidden,
/// jump-forbidden and two-electron-jump lines are kept and flagged. The result is
/// sorted by wavenumber; its species origins read `Ritz wavenumbers from <table
/// source>`, with no model uncertainty.
///
/// The work is O(n²) in the number of levels of each species (25 000 pairs for the
/// 223 levels of Ne I).
///
/// Fails only for a table built by hand with non-finite numbers (a table read by
/// [`super::read_level_table`] always gives a valid set).
pub fn predict_from_table(table: &LevelTable) -> Result<Predictions, PredictionError> {
    predict_levels(table.levels.clone(), &table.source, None, None, None)
}

/// [`predict_from_table`], keeping only the lines within `range` (all when `None`),
/// with the source's line list `published`: a line between the levels of table
/// indices (i, k), i < k, found there is [`Listing::Listed`] and gets the published
/// transition probability, if any (with g_k = 2J + 1 of the upper level), and gf
/// from it as its relative strength; the others are [`Listing::NotListed`].
///
/// The notes of each species' summary count what the outputs should say: levels
/// with energies not from experiment, levels relative to an unknown offset and the
/// lines not predicted for them, lines with an incomplete label.
pub fn predict_lines(
    table: &LevelTable,
    range: Option<WavenumberRange>,
    published: &HashMap<(usize, usize), Option<TransitionProbability>>,
) -> Result<Predictions, PredictionError> {
    predict_levels(
        table.levels.clone(),
        &table.source,
        range,
        None,
        Some(published),
    )
}

/// [`predict_lines`] on levels owned by the caller (no copy), `source` naming them;
/// lines within `range` but outside `keep` (when given) are counted in the species'
/// summary and span but not kept (see [`super::ListReach`]).
pub(crate) fn predict_levels(
    levels: Vec<Level>,
    source: &str,
    range: Option<WavenumberRange>,
    keep: Option<&Reach>,
    published: Option<&HashMap<(usize, usize), Option<TransitionProbability>>>,
) -> Result<Predictions, PredictionError> {
    let mut species_list: Vec<Species> = Vec::new();
    for level in &levels {
        if !species_list.contains(&level.species) {
            species_list.push(level.species);
        }
    }
    // The published lines of each level, by partner index.
    let mut partners: Vec<Vec<(usize, Option<TransitionProbability>)>> =
        vec![Vec::new(); levels.len()];
    for (&(i, k), rate) in published.into_iter().flatten() {
        if let Some(list) = partners.get_mut(i) {
            list.push((k, *rate));
        }
    }
    let keys: Vec<RuleKey> = levels.iter().map(|l| RuleKey::of(&l.label)).collect();
    let complete: Vec<bool> = levels.iter().map(|l| l.label.is_complete()).collect();
    let mut lines = Vec::new();
    let mut counts: Vec<(Species, NoteCounts)> = Vec::new();
    let mut unkept: Vec<(Species, UnkeptLines)> = Vec::new();
    let mut unkept_span: Option<(f64, f64)> = None;
    for &species in &species_list {
        let mut not_kept = UnkeptLines::default();
        let indices: Vec<usize> = (0..levels.len())
            .filter(|&i| levels.get(i).is_some_and(|l| l.species == species))
            .collect();
        let mut count = NoteCounts::default();
        for &i in &indices {
            if let Some(level) = levels.get(i) {
                count.bracketed += usize::from(level.energy_status.bracketed);
                count.offset += usize::from(level.energy_status.offset.is_some());
            }
        }
        for (n, &i) in indices.iter().enumerate() {
            let (Some(a), Some(key_a)) = (levels.get(i), keys.get(i)) else {
                continue;
            };
            for &k in indices.iter().skip(n + 1) {
                let (Some(b), Some(key_b)) = (levels.get(k), keys.get(k)) else {
                    continue;
                };
                if !key_a.combines_with(key_b) || a.energy_cm1 == b.energy_cm1 {
                    continue;
                }
                if !a.energy_status.combines_with(b.energy_status) {
                    count.off_scale += 1;
                    continue;
                }
                let ((lower, lower_level), (upper, upper_level)) = if a.energy_cm1 < b.energy_cm1 {
                    ((i, a), (k, b))
                } else {
                    ((k, b), (i, a))
                };
                let wavenumber_cm1 = upper_level.energy_cm1 - lower_level.energy_cm1;
                if range.is_some_and(|r| !(r.low_cm1..=r.high_cm1).contains(&wavenumber_cm1)) {
                    continue;
                }
                let listed = partners
                    .get(i)
                    .and_then(|list| list.iter().find(|(partner, _)| *partner == k));
                if !(complete.get(i).copied().unwrap_or(false)
                    && complete.get(k).copied().unwrap_or(false))
                {
                    count.incomplete += 1;
                }
                if keep.is_some_and(|reach| !reach.contains(wavenumber_cm1)) {
                    // Counted, not built: no observed line can reach it.
                    not_kept.count_parts(
                        key_a.rules(key_b),
                        listed.is_some_and(|(_, r)| r.is_some()),
                        listed.is_some(),
                    );
                    unkept_span = Some(unkept_span.map_or((wavenumber_cm1, wavenumber_cm1), |s| {
                        (s.0.min(wavenumber_cm1), s.1.max(wavenumber_cm1))
                    }));
                    continue;
                }
                let (_, uncertainty_cm1) = ritz_wavenumber(lower_level, upper_level);
                let (rules, flags) = key_a.classify(key_b);
                let transition_probability =
                    listed.and_then(|(_, r)| *r).map(|r| TransitionProbability {
                        g_upper: upper_level.label.j.multiplicity(),
                        ..r
                    });
                let line = PredictedLine {
                    species,
                    lower,
                    upper,
                    wavenumber_cm1,
                    uncertainty_cm1,
                    rules,
                    flags,
                    relative_strength: transition_probability.map(|t| t.gf(wavenumber_cm1)),
                    transition_probability,
                    bracketed_level: lower_level.energy_status.bracketed
                        || upper_level.energy_status.bracketed,
                    listing: match (published, listed) {
                        (None, _) => Listing::NotConsulted,
                        (Some(_), Some(_)) => Listing::Listed,
                        (Some(_), None) => Listing::NotListed,
                    },
                };
                lines.push(line);
            }
        }
        counts.push((species, count));
        unkept.push((species, not_kept));
    }
    let origins = species_list
        .into_iter()
        .map(|species| SpeciesOrigin {
            species,
            origin: format!("Ritz wavenumbers from {source}"),
            model_uncertainty_cm1: 0.0,
        })
        .collect();
    let mut predictions = Predictions::new(levels, lines, origins)?;
    for (species, count) in counts {
        for note in count.notes() {
            predictions.add_note(species, note);
        }
    }
    for (species, not_kept) in unkept {
        predictions.add_unkept(species, not_kept);
    }
    if let Some((low, high)) = unkept_span {
        predictions.widen_span(low, high);
    }
    Ok(predictions)
}

/// What [`predict_lines`] counts for the notes of one species.
#[derive(Debug, Default)]
struct NoteCounts {
    bracketed: usize,
    offset: usize,
    off_scale: usize,
    incomplete: usize,
}

impl NoteCounts {
    fn notes(&self) -> Vec<String> {
        let mut notes = Vec::new();
        if self.bracketed > 0 {
            notes.push(format!(
                "{} level energies not from experiment (bracketed in the source; used as \
                 published, lines to them marked)",
                self.bracketed
            ));
        }
        if self.offset > 0 {
            notes.push(format!(
                "{} levels relative to an unknown offset (+x): {} lines between them and \
                 levels on the absolute scale not predicted",
                self.offset, self.off_scale
            ));
        }
        if self.incomplete > 0 {
            notes.push(format!(
                "{} lines involve a level without configuration or term: parity and J \
                 rules only, no jump rules",
                self.incomplete
            ));
        }
        notes
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::levels::{SelectionRules, embedded::EMBEDDED_TABLES, read_level_table};

    fn table(body: &str) -> LevelTable {
        let text =
            format!("species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n{body}");
        read_level_table(text.as_bytes(), "t.csv").unwrap()
    }

    #[test]
    fn pairs_follow_the_rigorous_rules_and_are_sorted() {
        // He I 1s2 1S0, 1s2s 3S1, 1s2p 3P°0,1,2 (NIST ASD 2014 energies).
        let t = table(
            "He I,1s2,1S,0,0,0,x\n\
             He I,1s.2s,3S,1,159855.9743297,0.0000001,x\n\
             He I,1s.2p,3P*,2,169086.7664725,0.0000001,x\n\
             He I,1s.2p,3P*,1,169086.8428979,0.0000001,x\n\
             He I,1s.2p,3P*,0,169087.8308131,0.0000001,x\n",
        );
        let p = predict_from_table(&t).unwrap();
        // 2s 3S1 combines with 3P°0,1,2; the ground 1S0 only with 3P°1.
        assert_eq!(p.lines().len(), 4);
        let sigmas: Vec<f64> = p.lines().iter().map(|l| l.wavenumber_cm1).collect();
        assert!(sigmas.windows(2).all(|w| w[0] <= w[1]));
        let last = p.lines().last().unwrap();
        let (lower, upper) = p.levels_of(last).unwrap();
        assert_eq!(lower.label.to_string(), "1s2 1S 0");
        assert_eq!(upper.label.to_string(), "1s.2p 3P° 1");
        assert!(last.flags.intercombination);
        assert!((last.uncertainty_cm1 - 1e-7).abs() < 1e-15);
        let first = &p.lines()[0];
        assert!((first.wavenumber_cm1 - (169086.7664725 - 159855.9743297)).abs() < 1e-9);
        assert!((first.uncertainty_cm1 - 1e-7 * 2f64.sqrt()).abs() < 1e-15);
        assert_eq!(p.species()[0].ls_lines, 4);
    }

    #[test]
    fn every_embedded_species_predicts_lines_with_the_right_rules() {
        for embedded in EMBEDDED_TABLES {
            let t = embedded.load().unwrap();
            let p = predict_from_table(&t).unwrap();
            let summary = &p.species()[0];
            assert!(!p.lines().is_empty(), "{}", embedded.species);
            assert_eq!(summary.levels, t.levels.len());
            match embedded.species {
                // Ne I excited levels are in pair coupling; only the ground level is LS
                // (NIST ASD 2014 labels), so no line is between two LS labels.
                "Ne I" => assert_eq!(summary.ls_lines, 0, "{}", embedded.species),
                // H I, He I and Li I are all in LS labels (NIST ASD tables).
                "H I" | "He I" | "Li I" => {
                    assert_eq!(summary.parity_and_j_lines, 0, "{}", embedded.species)
                }
                // Hg I and W I mix LS labels with pair-coupled or incomplete ones
                // (5d9 6s2 nl, levels without configuration).
                "Hg I" | "W I" => {
                    assert!(summary.ls_lines > 0 && summary.parity_and_j_lines > 0)
                }
                _ => {}
            }
            for line in p.lines() {
                let (lower, upper) = p.levels_of(line).unwrap();
                assert!(lower.energy_cm1 < upper.energy_cm1);
                assert_ne!(lower.label.parity(), upper.label.parity());
                if line.rules == SelectionRules::ParityAndJ {
                    assert!(!line.flags.intercombination && !line.flags.l_forbidden);
                }
            }
        }
    }
}
