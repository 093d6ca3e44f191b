//! The LS-coupled basis of a parity block: every term |γ L S⟩ of every
//! configuration, built by coupling the terms of the open subshells one after
//! another in (n, l) order with Clebsch–Gordan coefficients, and written out on
//! the block's Slater determinants at any (M_L, M_S).

use std::collections::HashMap;

use rustc_hash::FxHashMap;
use std::fmt;
use std::sync::Arc;

use serde::Serialize;

use super::orbital::{Determinant, SpinOrbitalLayout};
use super::shell::ShellTerms;
use crate::angular::clebsch_gordan;
use crate::notation::{
    ConfigPart, Configuration, Intermediate, LsTerm, Parity, Subshell, Term, TermMarks,
};

/// A sparse vector over determinants, sorted by determinant.
pub type DeterminantVector = Vec<(Determinant, f64)>;

/// A partial coupling: the term of each subshell so far, and (L, 2S) after each.
type CouplingPath = (Vec<usize>, Vec<(u32, u32)>);

/// One open subshell of a configuration.
#[derive(Debug, Clone)]
pub(crate) struct OpenShell {
    /// Index of the orbital in the block layout.
    pub shell: usize,
    /// The subshell (n, l, occupancy).
    pub subshell: Subshell,
}

/// How one configuration sits in its block.
#[derive(Debug, Clone)]
pub(crate) struct ConfigurationShells {
    /// Model index of the configuration.
    pub configuration: usize,
    /// Open subshells in (n, l) order.
    pub open: Vec<OpenShell>,
    /// Determinant of the subshells that are full here but open elsewhere in the block.
    pub closed: Determinant,
    /// Number of Slater determinants of the configuration, Π C(2(2l+1), n).
    pub determinant_count: f64,
    /// All subshells, in (n, l) order (for labels).
    pub subshells: Vec<Subshell>,
}

/// The readable label of an LS basis state: the configuration with the parent
/// terms that tell the state apart, and the final term, e.g. `3d4.(5D).4s 6D`,
/// `3d3 2D#1`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct TermLabel {
    /// The configuration with parent (intermediate) terms, as `notation` prints it.
    pub configuration: Configuration,
    /// The final LS term.
    pub term: LsTerm,
    /// Seniority of each open subshell's term, in coupling order.
    pub seniorities: Vec<u32>,
}

impl fmt::Display for TermLabel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.configuration, self.term)
    }
}

/// One LS basis state γLS of a parity block.
#[derive(Debug, Clone)]
pub struct BasisTerm {
    /// Model index of the configuration.
    pub configuration: usize,
    /// Total L.
    pub l: u32,
    /// Twice the total spin, 2S.
    pub two_s: u32,
    /// Its label.
    pub label: TermLabel,
    /// Position of the configuration in the block's list.
    pub(crate) local_configuration: usize,
    /// Term of each open subshell (index into its [`ShellTerms`]).
    pub(crate) shell_terms: Vec<usize>,
    /// (L, 2S) after coupling open subshells 0..=i; the last is (L, 2S) itself.
    pub(crate) couplings: Vec<(u32, u32)>,
}

/// Builds LS states on determinants for the configurations of one block.
#[derive(Debug, Clone)]
pub(crate) struct Coupler {
    pub layout: SpinOrbitalLayout,
    pub configurations: Vec<ConfigurationShells>,
    shells: HashMap<(u32, u32), Arc<ShellTerms>>,
}

/// Memo of coupled states and Clebsch–Gordan coefficients.
#[derive(Debug, Default)]
pub(crate) struct StateCache {
    states: FxHashMap<(Vec<u32>, i32, i32), Arc<DeterminantVector>>,
    cg: FxHashMap<[i32; 6], f64>,
}

impl StateCache {
    fn cg(&mut self, j1: u32, m1: i32, j2: u32, m2: i32, j: u32, m: i32) -> f64 {
        *self
            .cg
            .entry([j1 as i32, m1, j2 as i32, m2, j as i32, m])
            .or_insert_with(|| clebsch_gordan(j1, m1, j2, m2, j, m).unwrap_or(0.0))
    }
}

fn binomial(n: u32, k: u32) -> f64 {
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}

impl Coupler {
    /// The coupler of `configurations` (model index, configuration) on `layout`.
    pub fn new(layout: SpinOrbitalLayout, configurations: &[(usize, &Configuration)]) -> Coupler {
        let mut shells = HashMap::new();
        let mut list = Vec::new();
        for &(index, configuration) in configurations {
            let mut subshells: Vec<Subshell> = configuration.subshells().copied().collect();
            subshells.sort_by_key(|s| (s.n, s.l));
            let mut open = Vec::new();
            let mut closed = Determinant::empty();
            let mut determinant_count = 1.0;
            for subshell in &subshells {
                let orbital = super::Orbital {
                    n: subshell.n,
                    l: subshell.l,
                };
                let Some(shell) = layout.shell_index(orbital) else {
                    continue; // part of the common core
                };
                determinant_count *= binomial(subshell.capacity(), subshell.occupancy);
                if subshell.is_closed() {
                    let offset = layout.offset(shell);
                    for i in 0..subshell.capacity() as usize {
                        closed.insert(offset + i);
                    }
                } else {
                    shells
                        .entry((subshell.l, subshell.occupancy))
                        .or_insert_with(|| {
                            super::shell::shared_shell_terms(subshell.l, subshell.occupancy)
                        });
                    open.push(OpenShell {
                        shell,
                        subshell: *subshell,
                    });
                }
            }
            list.push(ConfigurationShells {
                configuration: index,
                open,
                closed,
                determinant_count,
                subshells,
            });
        }
        Coupler {
            layout,
            configurations: list,
            shells,
        }
    }

    fn shell_terms(&self, shell: &OpenShell) -> &ShellTerms {
        &self.shells[&(shell.subshell.l, shell.subshell.occupancy)]
    }

    /// Every LS term of configuration number `local` of the block.
    pub fn terms(&self, local: usize, parity: Parity) -> Vec<BasisTerm> {
        let config = &self.configurations[local];
        // Partial coupling paths: (shell terms, couplings).
        let mut paths: Vec<CouplingPath> = vec![(Vec::new(), Vec::new())];
        for shell in &config.open {
            let shell_terms = self.shell_terms(shell);
            let mut next = Vec::new();
            for (terms, couplings) in &paths {
                for (t, term) in shell_terms.terms.iter().enumerate() {
                    let mut new_terms = terms.clone();
                    new_terms.push(t);
                    match couplings.last() {
                        None => next.push((new_terms, vec![(term.l_total, term.two_s)])),
                        Some(&(l1, s1)) => {
                            for l in l1.abs_diff(term.l_total)..=(l1 + term.l_total) {
                                let mut s = s1.abs_diff(term.two_s);
                                while s <= s1 + term.two_s {
                                    let mut c = couplings.clone();
                                    c.push((l, s));
                                    next.push((new_terms.clone(), c));
                                    s += 2;
                                }
                            }
                        }
                    }
                }
            }
            paths = next;
        }
        paths
            .into_iter()
            .map(|(shell_terms, couplings)| {
                let &(l, two_s) = couplings.last().unwrap_or(&(0, 0));
                let label = self.label(config, &shell_terms, &couplings, parity);
                BasisTerm {
                    configuration: config.configuration,
                    l,
                    two_s,
                    label,
                    local_configuration: local,
                    shell_terms,
                    couplings,
                }
            })
            .collect()
    }

    fn label(
        &self,
        config: &ConfigurationShells,
        shell_terms: &[usize],
        couplings: &[(u32, u32)],
        parity: Parity,
    ) -> TermLabel {
        let mut parts = Vec::new();
        let mut seniorities = Vec::new();
        let mut open_index = 0;
        let mut l_sum = 0;
        let last = config.open.len().saturating_sub(1);
        let mut final_index = None;
        for subshell in &config.subshells {
            parts.push(ConfigPart::Subshell(*subshell));
            let Some(shell) = config.open.get(open_index) else {
                continue;
            };
            if shell.subshell != *subshell {
                continue;
            }
            let term = &self.shell_terms(shell).terms[shell_terms[open_index]];
            seniorities.push(term.seniority);
            l_sum += subshell.l * subshell.occupancy;
            let shell_parity = Parity::from_l_sum(subshell.l * subshell.occupancy);
            let ambiguous =
                subshell.occupancy >= 2 && subshell.occupancy + 2 <= subshell.capacity();
            if config.open.len() == 1 {
                final_index = term.index;
            } else if ambiguous {
                parts.push(intermediate(
                    term.l_total,
                    term.two_s,
                    shell_parity,
                    term.index,
                ));
            }
            if open_index >= 1 && open_index < last {
                let (l, s) = couplings[open_index];
                parts.push(intermediate(l, s, Parity::from_l_sum(l_sum), None));
            }
            open_index += 1;
        }
        let &(l, two_s) = couplings.last().unwrap_or(&(0, 0));
        TermLabel {
            configuration: Configuration { parts },
            term: LsTerm {
                multiplicity: two_s + 1,
                l,
                parity,
                index: final_index,
                marks: TermMarks::default(),
            },
            seniorities,
        }
    }

    /// The state |γ L S M_L M_S⟩ of `term` on the block's determinants, sorted.
    pub fn state(
        &self,
        term: &BasisTerm,
        m_l: i32,
        two_m_s: i32,
        cache: &mut StateCache,
    ) -> Arc<DeterminantVector> {
        let config = &self.configurations[term.local_configuration];
        if config.open.is_empty() {
            let value = if m_l == 0 && two_m_s == 0 { 1.0 } else { 0.0 };
            return Arc::new(if value == 0.0 {
                Vec::new()
            } else {
                vec![(config.closed, 1.0)]
            });
        }
        let depth = config.open.len() - 1;
        let open = self.partial(term, depth, m_l, two_m_s, cache);
        let mut out: DeterminantVector = open
            .iter()
            .map(|(d, c)| (d.union(&config.closed), *c))
            .collect();
        out.sort_by_key(|a| a.0);
        Arc::new(out)
    }

    /// The coupled state of open subshells 0..=depth at (M_L, 2M_S), memoised.
    fn partial(
        &self,
        term: &BasisTerm,
        depth: usize,
        m_l: i32,
        two_m_s: i32,
        cache: &mut StateCache,
    ) -> Arc<DeterminantVector> {
        let (l, s) = term.couplings[depth];
        if m_l.unsigned_abs() > l || two_m_s.unsigned_abs() > s || (s as i32 - two_m_s) % 2 != 0 {
            return Arc::new(Vec::new());
        }
        let mut key = vec![term.local_configuration as u32, depth as u32];
        key.extend(
            &term.shell_terms[..=depth]
                .iter()
                .map(|&t| t as u32)
                .collect::<Vec<_>>(),
        );
        for &(a, b) in &term.couplings[..=depth] {
            key.extend([a, b]);
        }
        let key = (key, m_l, two_m_s);
        if let Some(found) = cache.states.get(&key) {
            return found.clone();
        }
        let config = &self.configurations[term.local_configuration];
        let shell = &config.open[depth];
        let shell_term = &self.shell_terms(shell).terms[term.shell_terms[depth]];
        let offset = self.layout.offset(shell.shell);
        let place = |mask: u32| {
            let mut d = Determinant::empty();
            let mut bits = mask;
            while bits != 0 {
                let b = bits.trailing_zeros() as usize;
                bits &= bits - 1;
                d.insert(offset + b);
            }
            d
        };
        let result: DeterminantVector = if depth == 0 {
            shell_term
                .state(m_l, two_m_s)
                .iter()
                .map(|&(mask, c)| (place(mask), c))
                .collect()
        } else {
            let (l1, s1) = term.couplings[depth - 1];
            let (l2, s2) = (shell_term.l_total, shell_term.two_s);
            let mut sum: FxHashMap<Determinant, f64> = FxHashMap::default();
            for m1 in -(l1 as i32)..=l1 as i32 {
                let m2 = m_l - m1;
                if m2.unsigned_abs() > l2 {
                    continue;
                }
                let mut ms1 = -(s1 as i32);
                while ms1 <= s1 as i32 {
                    let ms2 = two_m_s - ms1;
                    if ms2.unsigned_abs() <= s2 {
                        let cg = cache.cg(2 * l1, 2 * m1, 2 * l2, 2 * m2, 2 * l, 2 * m_l)
                            * cache.cg(s1, ms1, s2, ms2, s, two_m_s);
                        if cg != 0.0 {
                            let left = self.partial(term, depth - 1, m1, ms1, cache);
                            let right = shell_term.state(m2, ms2);
                            for (dl, cl) in left.iter() {
                                for &(mask, cr) in right {
                                    // Subshell `depth` comes after every earlier one in
                                    // the spin-orbital order: the product is already
                                    // in ascending order, sign +1.
                                    *sum.entry(dl.union(&place(mask))).or_default() += cg * cl * cr;
                                }
                            }
                        }
                    }
                    ms1 += 2;
                }
            }
            let mut v: DeterminantVector =
                sum.into_iter().filter(|(_, c)| c.abs() > 1e-13).collect();
            v.sort_by_key(|a| a.0);
            v
        };
        let result = Arc::new(result);
        cache.states.insert(key, result.clone());
        result
    }
}

fn intermediate(l: u32, two_s: u32, parity: Parity, index: Option<u32>) -> ConfigPart {
    ConfigPart::Intermediate(Intermediate {
        term: Term::Ls(LsTerm {
            multiplicity: two_s + 1,
            l,
            parity,
            index,
            marks: TermMarks::default(),
        }),
        j: None,
    })
}

/// Dot product of two sorted determinant vectors, each entry weighted by `weight`.
pub(crate) fn weighted_dot(
    a: &[(Determinant, f64)],
    b: &[(Determinant, f64)],
    weight: impl Fn(&Determinant) -> f64,
) -> f64 {
    let (mut i, mut j, mut sum) = (0, 0, 0.0);
    while i < a.len() && j < b.len() {
        match a[i].0.cmp(&b[j].0) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                sum += a[i].1 * b[j].1 * weight(&a[i].0);
                i += 1;
                j += 1;
            }
        }
    }
    sum
}
