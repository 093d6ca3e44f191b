//! Which LS terms a configuration can form, for the warnings of level tables: a
//! term such as `1s.2p 1D°` names a level the configuration has not got.
//!
//! The terms are found by Slater's method of counting microstates (Slater 1929,
//! Phys. Rev. 34, 1293; Condon & Shortley 1935, §7⁵): the number of terms with a
//! given L and S is N(M_L = L, M_S = S) − N(L + 1, S) − N(L, S + 1) + N(L + 1, S + 1),
//! where N counts the determinants of the configuration with those projections.
//! Written here rather than taken from `structure`, whose coupled basis carries
//! vectors and coefficients this question does not need.

use std::collections::BTreeMap;

use crate::notation::{ConfigPart, Configuration, LsTerm};

/// Largest subshell whose microstates are counted (2(2l + 1) spin orbitals): f
/// shells; a label with a g or higher open subshell is not checked.
const MAX_SPIN_ORBITALS: u32 = 14;

/// Microstate counts by (M_L, 2M_S).
type Counts = BTreeMap<(i32, i32), u64>;

/// The (L, 2S + 1) of every LS term of `configuration`, sorted by multiplicity,
/// then L; `None` when the configuration is not a list of distinct plain subshells
/// (parent terms, an unknown n, a subshell's j) or has an open subshell beyond f.
pub fn ls_terms(configuration: &Configuration) -> Option<Vec<(u32, u32)>> {
    let mut seen = Vec::new();
    let mut counts: Counts = BTreeMap::from([((0, 0), 1)]);
    for part in &configuration.parts {
        let ConfigPart::Subshell(subshell) = part else {
            return None;
        };
        if seen.contains(&(subshell.n, subshell.l)) {
            return None;
        }
        seen.push((subshell.n, subshell.l));
        if subshell.is_closed() {
            continue;
        }
        if subshell.capacity() > MAX_SPIN_ORBITALS || subshell.occupancy > subshell.capacity() {
            return None;
        }
        counts = combine(&counts, &subshell_counts(subshell.l, subshell.occupancy));
    }
    let count = |m_l: i32, two_m_s: i32| counts.get(&(m_l, two_m_s)).copied().unwrap_or(0);
    let mut terms = Vec::new();
    for &(m_l, two_m_s) in counts.keys() {
        if m_l < 0 || two_m_s < 0 {
            continue;
        }
        let n = count(m_l, two_m_s) + count(m_l + 1, two_m_s + 2);
        let minus = count(m_l + 1, two_m_s) + count(m_l, two_m_s + 2);
        if n > minus {
            // Both are non-negative: checked above.
            terms.push((m_l.unsigned_abs(), two_m_s.unsigned_abs() + 1));
        }
    }
    terms.sort_by_key(|&(l, multiplicity)| (multiplicity, l));
    Some(terms)
}

/// Whether `configuration` can form `term` (its L and S); `None` when that cannot
/// be told (see [`ls_terms`]).
pub fn can_form(configuration: &Configuration, term: &LsTerm) -> Option<bool> {
    let terms = ls_terms(configuration)?;
    Some(terms.contains(&(term.l, term.multiplicity)))
}

/// Microstates of l^n by (M_L, 2M_S): every choice of n of the 2(2l + 1) spin
/// orbitals (m_l, m_s), each once (Pauli).
fn subshell_counts(l: u32, electrons: u32) -> Counts {
    let spin_orbitals: Vec<(i32, i32)> = (-(l as i32)..=l as i32)
        .flat_map(|m_l| [(m_l, 1), (m_l, -1)])
        .collect();
    let mut counts = Counts::new();
    let total = spin_orbitals.len();
    for mask in 0u32..(1 << total) {
        if mask.count_ones() != electrons {
            continue;
        }
        let (mut m_l, mut two_m_s) = (0, 0);
        for (bit, &(ml, ms)) in spin_orbitals.iter().enumerate() {
            if mask & (1 << bit) != 0 {
                m_l += ml;
                two_m_s += ms;
            }
        }
        *counts.entry((m_l, two_m_s)).or_default() += 1;
    }
    counts
}

/// The counts of two independent groups of electrons together (a convolution).
fn combine(a: &Counts, b: &Counts) -> Counts {
    let mut out = Counts::new();
    for (&(l1, s1), &n1) in a {
        for (&(l2, s2), &n2) in b {
            *out.entry((l1 + l2, s1 + s2)).or_default() += n1 * n2;
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn terms(text: &str) -> Vec<String> {
        let configuration: Configuration = text.parse().unwrap();
        ls_terms(&configuration)
            .unwrap()
            .into_iter()
            .map(|(l, m)| format!("{m}{}", crate::notation::term_letter(l)))
            .collect()
    }

    #[test]
    fn terms_of_textbook_configurations() {
        // p²: ¹S ¹D ³P; d²: ¹S ¹D ¹G ³P ³F; p³: ²P ²D ⁴S; s p: ¹P ³P (Condon &
        // Shortley 1935, table 1⁷; Cowan 1981, table 4-5).
        assert_eq!(terms("2p2"), ["1S", "1D", "3P"]);
        assert_eq!(terms("3d2"), ["1S", "1D", "1G", "3P", "3F"]);
        assert_eq!(terms("2p3"), ["2P", "2D", "4S"]);
        assert_eq!(terms("1s.2p"), ["1P", "3P"]);
        assert_eq!(terms("1s2"), ["1S"]);
        // d⁵ has 16 terms, among them one ⁶S and three ²D (Cowan 1981, table 4-5):
        // counted as distinct (L, S) here: ²SPDFGHI, ⁴PDFG, ⁶S = 12.
        assert_eq!(terms("3d5").len(), 12);
        // f² : ¹S ¹D ¹G ¹I ³P ³F ³H (Cowan 1981, table 4-5).
        assert_eq!(terms("4f2"), ["1S", "1D", "1G", "1I", "3P", "3F", "3H"]);
    }

    #[test]
    fn parents_and_large_shells_are_not_judged() {
        let with_parent: Configuration = "2s2.2p5.(2P°<3/2>).3s".parse().unwrap();
        assert_eq!(ls_terms(&with_parent), None);
        let g: Configuration = "5g2".parse().unwrap();
        assert_eq!(ls_terms(&g), None);
    }
}
