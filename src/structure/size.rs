//! The size of a level model, counted before anything is built: Slater
//! determinants of each open subshell and LS states of each (parity, J) block.
//!
//! The counts come from the distribution of M_J over the determinants: the
//! number of states of J in a parity is N(M_J = J) − N(M_J = J + 1), with N(M)
//! the number of determinants of that M_J (Condon & Shortley 1935, §8³: every
//! level of J has one state at each M_J ≤ J). The distribution of one subshell is
//! counted electron by electron over its spin-orbitals, and those of the
//! subshells of a configuration are convolved; nothing depends on the terms.

use crate::notation::{Configuration, Parity};

/// Most Slater determinants one open subshell lⁿ may have: its terms are found
/// by diagonalising matrices over its (M_L, M_S) blocks, and the largest subshell
/// of the trade's models, 4f⁷, has 3432. 5g⁴ (11 628) and 6h¹¹ (705 432) are beyond.
pub const MAX_SUBSHELL_DETERMINANTS: u64 = 10_000;

/// Most LS states one (parity, J) block may have: a block of n states is a dense
/// n × n matrix diagonalised in O(n³) at every evaluation, several seconds at n = 2000
/// on one core of a small machine.
pub const MAX_J_BLOCK_STATES: usize = 2_000;

/// The size of one (parity, J) block.
#[derive(Debug, Clone, PartialEq)]
pub struct JBlockSize {
    /// Parity.
    pub parity: Parity,
    /// Twice J.
    pub two_j: u32,
    /// Number of LS states (= number of levels) of this J.
    pub states: usize,
}

/// The size of a level model, as [`estimate`] counts it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SizeEstimate {
    /// Every (parity, J) block with at least one state, even parity first, by J.
    pub j_blocks: Vec<JBlockSize>,
    /// Slater determinants of each configuration, in the order given.
    pub determinants: Vec<u64>,
}

impl SizeEstimate {
    /// The largest (parity, J) block, if any.
    pub fn largest_block(&self) -> Option<&JBlockSize> {
        self.j_blocks.iter().max_by_key(|b| b.states)
    }

    /// Number of levels of the model (LS states of every J block).
    pub fn levels(&self) -> usize {
        self.j_blocks.iter().map(|b| b.states).sum()
    }

    /// Σ n² over the J blocks: what assembling and storing the blocks costs.
    pub fn matrix_elements(&self) -> usize {
        self.j_blocks.iter().map(|b| b.states * b.states).sum()
    }
}

/// A subshell over the limit: configuration index, subshell, determinant count.
pub(crate) struct TooLargeSubshell {
    pub configuration: usize,
    pub subshell: crate::notation::Subshell,
    pub determinants: u64,
}

/// C(n, k) exactly (n ≤ 30 here, so u64 does not overflow).
fn binomial(n: u64, k: u64) -> u64 {
    (0..k).fold(1u64, |acc, i| acc * (n - i) / (i + 1))
}

/// The first open subshell with more than [`MAX_SUBSHELL_DETERMINANTS`]
/// determinants, if any. Subshells with l beyond `max_l` are left to the caller.
pub(crate) fn too_large_subshell(
    configurations: &[Configuration],
    max_l: u32,
) -> Option<TooLargeSubshell> {
    for (c, configuration) in configurations.iter().enumerate() {
        for s in configuration.subshells() {
            if s.l > max_l {
                continue;
            }
            let count = binomial(u64::from(s.capacity()), u64::from(s.occupancy));
            if count > MAX_SUBSHELL_DETERMINANTS {
                return Some(TooLargeSubshell {
                    configuration: c,
                    subshell: *s,
                    determinants: count,
                });
            }
        }
    }
    None
}

/// Number of determinants of lⁿ by 2M_J, indexed by 2M_J + offset with
/// offset = the largest |2M_J|.
fn subshell_distribution(l: u32, n: u32) -> (Vec<f64>, i64) {
    // 2m_j = 2m_l + 2m_s of each spin-orbital.
    let li = i64::from(l);
    let mut values = Vec::new();
    for m in -li..=li {
        values.push(2 * m + 1);
        values.push(2 * m - 1);
    }
    let n = n as usize;
    let offset: i64 = {
        let mut sorted = values.clone();
        sorted.sort_unstable_by(|a, b| b.cmp(a));
        sorted.iter().take(n).sum::<i64>().abs()
    };
    let width = (2 * offset + 1) as usize;
    // counts[k][M] after some spin-orbitals: k electrons placed, total 2M_J = M.
    let mut counts = vec![vec![0.0f64; width]; n + 1];
    if let Some(first) = counts
        .first_mut()
        .and_then(|row| row.get_mut(offset as usize))
    {
        *first = 1.0;
    }
    for &v in &values {
        for k in (1..=n).rev() {
            let (lower, upper) = counts.split_at_mut(k);
            let (Some(from), Some(to)) = (lower.last(), upper.first_mut()) else {
                continue;
            };
            for (m, &c) in from.iter().enumerate() {
                if c == 0.0 {
                    continue;
                }
                let target = m as i64 + v;
                if (0..width as i64).contains(&target) {
                    to[target as usize] += c;
                }
            }
        }
    }
    (counts.pop().unwrap_or_default(), offset)
}

/// Count the determinants and J-block states of `configurations` (nothing is
/// built; subshells with l beyond `max_l` count as closed).
pub(crate) fn estimate(configurations: &[Configuration], max_l: u32) -> SizeEstimate {
    let mut estimate = SizeEstimate::default();
    // Per parity, the number of determinants by 2M_J (offset by `OFFSET`).
    let mut by_parity: Vec<(Parity, std::collections::BTreeMap<i64, f64>)> = Vec::new();
    for configuration in configurations {
        let mut total: std::collections::BTreeMap<i64, f64> = [(0, 1.0)].into_iter().collect();
        let mut determinants = 1u64;
        for s in configuration.subshells() {
            if s.l > max_l || s.is_closed() {
                continue;
            }
            determinants = determinants
                .saturating_mul(binomial(u64::from(s.capacity()), u64::from(s.occupancy)));
            let (counts, offset) = subshell_distribution(s.l, s.occupancy);
            let mut next = std::collections::BTreeMap::new();
            for (&m1, &c1) in &total {
                for (i, &c2) in counts.iter().enumerate() {
                    if c2 != 0.0 {
                        *next.entry(m1 + i as i64 - offset).or_insert(0.0) += c1 * c2;
                    }
                }
            }
            total = next;
        }
        estimate.determinants.push(determinants);
        let parity = configuration.parity();
        match by_parity.iter_mut().find(|(p, _)| *p == parity) {
            Some((_, sum)) => {
                for (m, c) in total {
                    *sum.entry(m).or_insert(0.0) += c;
                }
            }
            None => by_parity.push((parity, total)),
        }
    }
    by_parity.sort_by_key(|(p, _)| *p != Parity::Even);
    for (parity, counts) in by_parity {
        let top = counts.keys().copied().max().unwrap_or(0);
        let mut two_j = top;
        while two_j >= 0 {
            let here = counts.get(&two_j).copied().unwrap_or(0.0);
            let above = counts.get(&(two_j + 2)).copied().unwrap_or(0.0);
            let states = (here - above).round();
            if states > 0.0 {
                estimate.j_blocks.push(JBlockSize {
                    parity,
                    two_j: two_j as u32,
                    states: states as usize,
                });
            }
            two_j -= 2;
        }
    }
    estimate
        .j_blocks
        .sort_by_key(|b| (b.parity != Parity::Even, b.two_j));
    estimate
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sizes(labels: &[&str]) -> SizeEstimate {
        let configs: Vec<Configuration> = labels.iter().map(|l| l.parse().unwrap()).collect();
        estimate(&configs, 7)
    }

    #[test]
    fn level_counts_of_textbook_configurations() {
        // p²: ³P₀,₁,₂ ¹D₂ ¹S₀ — J = 0: 2, J = 1: 1, J = 2: 2 (Condon & Shortley
        // 1935, table 1⁷).
        let p2 = sizes(&["2p2"]);
        let by_j: Vec<_> = p2.j_blocks.iter().map(|b| (b.two_j, b.states)).collect();
        assert_eq!(by_j, vec![(0, 2), (2, 1), (4, 2)]);
        assert_eq!(p2.determinants, vec![15]);
        // d³ has 19 levels and f³ 41; 3d⁵ has 37 (Nielson & Koster 1963 term lists;
        // the same counts as the levels the model gives in benches/results).
        assert_eq!(sizes(&["3d3"]).levels(), 19);
        assert_eq!(sizes(&["4f3"]).levels(), 41);
        assert_eq!(sizes(&["3d5"]).levels(), 37);
        // 4f⁷ has 327 levels, 4f⁶ 295 (Nielson & Koster 1963).
        assert_eq!(sizes(&["4f7"]).levels(), 327);
        assert_eq!(sizes(&["4f6"]).levels(), 295);
    }

    #[test]
    fn a_subshell_beyond_the_limit_is_found_by_its_count() {
        // C(22, 11) = 705 432 determinants of h¹¹ (common practice, no source).
        let configs: Vec<Configuration> = vec!["6h11".parse().unwrap()];
        let found = too_large_subshell(&configs, 7).unwrap();
        assert_eq!(found.determinants, 705_432);
        // f⁷: C(14, 7) = 3432 is inside.
        let configs: Vec<Configuration> = vec!["4f7".parse().unwrap()];
        assert!(too_large_subshell(&configs, 7).is_none());
    }
}
