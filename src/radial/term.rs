//! The energy of one term of a configuration with an s electron and an l electron
//! outside closed shells (He 1s2s, 1s2p; Mg 3s3p; Ca 4s3d).
//!
//! Closed shells interact alike with every state of the configuration, so the terms
//! ¹L and ³L of s·l differ from E_av only in the exchange integral of the open pair
//! (Condon & Shortley 1935, §7.5; Slater 1960, vol. I, ch. 13; the term energies of
//! s.s', s.p, s.d, s.f in tests/data/check-values/term_energies.csv, sympy):
//!
//! ```text
//! E(^{2S+1}L) = … + F⁰(s,l) ± G^l(s,l)/(2l+1)     (+ singlet, − triplet)
//! E_av        = … + F⁰(s,l) − G^l(s,l)/(2(2l+1))
//! ```
//!
//! [`s_l_term_expression`] builds that expression; Hartree–Fock for it is
//! [`super::hartree_fock::hartree_fock_term`].

use crate::notation::Subshell;

use super::RadialError;
use super::average::{EnergyExpression, SlaterKind};

/// The total spin of the open s·l pair.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PairSpin {
    /// S = 0, the ¹L term.
    Singlet,
    /// S = 1, the ³L term.
    Triplet,
}

impl PairSpin {
    /// The spin multiplicity 2S + 1.
    pub fn multiplicity(self) -> u32 {
        match self {
            PairSpin::Singlet => 1,
            PairSpin::Triplet => 3,
        }
    }

    /// The spin of multiplicity 1 or 3, if it is one of them.
    pub fn from_multiplicity(multiplicity: u32) -> Option<PairSpin> {
        match multiplicity {
            1 => Some(PairSpin::Singlet),
            3 => Some(PairSpin::Triplet),
            _ => None,
        }
    }

    /// The coefficient of G^l(s,l) in the term energy: ±1/(2l+1).
    pub fn exchange_coefficient(self, l: u32) -> f64 {
        let magnitude = 1.0 / (2 * l + 1) as f64;
        match self {
            PairSpin::Singlet => magnitude,
            PairSpin::Triplet => -magnitude,
        }
    }
}

/// The indices (s, l) of the two singly occupied subshells when every other
/// subshell is closed and one of the two is an s subshell; `None` otherwise.
pub fn open_s_l_pair(subshells: &[Subshell]) -> Option<(usize, usize)> {
    let open: Vec<usize> = (0..subshells.len())
        .filter(|&a| !subshells[a].is_closed())
        .collect();
    let &[a, b] = open.as_slice() else {
        return None;
    };
    if subshells[a].occupancy != 1 || subshells[b].occupancy != 1 {
        return None;
    }
    match (subshells[a].l, subshells[b].l) {
        (0, _) => Some((a, b)),
        (_, 0) => Some((b, a)),
        _ => None,
    }
}

/// The energy expression of the term ^{2S+1}L of closed shells + s + l: E_av with
/// the coefficient of G^l(s,l) replaced by ±1/(2l+1) (see the module notes).
///
/// Subshells are those of the configuration, each written once; an error names
/// the configuration when it is not of the form closed shells + s¹ + l¹.
pub fn s_l_term_expression(
    subshells: &[Subshell],
    spin: PairSpin,
) -> Result<EnergyExpression, RadialError> {
    let Some((s, l)) = open_s_l_pair(subshells) else {
        return Err(RadialError::InvalidConfiguration {
            configuration: subshells
                .iter()
                .map(|s| s.to_string())
                .collect::<Vec<_>>()
                .join(" "),
            problem: "a term energy needs one s electron and one other electron \
                      outside closed shells"
                .to_string(),
        });
    };
    let mut expression = EnergyExpression::new(subshells);
    let k = subshells[l].l;
    let pair = (s.min(l), s.max(l));
    let mut found = 0;
    for term in &mut expression.terms {
        if term.kind == SlaterKind::Exchange && (term.a, term.b) == pair && term.k == k {
            term.coefficient = spin.exchange_coefficient(k);
            found += 1;
        }
    }
    debug_assert_eq!(found, 1, "E_av has one G^l(s,l) term");
    Ok(expression)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rational(s: &str) -> f64 {
        match s.split_once('/') {
            Some((p, q)) => p.parse::<f64>().unwrap() / q.parse::<f64>().unwrap(),
            None => s.parse().unwrap(),
        }
    }

    /// Our term expressions against the term energies of s.s', s.p, s.d and s.f in
    /// tests/data/check-values/term_energies.csv (sympy, Slater-determinant method):
    /// every integral's coefficient, for both terms.
    #[test]
    fn s_l_terms_match_sympy_term_energies() {
        let text = include_str!("../../tests/data/check-values/term_energies.csv");
        let mut lines = text.lines().skip(1);
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
        let mut checked = 0;
        for line in lines {
            let f: Vec<&str> = line.split(',').collect();
            let config = f[column("config")];
            let l = match config {
                "s.s'" => 0,
                "s.p" => 1,
                "s.d" => 2,
                "s.f" => 3,
                _ => continue,
            };
            let spin =
                PairSpin::from_multiplicity((2.0 * rational(f[column("S")]) + 1.0).round() as u32)
                    .unwrap();
            let shells = [
                Subshell {
                    n: 2,
                    l: 0,
                    occupancy: 1,
                },
                Subshell {
                    n: 3,
                    l,
                    occupancy: 1,
                },
            ];
            let expression = s_l_term_expression(&shells, spin).unwrap();
            let mut ours = std::collections::BTreeMap::new();
            for term in &expression.terms {
                let name = match term.kind {
                    SlaterKind::Direct => format!("F^{}", term.k),
                    SlaterKind::Exchange => format!("G^{}", term.k),
                };
                *ours.entry(name).or_insert(0.0) += term.coefficient;
            }
            for name in &header[column("F^0")..] {
                let expected = rational(f[column(name)]);
                let got = ours.get(*name).copied().unwrap_or(0.0);
                assert!(
                    (got - expected).abs() < 1e-14,
                    "{config} {}: {name} ours {got} vs sympy {expected}",
                    f[column("term")]
                );
            }
            checked += 1;
        }
        assert_eq!(checked, 8, "terms checked");
    }

    #[test]
    fn closed_shells_keep_their_average_coefficients() {
        // Mg 3s3p ³P: only the G¹(3s,3p) coefficient differs from E_av
        // (−1/3 instead of −1/6; Condon & Shortley 1935, §7.5).
        let config: crate::notation::Configuration = "1s2 2s2 2p6 3s 3p".parse().unwrap();
        let shells: Vec<Subshell> = config.subshells().copied().collect();
        let average = EnergyExpression::new(&shells);
        let triplet = s_l_term_expression(&shells, PairSpin::Triplet).unwrap();
        let changed: Vec<_> = average
            .terms
            .iter()
            .zip(&triplet.terms)
            .filter(|(a, t)| a != t)
            .collect();
        assert_eq!(changed.len(), 1);
        let (a, t) = changed[0];
        assert_eq!((a.kind, a.k, a.a, a.b), (SlaterKind::Exchange, 1, 3, 4));
        assert!((a.coefficient + 1.0 / 6.0).abs() < 1e-15);
        assert!((t.coefficient + 1.0 / 3.0).abs() < 1e-15);
    }

    #[test]
    fn other_configurations_are_refused() {
        for config in ["1s2", "1s2 2s2 2p", "1s 2p2", "2p 3d", "1s2 2s2 2p5 3s"] {
            let config: crate::notation::Configuration = config.parse().unwrap();
            let shells: Vec<Subshell> = config.subshells().copied().collect();
            assert!(
                s_l_term_expression(&shells, PairSpin::Singlet).is_err(),
                "{config}"
            );
        }
    }
}
