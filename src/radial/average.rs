//! The average energy of a configuration as a sum of radial integrals.
//!
//! Averaged over all the states of a configuration (all determinants, equally
//! weighted), the energy is (Slater 1960, vol. II, §21; Cowan 1981, eq. 6.38):
//!
//! ```text
//! E_av = Σ_a q_a I(a)
//!      + Σ_a q_a(q_a−1)/2 [F⁰(a,a) − (2l_a+1)/(4l_a+1) Σ_{k>0} (l_a k l_a; 0 0 0)² F^k(a,a)]
//!      + Σ_{a<b} q_a q_b [F⁰(a,b) − ½ Σ_k (l_a k l_b; 0 0 0)² G^k(a,b)]
//! ```
//!
//! with q_a the occupancy of subshell a and I(a) = ⟨a| −½d²/dr² + l(l+1)/(2r²) − Z/r |a⟩
//! its one-electron energy. [`EnergyExpression::new`] holds the two-electron part
//! as a list of [`SlaterTerm`]s; the Hartree–Fock equations are derived from the
//! same list, so energy and equations always agree.

use crate::notation::Subshell;

use super::three_j::three_j_zero_squared;

/// Direct (F^k) or exchange (G^k) Slater integral.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SlaterKind {
    /// F^k(a,b) = R^k(ab, ab).
    Direct,
    /// G^k(a,b) = R^k(ab, ba).
    Exchange,
}

/// One two-electron term c · F^k(a,b) or c · G^k(a,b) of an energy expression,
/// with a and b indices into the subshell list (a ≤ b).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlaterTerm {
    /// Direct or exchange.
    pub kind: SlaterKind,
    /// Multipole order k.
    pub k: u32,
    /// First subshell (index).
    pub a: usize,
    /// Second subshell (index); equal to `a` for the interactions within a subshell.
    pub b: usize,
    /// The coefficient c.
    pub coefficient: f64,
}

/// An energy expression Σ_a q_a I(a) + Σ c F^k + Σ c G^k: the occupancies give the
/// one-electron part, the [`SlaterTerm`]s the two-electron part (hartree when the
/// integrals are in hartree).
///
/// [`EnergyExpression::new`] builds E_av of a configuration (the default
/// everywhere); [`super::term::s_l_term_expression`] builds the energy of one
/// term of a configuration with an s and an l electron outside closed shells.
#[derive(Debug, Clone, PartialEq)]
pub struct EnergyExpression {
    /// The subshells, in the order the terms index them.
    pub subshells: Vec<Subshell>,
    /// The two-electron terms.
    pub terms: Vec<SlaterTerm>,
}

/// The coefficient of F^k(a,a), k > 0, per pair of equivalent electrons in E_av:
/// −(2l+1)/(4l+1) (l k l; 0 0 0)².
pub fn equivalent_exchange_coefficient(l: u32, k: u32) -> f64 {
    -((2 * l + 1) as f64) / ((4 * l + 1) as f64) * three_j_zero_squared(l, k, l)
}

/// The coefficient of G^k(a,b) per pair of electrons in two different subshells in
/// E_av: −½ (l_a k l_b; 0 0 0)².
pub fn shell_exchange_coefficient(la: u32, lb: u32, k: u32) -> f64 {
    -0.5 * three_j_zero_squared(la, k, lb)
}

/// The k of G^k(a,b): |l_a − l_b|, |l_a − l_b| + 2, …, l_a + l_b.
pub fn exchange_orders(la: u32, lb: u32) -> impl Iterator<Item = u32> {
    (la.abs_diff(lb)..=la + lb).step_by(2)
}

/// The k > 0 of F^k(a,a) within a subshell of l: 2, 4, …, 2l.
pub fn direct_orders(l: u32) -> impl Iterator<Item = u32> {
    (2..=2 * l).step_by(2)
}

/// The former name of [`EnergyExpression`], whose [`EnergyExpression::new`]
/// builds E_av.
pub type AverageEnergyExpression = EnergyExpression;

impl EnergyExpression {
    /// E_av for a configuration's subshells (each written once).
    pub fn new(subshells: &[Subshell]) -> EnergyExpression {
        let mut terms = Vec::new();
        for (a, shell) in subshells.iter().enumerate() {
            let q = shell.occupancy as f64;
            let pairs = q * (q - 1.0) / 2.0;
            if pairs > 0.0 {
                terms.push(SlaterTerm {
                    kind: SlaterKind::Direct,
                    k: 0,
                    a,
                    b: a,
                    coefficient: pairs,
                });
                for k in direct_orders(shell.l) {
                    terms.push(SlaterTerm {
                        kind: SlaterKind::Direct,
                        k,
                        a,
                        b: a,
                        coefficient: pairs * equivalent_exchange_coefficient(shell.l, k),
                    });
                }
            }
            for (b, other) in subshells.iter().enumerate().skip(a + 1) {
                let pairs = q * other.occupancy as f64;
                terms.push(SlaterTerm {
                    kind: SlaterKind::Direct,
                    k: 0,
                    a,
                    b,
                    coefficient: pairs,
                });
                for k in exchange_orders(shell.l, other.l) {
                    terms.push(SlaterTerm {
                        kind: SlaterKind::Exchange,
                        k,
                        a,
                        b,
                        coefficient: pairs * shell_exchange_coefficient(shell.l, other.l, k),
                    });
                }
            }
        }
        EnergyExpression {
            subshells: subshells.to_vec(),
            terms,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rational(s: &str) -> f64 {
        match s.split_once('/') {
            Some((p, q)) => p.parse::<f64>().unwrap() / q.parse::<f64>().unwrap(),
            None if s.is_empty() => 0.0,
            None => s.parse().unwrap(),
        }
    }

    /// The degeneracy-weighted mean of the term energies of tests/data/check-values/term_energies.csv
    /// (sympy, own Slater-determinant code; copied from ../shared/check-values) is
    /// the configuration-average energy: our coefficients must equal it.
    #[test]
    fn average_matches_weighted_mean_of_sympy_term_energies() {
        let text = include_str!("../../tests/data/check-values/term_energies.csv");
        let mut lines = text.lines().skip(1);
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
        // config -> (Σ weight, Σ weight × coefficient per integral column)
        let mut sums: std::collections::BTreeMap<String, (f64, Vec<f64>)> = Default::default();
        let integrals = [
            "F^0", "F^2", "F^4", "F^6", "G^0", "G^1", "G^2", "G^3", "G^4", "G^5", "G^6",
        ];
        for line in lines {
            let f: Vec<&str> = line.split(',').collect();
            if f[column("block_row")] != f[column("block_col")] {
                continue; // off-diagonal element of the d3 2D block: no part of the trace
            }
            let l = rational(f[column("L")]);
            let s = rational(f[column("S")]);
            let weight = (2.0 * s + 1.0) * (2.0 * l + 1.0);
            let entry = sums
                .entry(f[column("config")].to_string())
                .or_insert((0.0, vec![0.0; integrals.len()]));
            entry.0 += weight;
            for (i, name) in integrals.iter().enumerate() {
                entry.1[i] += weight * rational(f[column(name)]);
            }
        }
        let letter = |c: char| {
            crate::notation::ORBITAL_LETTERS
                .iter()
                .position(|&b| b as char == c)
                .unwrap() as u32
        };
        let mut checked = 0;
        for (config, (weight, sums)) in sums {
            let mean: Vec<f64> = sums.iter().map(|s| s / weight).collect();
            let shells: Vec<Subshell> = if let Some((a, b)) = config.split_once('.') {
                let la = letter(a.chars().next().unwrap());
                let lb = letter(b.chars().next().unwrap());
                vec![
                    Subshell {
                        n: 10,
                        l: la,
                        occupancy: 1,
                    },
                    Subshell {
                        n: 11,
                        l: lb,
                        occupancy: 1,
                    },
                ]
            } else {
                let l = letter(config.chars().next().unwrap());
                let q: u32 = config[1..].parse().unwrap();
                vec![Subshell {
                    n: 10,
                    l,
                    occupancy: q,
                }]
            };
            let expression = AverageEnergyExpression::new(&shells);
            let mut ours = vec![0.0; integrals.len()];
            for term in &expression.terms {
                let index = match term.kind {
                    SlaterKind::Direct if term.a == term.b || term.k == 0 => (term.k / 2) as usize,
                    SlaterKind::Direct => unreachable!("no F^k, k>0, between shells in E_av"),
                    SlaterKind::Exchange => 4 + term.k as usize,
                };
                ours[index] += term.coefficient;
            }
            for (i, name) in integrals.iter().enumerate() {
                assert!(
                    (ours[i] - mean[i]).abs() < 1e-13,
                    "{config}: {name} ours {} vs mean of terms {}",
                    ours[i],
                    mean[i]
                );
            }
            checked += 1;
        }
        assert_eq!(checked, 14, "configurations checked");
    }

    #[test]
    fn helium_ground_configuration_is_one_coulomb_integral() {
        // 1s²: E = 2 I(1s) + F⁰(1s,1s) (any textbook on two-electron atoms).
        let shells = [Subshell {
            n: 1,
            l: 0,
            occupancy: 2,
        }];
        let e = AverageEnergyExpression::new(&shells);
        assert_eq!(
            e.terms,
            vec![SlaterTerm {
                kind: SlaterKind::Direct,
                k: 0,
                a: 0,
                b: 0,
                coefficient: 1.0
            }]
        );
    }
}
