//! The E1 pairs of one spectrum whose Ritz wavenumber lies in a range, found by
//! energy windows instead of trying every pair.
//!
//! Levels are grouped by what the rigorous E1 rules and the summaries look at
//! (parity, J, whether the term is LS, the unknown offset, whether the label is
//! complete) and sorted by energy within each group. For a lower level of energy E
//! and a group that may combine with it, the upper levels whose wavenumber
//! σ = E' − E lies in the range, or in one interval of a [`Reach`], are a contiguous
//! run found by binary search: the floating-point difference E' − E is monotone in
//! E', so the searches test exactly the comparisons an exhaustive loop would.
//! Pairs in the range but out of reach are only counted, in O(log n) per level and
//! group; the work is O(n·g·log n) plus the pairs kept, instead of O(n²).

use super::e1::RuleKey;
use super::reach::Reach;
use super::table::Level;

/// What the pair search counts over every pair in the range (kept or not), and
/// over the pairs that the unknown offsets keep apart.
#[derive(Debug, Default, Clone, PartialEq)]
pub(crate) struct PairCounts {
    /// Pairs in the range between two LS-labelled levels.
    pub ls: usize,
    /// Pairs in the range with a label in another coupling.
    pub parity_and_j: usize,
    /// Pairs in the range with a level whose label is incomplete.
    pub incomplete: usize,
    /// Pairs that pass the rigorous rules, of unequal energies, whose levels are
    /// relative to different offsets (whatever their wavenumber).
    pub off_scale: usize,
    /// Lowest and highest wavenumber of the pairs in the range, cm⁻¹.
    pub span_cm1: Option<(f64, f64)>,
}

/// One group of levels: same parity, J, LS or not, offset, completeness.
struct Group {
    /// Index (in the table) of one member, whose rule key stands for all.
    representative: usize,
    ls: bool,
    complete: bool,
    offset: Option<char>,
    /// (energy, table index) of the members, by increasing energy.
    members: Vec<(f64, usize)>,
}

/// Every pair of the levels `indices` (table indices into `levels` and `keys`,
/// one spectrum) that passes the rigorous E1 rules, has unequal energies on one
/// scale and a wavenumber σ = E_upper − E_lower with `low_cm1 ≤ σ ≤ high_cm1`:
/// counted in the result, and, when `keep` is `None` or contains σ, given to
/// `visit(lower, upper, σ)` (table indices, lower energy first), in no set order.
pub(crate) fn pairs_in_range(
    levels: &[Level],
    keys: &[RuleKey],
    complete: &[bool],
    indices: &[usize],
    (low_cm1, high_cm1): (f64, f64),
    keep: Option<&Reach>,
    mut visit: impl FnMut(usize, usize, f64),
) -> PairCounts {
    let groups = groups(levels, keys, complete, indices);
    let mut counts = PairCounts::default();
    // The bounds of the range, as monotone tests on σ (false then true, true then
    // false as the upper energy grows); σ > 0 leaves out pairs of equal energy.
    let above_low = |sigma: f64| sigma > 0.0 && sigma >= low_cm1;
    let below_high = |sigma: f64| sigma <= high_cm1;
    for (g, lower) in groups.iter().enumerate() {
        for (h, upper) in groups.iter().enumerate() {
            let (Some(key_l), Some(key_u)) = (
                keys.get(lower.representative),
                keys.get(upper.representative),
            ) else {
                continue;
            };
            if g == h || !key_l.combines_with(key_u) {
                continue;
            }
            if lower.offset != upper.offset {
                // Each unordered pair of groups once.
                if g < h {
                    counts.off_scale += unequal_pairs(&lower.members, &upper.members);
                }
                continue;
            }
            let ls = lower.ls && upper.ls;
            let incomplete = !(lower.complete && upper.complete);
            for &(energy, index) in &lower.members {
                let sigma = |&(e, _): &(f64, usize)| e - energy;
                let start = upper.members.partition_point(|m| !above_low(sigma(m)));
                let end = upper.members.partition_point(|m| below_high(sigma(m)));
                let Some(window) = upper.members.get(start..end).filter(|w| !w.is_empty()) else {
                    continue;
                };
                let n = window.len();
                if ls {
                    counts.ls += n;
                } else {
                    counts.parity_and_j += n;
                }
                if incomplete {
                    counts.incomplete += n;
                }
                if let (Some(first), Some(last)) = (window.first(), window.last()) {
                    let (a, b) = (sigma(first), sigma(last));
                    counts.span_cm1 = Some(
                        counts
                            .span_cm1
                            .map_or((a, b), |(lo, hi)| (lo.min(a), hi.max(b))),
                    );
                }
                match keep {
                    None => {
                        for m in window {
                            visit(index, m.1, sigma(m));
                        }
                    }
                    Some(reach) => {
                        visit_reached(window, energy, reach, |upper, s| visit(index, upper, s))
                    }
                }
            }
        }
    }
    counts
}

/// The members of `window` (sorted by energy) whose σ = E − `energy` lies in
/// `reach`: by binary search per interval of the reach that the window spans, or
/// by testing each member when the window holds fewer members than that.
fn visit_reached(
    window: &[(f64, usize)],
    energy: f64,
    reach: &Reach,
    mut visit: impl FnMut(usize, f64),
) {
    let (Some(first), Some(last)) = (window.first(), window.last()) else {
        return;
    };
    let (low, high) = (first.0 - energy, last.0 - energy);
    let intervals = reach.intervals();
    let from = intervals.partition_point(|&(_, hi)| hi < low);
    let to = intervals.partition_point(|&(lo, _)| lo <= high);
    let spanned = intervals.get(from..to).unwrap_or_default();
    if spanned.len() > window.len() {
        for &(e, upper) in window {
            let sigma = e - energy;
            if reach.contains(sigma) {
                visit(upper, sigma);
            }
        }
        return;
    }
    for &(lo, hi) in spanned {
        let start = window.partition_point(|&(e, _)| e - energy < lo);
        let end = window.partition_point(|&(e, _)| e - energy <= hi);
        for &(e, upper) in window.get(start..end).unwrap_or_default() {
            visit(upper, e - energy);
        }
    }
}

/// The number of pairs, one member of each list (both sorted by energy), of
/// unequal energies.
fn unequal_pairs(a: &[(f64, usize)], b: &[(f64, usize)]) -> usize {
    let mut equal = 0;
    let mut k = 0;
    for &(e, _) in a {
        while b.get(k).is_some_and(|m| m.0 < e) {
            k += 1;
        }
        equal += b
            .get(k..)
            .unwrap_or_default()
            .iter()
            .take_while(|m| m.0 == e)
            .count();
    }
    a.len() * b.len() - equal
}

/// The levels `indices` in groups, each sorted by energy.
fn groups(levels: &[Level], keys: &[RuleKey], complete: &[bool], indices: &[usize]) -> Vec<Group> {
    let mut groups: Vec<Group> = Vec::new();
    for &i in indices {
        let (Some(level), Some(key)) = (levels.get(i), keys.get(i)) else {
            continue;
        };
        let (parity, twice_j, ls) = key.e1_class();
        let is_complete = complete.get(i).copied().unwrap_or(false);
        let offset = level.energy_status.offset;
        let found = groups.iter_mut().find(|g| {
            keys.get(g.representative)
                .is_some_and(|k| k.e1_class() == (parity, twice_j, ls))
                && g.complete == is_complete
                && g.offset == offset
        });
        match found {
            Some(group) => group.members.push((level.energy_cm1, i)),
            None => groups.push(Group {
                representative: i,
                ls,
                complete: is_complete,
                offset,
                members: vec![(level.energy_cm1, i)],
            }),
        }
    }
    for group in &mut groups {
        group.members.sort_by(|a, b| a.0.total_cmp(&b.0));
    }
    groups
}
