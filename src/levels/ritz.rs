//! Ritz predictions: every E1 line between the levels of a table, its wavenumber the
//! difference of the two level energies (the Ritz combination principle).

use std::collections::HashMap;

use super::e1::RuleKey;
use super::pairs::pairs_in_range;
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
/// The pairs are found by energy windows ([`super::pairs`]): O(n·g·log n) for n
/// levels in g groups of parity, J and coupling, plus the lines found.
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
    let keys: Vec<RuleKey> = levels.iter().map(|l| RuleKey::of(&l.label)).collect();
    let complete: Vec<bool> = levels.iter().map(|l| l.label.is_complete()).collect();
    // A level energy that is not finite gives no wavenumber; refused as a line
    // between it and the first other level would be.
    if let Some(bad) = levels
        .iter()
        .position(|l| !(l.energy_cm1.is_finite() && l.uncertainty_cm1.is_finite()))
    {
        return Err(PredictionError::BadNumber {
            line: 0,
            problem: format!("level {bad} has a non-finite energy or uncertainty"),
        });
    }
    let bounds = range.map_or((f64::NEG_INFINITY, f64::INFINITY), |r| {
        (r.low_cm1, r.high_cm1)
    });
    // The published lines of each level, by partner, sorted (the level first in the
    // table holds the pair); and per species what the line list adds to the
    // summary over the range.
    let mut partners: Vec<Vec<(usize, Option<TransitionProbability>)>> =
        vec![Vec::new(); levels.len()];
    let mut totals: Vec<UnkeptLines> = vec![UnkeptLines::default(); species_list.len()];
    for (&(i, k), rate) in published.into_iter().flatten() {
        if let Some(list) = partners.get_mut(i) {
            list.push((k, *rate));
        }
        let position = levels
            .get(i)
            .and_then(|l| species_list.iter().position(|&s| s == l.species));
        if let Some(total) = position.and_then(|p| totals.get_mut(p))
            && gives_line_in(&levels, &keys, (i, k), bounds)
        {
            total.listed += 1;
            total.with_transition_probability += usize::from(rate.is_some());
        }
    }
    for list in &mut partners {
        list.sort_unstable_by_key(|&(k, _)| k);
    }
    // The lines kept, as (σ as bits, species, first, second, whether the first in
    // the table is the lower level): sorted at the end into the order of an
    // exhaustive loop over the pairs (first, second) in table order, sorted stably
    // by σ. (The bits of positive finite numbers sort as the numbers.)
    let mut found: Vec<(u64, usize, usize, usize, bool)> = Vec::new();
    let mut counts: Vec<(Species, NoteCounts)> = Vec::new();
    let mut spans: Vec<Option<(f64, f64)>> = Vec::new();
    for (position, &species) in species_list.iter().enumerate() {
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
        let pairs = pairs_in_range(
            &levels,
            &keys,
            &complete,
            &indices,
            bounds,
            keep,
            |lower, upper, sigma| {
                found.push((
                    sigma.to_bits(),
                    position,
                    lower.min(upper),
                    lower.max(upper),
                    lower < upper,
                ));
            },
        );
        count.off_scale = pairs.off_scale;
        count.incomplete = pairs.incomplete;
        if let Some(total) = totals.get_mut(position) {
            total.ls_lines = pairs.ls;
            total.parity_and_j_lines = pairs.parity_and_j;
        }
        counts.push((species, count));
        spans.push(pairs.span_cm1);
    }
    found.sort_unstable();
    let mut kept: Vec<UnkeptLines> = vec![UnkeptLines::default(); species_list.len()];
    let mut lines = Vec::with_capacity(found.len());
    for (bits, position, first, second, first_is_lower) in found {
        let wavenumber_cm1 = f64::from_bits(bits);
        let (lower, upper) = if first_is_lower {
            (first, second)
        } else {
            (second, first)
        };
        let (Some(&species), Some(lower_level), Some(upper_level), Some(key_a), Some(key_b)) = (
            species_list.get(position),
            levels.get(lower),
            levels.get(upper),
            keys.get(first),
            keys.get(second),
        ) else {
            continue;
        };
        let listed = partners.get(first).and_then(|list| {
            list.binary_search_by_key(&second, |&(k, _)| k)
                .ok()
                .and_then(|at| list.get(at))
        });
        let (_, uncertainty_cm1) = ritz_wavenumber(lower_level, upper_level);
        // The rules as an exhaustive loop takes them: the level first in the table
        // first.
        let (rules, flags) = key_a.classify(key_b);
        let transition_probability = listed.and_then(|(_, r)| *r).map(|r| TransitionProbability {
            g_upper: upper_level.label.j.multiplicity(),
            ..r
        });
        if let Some(kept) = kept.get_mut(position) {
            kept.count_parts(rules, transition_probability.is_some(), listed.is_some());
        }
        lines.push(PredictedLine {
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
        });
    }
    // What the lines of the range not kept add to each summary: all of them less
    // those kept.
    let mut unkept: Vec<(Species, UnkeptLines)> = Vec::new();
    let mut unkept_span: Option<(f64, f64)> = None;
    for (((&species, total), kept), span) in species_list.iter().zip(&totals).zip(&kept).zip(&spans)
    {
        let not_kept = UnkeptLines {
            ls_lines: total.ls_lines.saturating_sub(kept.ls_lines),
            parity_and_j_lines: total
                .parity_and_j_lines
                .saturating_sub(kept.parity_and_j_lines),
            with_transition_probability: total
                .with_transition_probability
                .saturating_sub(kept.with_transition_probability),
            listed: total.listed.saturating_sub(kept.listed),
        };
        if not_kept != UnkeptLines::default() {
            unkept_span = match (unkept_span, *span) {
                (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
                (a, b) => a.or(b),
            };
        }
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

/// Whether the levels (i, k) give a line in `bounds` (cm⁻¹): of one species, passing the rigorous E1 rules, on one energy scale, of unequal
/// energies, σ = E_upper − E_lower within the bounds.
fn gives_line_in(
    levels: &[Level],
    keys: &[RuleKey],
    (i, k): (usize, usize),
    (low_cm1, high_cm1): (f64, f64),
) -> bool {
    let (Some(a), Some(b), Some(key_a), Some(key_b)) =
        (levels.get(i), levels.get(k), keys.get(i), keys.get(k))
    else {
        return false;
    };
    if a.species != b.species
        || i == k
        || !key_a.combines_with(key_b)
        || !a.energy_status.combines_with(b.energy_status)
    {
        return false;
    }
    let sigma = if a.energy_cm1 < b.energy_cm1 {
        b.energy_cm1 - a.energy_cm1
    } else {
        a.energy_cm1 - b.energy_cm1
    };
    sigma > 0.0 && sigma >= low_cm1 && sigma <= high_cm1
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

    /// The pair loop as it was before the energy windows: every pair (i, k), i < k
    /// in table order, tried in turn. The reference of the exactness test below.
    fn exhaustive(
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
                    let ((lower, lower_level), (upper, upper_level)) =
                        if a.energy_cm1 < b.energy_cm1 {
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
                            key_a.classify(key_b).0,
                            listed.is_some_and(|(_, r)| r.is_some()),
                            listed.is_some(),
                        );
                        unkept_span =
                            Some(unkept_span.map_or((wavenumber_cm1, wavenumber_cm1), |s| {
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

    // Exactness of the energy windows (common practice, no source: a faster search
    // must find the same lines as trying every pair): for every compiled table, with
    // and without its line list, over the compiled range and without one, with no
    // reach and with seeded random reaches (a few narrow windows, many, one broad),
    // the predictions (lines in order, summaries, notes, span) are those of the
    // exhaustive loop.
    #[test]
    fn energy_windows_find_what_trying_every_pair_finds() {
        use crate::levels::ListReach;
        use crate::levels::embedded::compiled_range;
        use rand::{Rng, SeedableRng};
        let mut rng = rand::rngs::StdRng::seed_from_u64(20261203);
        for embedded in EMBEDDED_TABLES {
            let t = embedded.load().unwrap();
            let rates = embedded.transition_rates().unwrap();
            let mut reaches = vec![None];
            for (lines, factor, u) in [(3, 3.0, 0.01), (300, 3.0, 0.001), (40, 900.0, 0.2)] {
                let list: Vec<(f64, f64)> = (0..lines)
                    .map(|_| (rng.random_range(4_000.0..100_000.0), u))
                    .collect();
                reaches.push(Some(
                    ListReach::new(list, factor).with_prediction_uncertainty(0.5),
                ));
            }
            for range in [Some(compiled_range()), None] {
                for published in [Some(&rates), None] {
                    for keep in &reaches {
                        let fast = predict_levels(
                            t.levels.clone(),
                            &t.source,
                            range,
                            keep.as_ref(),
                            published,
                        );
                        let slow = exhaustive(
                            t.levels.clone(),
                            &t.source,
                            range,
                            keep.as_ref(),
                            published,
                        );
                        assert_eq!(
                            fast,
                            slow,
                            "{} {range:?} {:?}",
                            embedded.species,
                            keep.is_some()
                        );
                    }
                }
            }
        }
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
