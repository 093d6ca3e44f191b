//! The label of a level: configuration, term and J, usable as a key.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use crate::notation::{Configuration, HalfInt, Parity, Species, Term};

/// A level's label: configuration, term and J, as in `1s.2p 3P° 2` or
/// `2s2.2p5.(2P°<3/2>).3s 2[3/2]° 1`.
///
/// The three parts are parsed and printed only through [`crate::notation`], so a
/// label printed by one part of the program (the assign CSV, a level table) reads
/// back equal in another (the level optimisation). Labels are `Eq + Hash + Ord`:
/// with the [`Species`] they identify a level, and serve as map keys.
///
/// A label read from a table ([`LevelLabel::from_fields`]) is kept as printed, even
/// when it is incomplete (no configuration: an empty configuration; no term: a
/// [`Term::Unnamed`] with the configuration's parity) or inconsistent (a term whose
/// parity is not the configuration's, a J the term does not allow):
/// [`LevelLabel::warnings`] says what is odd about it. The term's parity is the
/// level's parity. [`LevelLabel::new`] refuses inconsistent labels, for labels built
/// by the program.
///
/// ```
/// use termsight::levels::LevelLabel;
/// let label = LevelLabel::from_fields("1s.2p", "3P*", "2").unwrap();
/// assert_eq!(label.to_string(), "1s.2p 3P° 2");
/// assert_eq!(label, "1s.2p 3P° 2".parse().unwrap());
/// // A published label with a parity that disagrees with its configuration is kept.
/// let odd = LevelLabel::from_fields("3d6.(3H).4s.4p.(1P*)", "58661e", "4").unwrap();
/// assert_eq!(odd.warnings().len(), 1);
/// ```
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct LevelLabel {
    /// The electron configuration, with any parent terms; empty when not given.
    pub configuration: Configuration,
    /// The term, in LS, pair or jj coupling, or only the parity; it carries the parity.
    pub term: Term,
    /// Total angular momentum J.
    pub j: HalfInt,
}

/// A label that cannot be read or is not a possible level: the part at fault and why.
/// Also used for the warnings of [`LevelLabel::warnings`].
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{problem}")]
pub struct LabelError {
    /// Which part is at fault: `configuration`, `term` or `J` (the column names
    /// of level tables).
    pub part: &'static str,
    /// What is wrong, quoting the label.
    pub problem: String,
}

impl LevelLabel {
    /// A checked label. Fails when the term's parity differs from the
    /// configuration's ((−1)^Σl), or when J is not allowed by the term (see
    /// [`LevelLabel::warnings`]).
    pub fn new(configuration: Configuration, term: Term, j: HalfInt) -> Result<Self, LabelError> {
        let label = LevelLabel {
            configuration,
            term,
            j,
        };
        match label.warnings().into_iter().next() {
            Some(problem) => Err(problem),
            None => Ok(label),
        }
    }

    /// Read a label given as three fields (the columns of level tables and of the
    /// assign CSV): configuration, term and J in any notation that
    /// [`crate::notation`] reads (`3P*`, `3P°` and `3Po` are the same term). An
    /// empty configuration is a level without one; an empty term keeps only the
    /// configuration's parity. J is required. The label is kept as printed: see
    /// [`LevelLabel::warnings`] for its consistency.
    pub fn from_fields(configuration: &str, term: &str, j: &str) -> Result<Self, LabelError> {
        let configuration: Configuration = if configuration.trim().is_empty() {
            Configuration { parts: Vec::new() }
        } else {
            configuration.parse().map_err(|e| LabelError {
                part: "configuration",
                problem: format!("{e}"),
            })?
        };
        let term = if term.trim().is_empty() {
            Term::Unnamed {
                parity: configuration.parity(),
                index: None,
            }
        } else {
            term.parse().map_err(|e| LabelError {
                part: "term",
                problem: format!("{e}"),
            })?
        };
        if j.trim().is_empty() {
            return Err(LabelError {
                part: "J",
                problem: "J is not given: every level needs its J (0, 1, 3/2, …)".into(),
            });
        }
        let j = j.parse().map_err(|e| LabelError {
            part: "J",
            problem: format!("{e}"),
        })?;
        Ok(LevelLabel {
            configuration,
            term,
            j,
        })
    }

    /// What is inconsistent in the label, each with the part at fault: the term's
    /// parity differs from the configuration's ((−1)^Σl; the term's is used), or J
    /// is not allowed by the term: |L − S| ≤ J ≤ L + S for an LS term, |K − s| ≤ J ≤
    /// K + s for a pair-coupling term `2s+1[K]`, |j₁ − j₂| ≤ J ≤ j₁ + j₂ for a jj term
    /// (angular momentum addition; Condon & Shortley 1935, ch. 3), either term of a
    /// double term. Empty for a consistent label.
    pub fn warnings(&self) -> Vec<LabelError> {
        let mut out = Vec::new();
        let term = &self.term;
        if !self.configuration.is_empty() && term.parity() != self.configuration.parity() {
            out.push(LabelError {
                part: "term",
                problem: format!(
                    "term {term} is {} but configuration {} is {} (the term's parity is used)",
                    term.parity(),
                    self.configuration,
                    self.configuration.parity()
                ),
            });
        }
        let pairs = coupled_pairs(term);
        if !pairs.is_empty() && !pairs.iter().any(|&(a, b)| triangle(a, b, self.j)) {
            let (a, b) = pairs[0];
            out.push(LabelError {
                part: "J",
                problem: format!(
                    "J = {} is not possible in term {term} (J must lie between {} and {})",
                    self.j,
                    HalfInt::from_twice(a.twice.abs_diff(b.twice)),
                    HalfInt::from_twice(a.twice + b.twice)
                ),
            });
        }
        out
    }

    /// A warning when the label's LS term is not one the configuration can form
    /// (`1s.2p 1D°`: s p gives only ¹P° and ³P°), by the microstate count of
    /// [`super::formable`]; `None` when it can, or when that cannot be told (parent
    /// terms in the configuration, a subshell beyond f, a term not in LS coupling).
    /// Kept apart from [`LevelLabel::warnings`]: published tables keep such labels,
    /// and the level is still a level.
    pub fn unformable_term(&self) -> Option<LabelError> {
        let term = self.term.as_ls()?;
        if self.configuration.is_empty() {
            return None;
        }
        if super::formable::can_form(&self.configuration, term)? {
            return None;
        }
        let terms = super::formable::ls_terms(&self.configuration)?;
        let parity = self.configuration.parity();
        let names: Vec<String> = terms
            .iter()
            .map(|&(l, multiplicity)| {
                format!(
                    "{multiplicity}{}{}",
                    crate::notation::term_letter(l),
                    parity.mark()
                )
            })
            .collect();
        Some(LabelError {
            part: "term",
            problem: format!(
                "configuration {} cannot form the term {}: its LS terms are {}",
                self.configuration,
                self.term,
                names.join(", ")
            ),
        })
    }

    /// True when the label names both a configuration and a coupled term, so that
    /// the one-electron jump rules (and, in LS coupling, the LS rules) can be judged.
    pub fn is_complete(&self) -> bool {
        !self.configuration.is_empty() && self.term.is_named()
    }

    /// Parity of the level: the term's.
    pub fn parity(&self) -> Parity {
        self.term.parity()
    }

    /// Whether J is possible for a level of `species`: J is a half-integer exactly
    /// when the number of electrons is odd (a fact of angular momentum addition,
    /// common practice, no source).
    pub fn j_fits(&self, species: Species) -> bool {
        self.j.twice % 2 == species.electron_count() % 2
    }
}

/// The pairs of angular momenta whose sum is J in a term: (L, S) for LS, (K, s) for
/// pair coupling, (j₁, j₂) for jj, one pair per term of a double term; none for a
/// term that is only a parity or a number.
fn coupled_pairs(term: &Term) -> Vec<(HalfInt, HalfInt)> {
    let pair = |t: &crate::notation::PairTerm| {
        (t.k, HalfInt::from_twice(t.multiplicity.saturating_sub(1)))
    };
    match term {
        Term::Ls(t) => vec![(HalfInt::from_int(t.l), t.spin())],
        Term::Pair(t) => vec![pair(t)],
        Term::DoublePair(a, b) => vec![pair(a), pair(b)],
        Term::Jj(t) => vec![(t.j1, t.j2)],
        Term::Unnamed { .. } | Term::Numbered { .. } => Vec::new(),
    }
}

/// |a − b| ≤ c ≤ a + b with a + b + c an integer.
fn triangle(a: HalfInt, b: HalfInt, c: HalfInt) -> bool {
    let (a, b, c) = (a.twice, b.twice, c.twice);
    (a + b + c) % 2 == 0 && c >= a.abs_diff(b) && c <= a + b
}

impl fmt::Display for LevelLabel {
    /// `configuration term J`, separated by single spaces: `1s.2p 3P° 2`; a part
    /// that prints as nothing (no configuration, an even term given by no more than
    /// its parity) is left out with its space: `° 3`, `4s2.4p4.4d 3/2`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let configuration = self.configuration.to_string();
        let term = self.term.to_string();
        for part in [configuration.as_str(), term.as_str()] {
            if !part.is_empty() {
                write!(f, "{part} ")?;
            }
        }
        write!(f, "{}", self.j)
    }
}

impl FromStr for LevelLabel {
    type Err = LabelError;

    /// Read `configuration term J` as printed by `Display`: the last word is J; the
    /// word before it is the term when it reads as one (with the compilation's letter
    /// before it, `a 5D`, when that is a single lower-case letter), and the rest is the
    /// configuration (which may itself contain spaces, as in `1s2 2p` or
    /// `2s2.2p2.(3P).4f D`).
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let words: Vec<&str> = text.split_whitespace().collect();
        let Some((j, rest)) = words.split_last() else {
            return Err(LabelError {
                part: "configuration",
                problem: format!(
                    "cannot read level '{text}': expected a configuration, a term and J \
                     separated by spaces, as in '1s.2p 3P° 2'"
                ),
            });
        };
        let (term, configuration) = match rest.split_last() {
            Some((term, before)) if term.parse::<Term>().is_ok() => match before.split_last() {
                Some((letter, configuration))
                    if letter.len() == 1 && letter.chars().all(|c| c.is_ascii_lowercase()) =>
                {
                    (format!("{letter} {term}"), configuration.join(" "))
                }
                _ => (term.to_string(), before.join(" ")),
            },
            _ => (String::new(), rest.join(" ")),
        };
        LevelLabel::from_fields(&configuration, &term, j)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_asd_labels_and_prints_ours() {
        // Labels as printed in the NIST ASD (2014) exports (shared/reference-data).
        let he = LevelLabel::from_fields("1s.2p", "3P*", "2").unwrap();
        assert_eq!(he.to_string(), "1s.2p 3P° 2");
        let ne = LevelLabel::from_fields("2s2.2p5.(2P*<3/2>).3s", "2[3/2]*", "1").unwrap();
        assert_eq!(ne.to_string(), "2s2.2p5.(2P°<3/2>).3s 2[3/2]° 1");
        assert_eq!(ne.to_string().parse::<LevelLabel>().unwrap(), ne);
        let h = LevelLabel::from_fields("3d", "2D", "5/2").unwrap();
        assert_eq!(h.parity(), Parity::Even);
    }

    #[test]
    fn spaced_configurations_read_back() {
        let label: LevelLabel = "1s2 2s 2p 1P° 1".parse().unwrap();
        assert_eq!(label.to_string(), "1s2.2s.2p 1P° 1");
    }

    fn warned(configuration: &str, term: &str, j: &str) -> Vec<&'static str> {
        let label = LevelLabel::from_fields(configuration, term, j).unwrap();
        label.warnings().into_iter().map(|w| w.part).collect()
    }

    #[test]
    fn parity_that_disagrees_with_the_configuration_is_kept_with_a_warning() {
        // 1s2p is odd ((−1)^1): an even 3P term cannot belong to it.
        let label = LevelLabel::from_fields("1s.2p", "3P", "1").unwrap();
        let w = label.warnings();
        assert_eq!(w.len(), 1);
        assert_eq!(w[0].part, "term");
        assert!(
            w[0].problem.contains("even") && w[0].problem.contains("odd"),
            "{}",
            w[0]
        );
        // The term's parity is the level's.
        assert_eq!(label.parity(), Parity::Even);
        let e = LevelLabel::new(label.configuration, label.term, label.j).unwrap_err();
        assert_eq!(e.part, "term");
    }

    #[test]
    fn j_must_be_allowed_by_the_term() {
        // Vector addition: 3P has J = 0, 1, 2; 2[3/2] has J = 1, 2; (3/2,1/2) has J = 1, 2.
        assert!(warned("1s.2p", "3P°", "2").is_empty());
        assert_eq!(warned("1s.2p", "3P°", "3"), vec!["J"]);
        let label = LevelLabel::from_fields("1s.2p", "3P°", "3").unwrap();
        assert!(label.warnings()[0].problem.contains("between 0 and 2"));
        assert_eq!(warned("1s.2p", "3P°", "1/2"), vec!["J"]);
        assert!(warned("2p5.3s", "2[3/2]°", "2").is_empty());
        assert_eq!(warned("2p5.3s", "2[3/2]°", "0"), vec!["J"]);
        assert!(warned("2p5.3s", "(3/2,1/2)°", "1").is_empty());
        assert_eq!(warned("2p5.3s", "(3/2,1/2)°", "3"), vec!["J"]);
        // A double term allows the J of either term; a parity alone, any J.
        assert!(warned("3d9.(2D<5/2>).4s2.5f", "2[1/2]*,2[3/2]*", "2").is_empty());
        assert!(warned("", "*", "7").is_empty());
        // N I 2s2.2p2.(3P<2>).4f 2[9/2]° J = 11/2 as printed by ASD 2013 (shared
        // reference-data SOURCES.md, checks): impossible, kept with a warning.
        assert_eq!(warned("2s2.2p2.(3P<2>).4f", "2[9/2]*", "11/2"), vec!["J"]);
    }

    #[test]
    fn incomplete_published_labels_are_kept() {
        // W I levels without configuration, Kr II levels without term, Si I levels
        // with an unknown n (NIST ASD exports, shared/reference-data SOURCES.md).
        let w = LevelLabel::from_fields("", "*", "3").unwrap();
        assert_eq!(w.to_string(), "° 3");
        assert_eq!(w.parity(), Parity::Odd);
        assert!(!w.is_complete());
        assert_eq!("° 3".parse::<LevelLabel>().unwrap(), w);
        let kr = LevelLabel::from_fields("4s2.4p4.4d", "", "3/2").unwrap();
        assert_eq!(kr.to_string(), "4s2.4p4.4d 3/2");
        assert_eq!(kr.parity(), Parity::Even);
        assert_eq!("4s2.4p4.4d 3/2".parse::<LevelLabel>().unwrap(), kr);
        let si = LevelLabel::from_fields("3s2.3p.nd", "#3*", "2").unwrap();
        assert_eq!(si.to_string(), "3s2.3p.nd #3° 2");
        assert_eq!(si.to_string().parse::<LevelLabel>().unwrap(), si);
        let fe = LevelLabel::from_fields("3d6.(5D).4s (6D).5p", "u 5P*", "3").unwrap();
        assert_eq!(fe.to_string(), "3d6.(5D).4s.(6D).5p u 5P° 3");
        assert_eq!(fe.to_string().parse::<LevelLabel>().unwrap(), fe);
        let n = LevelLabel::from_fields("2s2.2p2.(3P).4f D", "2[3]*", "5/2").unwrap();
        assert_eq!(n.to_string(), "2s2.2p2.(3P).4f D 2[3]° 5/2");
        assert_eq!(n.to_string().parse::<LevelLabel>().unwrap(), n);
        assert!(n.warnings().is_empty() && n.is_complete());
        let e = LevelLabel::from_fields("1s.2p", "3P°", "").unwrap_err();
        assert_eq!(e.part, "J");
    }

    #[test]
    fn half_integer_j_goes_with_odd_electron_counts() {
        let he: Species = "He I".parse().unwrap();
        let h: Species = "H I".parse().unwrap();
        let integer = LevelLabel::from_fields("1s.2p", "3P°", "1").unwrap();
        let half = LevelLabel::from_fields("2p", "2P°", "3/2").unwrap();
        assert!(integer.j_fits(he) && !integer.j_fits(h));
        assert!(half.j_fits(h) && !half.j_fits(he));
    }

    #[test]
    fn malformed_labels_are_refused() {
        for text in ["", "1s.2p 3P°", "1s.2p 3X 2", "1s.2p 3P° x"] {
            assert!(text.parse::<LevelLabel>().is_err(), "{text}");
        }
    }
}
