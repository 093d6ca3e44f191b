//! Names of the parameters of a level model.
//!
//! | parameter | name | meaning |
//! |---|---|---|
//! | E_av | `Eav` | configuration average energy (centre of gravity) |
//! | F^k(nl, nl) | `F2(3d)` (also read: `F2(3d,3d)`) | direct Slater integral within a subshell |
//! | F^k(nl, n'l') | `F2(3d,4p)` | direct Slater integral between subshells |
//! | G^k(nl, n'l') | `G1(3d,4p)` | exchange Slater integral |
//! | ζ_nl | `zeta(3d)` | spin–orbit parameter |
//! | R^k(ab, cd) | `R2(3d3d,3d4s)` | configuration-interaction integral ∫∫ P_a P_c r<^k/r>^(k+1) P_b P_d |
//!
//! All integrals are unnormalised (F^k, not F_k = F^k/D_k). A parameter belongs to
//! one configuration (E_av, F, G, ζ) or to one pair of interacting configurations
//! (R^k); its full name adds that scope after `@`: `zeta(3p)@3s.3p`,
//! `R1(3s3s,3p3p)@3s2~3p2`.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use super::orbital::Orbital;
use crate::notation::Configuration;

/// What a parameter multiplies: the radial part of the Hamiltonian.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Radial {
    /// The configuration average energy E_av.
    Average,
    /// Direct integral F^k(a, b), with a ≤ b (a = b within one subshell), k > 0.
    Direct {
        /// Multipole order k (even).
        k: u32,
        /// First orbital.
        a: Orbital,
        /// Second orbital.
        b: Orbital,
    },
    /// Exchange integral G^k(a, b), with a < b.
    Exchange {
        /// Multipole order k.
        k: u32,
        /// First orbital.
        a: Orbital,
        /// Second orbital.
        b: Orbital,
    },
    /// Spin–orbit parameter ζ of one orbital.
    SpinOrbit {
        /// The orbital.
        a: Orbital,
    },
    /// Configuration-interaction integral R^k(ab, cd), in the canonical order of
    /// [`Radial::interaction`].
    Interaction {
        /// Multipole order k.
        k: u32,
        /// The orbitals a, b, c, d.
        orbitals: [Orbital; 4],
    },
}

impl Radial {
    /// R^k(ab, cd), named in canonical form. R^k(ab,cd) = ∫∫ P_a(1)P_c(1)
    /// (r<^k/r>^(k+1)) P_b(2)P_d(2): a, b are the orbitals replaced, c, d the ones
    /// they become. The name keeps that reading and picks the smallest of its four
    /// equivalent spellings: R^k(ab,cd) = R^k(cd,ab) = R^k(ba,dc) = R^k(dc,ba).
    /// Other spellings of the same integral (a↔c alone) are recognised by
    /// [`Radial::same_integral`].
    pub fn interaction(k: u32, a: Orbital, b: Orbital, c: Orbital, d: Orbital) -> Radial {
        let images = [[a, b, c, d], [c, d, a, b], [b, a, d, c], [d, c, b, a]];
        let orbitals = images.into_iter().min().unwrap_or([a, b, c, d]);
        Radial::Interaction { k, orbitals }
    }

    /// True when two parameters are the same radial integral: equal, or R^k
    /// integrals related by the symmetries a↔c, b↔d and (a,c)↔(b,d) of
    /// ∫∫ P_a P_c (1) P_b P_d (2) (Slater 1960, vol. 1, §13-3).
    pub fn same_integral(&self, other: &Radial) -> bool {
        fn class(k: u32, [a, b, c, d]: [Orbital; 4]) -> (u32, [Orbital; 4]) {
            let images = [
                [a, b, c, d],
                [c, b, a, d],
                [a, d, c, b],
                [c, d, a, b],
                [b, a, d, c],
                [d, a, b, c],
                [b, c, d, a],
                [d, c, b, a],
            ];
            (k, images.into_iter().min().unwrap_or([a, b, c, d]))
        }
        match (self, other) {
            (
                Radial::Interaction { k, orbitals },
                Radial::Interaction {
                    k: k2,
                    orbitals: o2,
                },
            ) => class(*k, *orbitals) == class(*k2, *o2),
            _ => self == other,
        }
    }

    /// Orbitals involved.
    pub fn orbitals(&self) -> Vec<Orbital> {
        match *self {
            Radial::Average => Vec::new(),
            Radial::Direct { a, b, .. } | Radial::Exchange { a, b, .. } => vec![a, b],
            Radial::SpinOrbit { a } => vec![a],
            Radial::Interaction { orbitals, .. } => orbitals.to_vec(),
        }
    }
}

impl fmt::Display for Radial {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Radial::Average => f.write_str("Eav"),
            Radial::Direct { k, a, b } if a == b => write!(f, "F{k}({a})"),
            Radial::Direct { k, a, b } => write!(f, "F{k}({a},{b})"),
            Radial::Exchange { k, a, b } => write!(f, "G{k}({a},{b})"),
            Radial::SpinOrbit { a } => write!(f, "zeta({a})"),
            Radial::Interaction {
                k,
                orbitals: [a, b, c, d],
            } => {
                write!(f, "R{k}({a}{b},{c}{d})")
            }
        }
    }
}

/// Split `R2(3d3d,3d4s)`-style orbital pairs: `3d3d` → [3d, 3d].
fn orbital_pair(text: &str) -> Option<[Orbital; 2]> {
    // The second orbital starts at the first digit after a letter.
    let split = text
        .char_indices()
        .skip(1)
        .find(|&(i, c)| {
            c.is_ascii_digit()
                && text[..i]
                    .chars()
                    .last()
                    .is_some_and(|p| p.is_ascii_alphabetic())
        })
        .map(|(i, _)| i)?;
    Some([text[..split].parse().ok()?, text[split..].parse().ok()?])
}

impl FromStr for Radial {
    type Err = String;

    /// Read a short parameter name (module table). `F2(3d,3d)` reads as `F2(3d)`.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let bad = || {
            format!(
                "'{s}' is not a parameter name; expected Eav, F2(3d), F2(3d,4p), G1(3d,4p), \
                 zeta(3d) or R2(3d3d,3d4s)"
            )
        };
        let s = s.trim();
        if s == "Eav" {
            return Ok(Radial::Average);
        }
        let (head, rest) = s.split_once('(').ok_or_else(bad)?;
        let inner = rest.strip_suffix(')').ok_or_else(bad)?;
        let args: Vec<&str> = inner.split(',').map(str::trim).collect();
        let orbital = |t: &str| t.parse::<Orbital>().map_err(|_| bad());
        if head == "zeta" {
            return match args.as_slice() {
                [a] => Ok(Radial::SpinOrbit { a: orbital(a)? }),
                _ => Err(bad()),
            };
        }
        // The letter is one character, which need not be one byte.
        let letter_end = head.chars().next().map_or(0, char::len_utf8);
        let (letter, digits) = head.split_at(letter_end);
        let k: u32 = digits.parse().map_err(|_| bad())?;
        match (letter, args.as_slice()) {
            ("F", [a]) => {
                let a = orbital(a)?;
                Ok(Radial::Direct { k, a, b: a })
            }
            ("F", [a, b]) => {
                let (a, b) = (orbital(a)?, orbital(b)?);
                Ok(Radial::Direct {
                    k,
                    a: a.min(b),
                    b: a.max(b),
                })
            }
            ("G", [a, b]) => {
                let (a, b) = (orbital(a)?, orbital(b)?);
                if a == b {
                    return Err(format!(
                        "'{s}': an exchange integral needs two different orbitals \
                         (within one subshell G^k = F^k; write F{k}({a}))"
                    ));
                }
                Ok(Radial::Exchange {
                    k,
                    a: a.min(b),
                    b: a.max(b),
                })
            }
            ("R", [ab, cd]) => {
                let [a, b] = orbital_pair(ab).ok_or_else(bad)?;
                let [c, d] = orbital_pair(cd).ok_or_else(bad)?;
                Ok(Radial::interaction(k, a, b, c, d))
            }
            _ => Err(bad()),
        }
    }
}

/// A radial dipole integral P(a,b) = ⟨a|r|b⟩ = ∫ P_a(r) r P_b(r) dr, in bohr, between
/// orbitals whose l differ by one: the radial part of every one-electron E1 matrix
/// element a → b. Named `P(3s,3p)` in model files; P(3s,3p) = P(3p,3s) (real
/// radial functions), so the orbitals are kept in (n, l) order.
///
/// Sign: the radial functions P_nl are taken positive near the nucleus, as the
/// radial module makes them; for hydrogen ⟨1s|r|2p⟩ = +1.290 and ⟨2s|r|2p⟩ = −5.196
/// bohr (Bethe & Salpeter 1957, table 13). A line strength is a square, so the sign
/// of one integral never matters; only when configuration mixing lets two integrals
/// add in one line does their relative sign change the result.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct DipoleIntegral {
    /// The lower orbital in (n, l) order.
    pub a: Orbital,
    /// The higher orbital in (n, l) order.
    pub b: Orbital,
}

impl DipoleIntegral {
    /// P(a,b) with the orbitals put in order; `None` unless their l differ by one.
    pub fn new(a: Orbital, b: Orbital) -> Option<DipoleIntegral> {
        (a.l.abs_diff(b.l) == 1).then(|| DipoleIntegral {
            a: a.min(b),
            b: a.max(b),
        })
    }
}

impl fmt::Display for DipoleIntegral {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "P({},{})", self.a, self.b)
    }
}

impl FromStr for DipoleIntegral {
    type Err = String;

    /// Read `P(3s,3p)` (or `P(3p,3s)`).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let bad = || {
            format!(
                "'{s}' is not a dipole integral; expected P(a,b) with orbitals whose l \
                 differ by one, such as P(3s,3p)"
            )
        };
        let inner = s
            .trim()
            .strip_prefix("P(")
            .and_then(|rest| rest.strip_suffix(')'))
            .ok_or_else(bad)?;
        let (a, b) = inner.split_once(',').ok_or_else(bad)?;
        let a: Orbital = a.trim().parse().map_err(|_| bad())?;
        let b: Orbital = b.trim().parse().map_err(|_| bad())?;
        DipoleIntegral::new(a, b).ok_or_else(bad)
    }
}

/// Where a parameter belongs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Scope {
    /// One configuration, by index in the model.
    Configuration(usize),
    /// The interaction of two configurations (indices, first < second).
    Interaction(usize, usize),
}

/// A parameter of a level model: its radial kind and where it belongs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct ParameterId {
    /// The configuration or pair it belongs to.
    pub scope: Scope,
    /// What it is.
    pub radial: Radial,
}

impl ParameterId {
    /// The full, unambiguous name: `zeta(3p)@3s.3p`, `R1(3s3s,3p3p)@3s2~3p2`.
    pub fn full_name(&self, configurations: &[Configuration]) -> String {
        format!("{}@{}", self.radial, scope_name(self.scope, configurations))
    }
}

/// The label of a scope: `3s.3p`, or `3s2~3p2` for an interaction.
pub fn scope_name(scope: Scope, configurations: &[Configuration]) -> String {
    let label = |i: usize| {
        configurations
            .get(i)
            .map_or_else(|| format!("#{i}"), |c| c.to_string())
    };
    match scope {
        Scope::Configuration(i) => label(i),
        Scope::Interaction(a, b) => format!("{}~{}", label(a), label(b)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn o(s: &str) -> Orbital {
        s.parse().unwrap()
    }

    #[test]
    fn names_print_and_read_back() {
        for name in [
            "Eav",
            "F2(3d)",
            "F2(3d,4p)",
            "G1(3d,4p)",
            "zeta(3d)",
            "R2(3d3d,3d4s)",
            "F4(10g)",
        ] {
            let radial: Radial = name.parse().unwrap();
            assert_eq!(radial.to_string(), name);
        }
        assert_eq!("F2(3d,3d)".parse::<Radial>().unwrap().to_string(), "F2(3d)");
        assert_eq!(
            "G1(4p,3d)".parse::<Radial>().unwrap().to_string(),
            "G1(3d,4p)"
        );
        assert!("G1(3d,3d)".parse::<Radial>().is_err());
        assert!("F2(3x)".parse::<Radial>().is_err());
        assert!("Q2(3d)".parse::<Radial>().is_err());
    }

    #[test]
    fn a_name_that_starts_with_a_non_ascii_letter_is_an_error_not_a_panic() {
        // Found by the fuzz target `notation` (tests/fuzz/reproducers/notation/):
        // the name was split after its first byte, inside the two-byte 'ޢ', and the
        // reader panicked. A model key such as "ޢ2(3p)" reached it. Bad input must
        // give an error (common practice, no source).
        for name in ["\u{7b2}2(3p)", "ζ(3p)", "Ф2(3d)", "é"] {
            let e = name.parse::<Radial>().unwrap_err();
            assert!(e.contains("is not a parameter name"), "{name}: {e}");
        }
    }

    #[test]
    fn interaction_integrals_have_one_canonical_name() {
        // R^k(ab,cd) = R^k(cd,ab) = R^k(ba,dc), and also = R^k(cb,ad) = R^k(ad,cb)
        // (symmetry of the two-electron integral; Slater 1960, vol. 1, §13-3;
        // common practice).
        let r = Radial::interaction(1, o("3s"), o("3s"), o("3p"), o("3p"));
        assert_eq!(r.to_string(), "R1(3s3s,3p3p)");
        assert_eq!(
            Radial::interaction(1, o("3p"), o("3p"), o("3s"), o("3s")),
            r
        );
        let other = Radial::interaction(1, o("3p"), o("3s"), o("3s"), o("3p"));
        assert_ne!(other, r);
        assert!(other.same_integral(&r) && r.same_integral(&other));
        let r = Radial::interaction(2, o("3d"), o("4s"), o("3d"), o("3d"));
        assert_eq!(r.to_string(), "R2(3d3d,3d4s)");
        assert!(!r.same_integral(&Radial::interaction(2, o("3d"), o("3d"), o("4s"), o("4s"))));
    }

    #[test]
    fn dipole_integral_names() {
        // ⟨a|r|b⟩ = ⟨b|r|a⟩ for real radial functions: one name for both orders.
        let p: DipoleIntegral = "P(3p,3s)".parse().unwrap();
        assert_eq!(p.to_string(), "P(3s,3p)");
        assert_eq!(" P(3s, 3p) ".parse::<DipoleIntegral>().unwrap(), p);
        for bad in ["P(3s,4s)", "P(3s,3d)", "P(3s)", "R(3s,3p)", "P(3s,3x)"] {
            assert!(bad.parse::<DipoleIntegral>().is_err(), "{bad}");
        }
    }
}
