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
/// A label is checked when built by [`LevelLabel::new`]: the term's parity must be
/// the configuration's, and J must be one the term allows.
///
/// ```
/// use termsight::levels::LevelLabel;
/// let label = LevelLabel::from_fields("1s.2p", "3P*", "2").unwrap();
/// assert_eq!(label.to_string(), "1s.2p 3P° 2");
/// assert_eq!(label, "1s.2p 3P° 2".parse().unwrap());
/// ```
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct LevelLabel {
    /// The electron configuration, with any parent terms.
    pub configuration: Configuration,
    /// The term, in LS, pair or jj coupling; it carries the parity.
    pub term: Term,
    /// Total angular momentum J.
    pub j: HalfInt,
}

/// A label that is not a possible level: the part at fault and why.
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
    /// configuration's ((−1)^Σl), or when J is not allowed by the term:
    /// |L − S| ≤ J ≤ L + S for an LS term, |K − s| ≤ J ≤ K + s for a pair-coupling
    /// term `2s+1[K]`, |j₁ − j₂| ≤ J ≤ j₁ + j₂ for a jj term (angular momentum
    /// addition; Condon & Shortley 1935, ch. 3).
    pub fn new(configuration: Configuration, term: Term, j: HalfInt) -> Result<Self, LabelError> {
        if term.parity() != configuration.parity() {
            return Err(LabelError {
                part: "term",
                problem: format!(
                    "term {term} is {} but configuration {configuration} is {}",
                    term.parity(),
                    configuration.parity()
                ),
            });
        }
        let (a, b) = coupled_pair(&term);
        if !triangle(a, b, j) {
            return Err(LabelError {
                part: "J",
                problem: format!(
                    "J = {j} is not possible in term {term} (J must lie between {} and {})",
                    HalfInt::from_twice(a.twice.abs_diff(b.twice)),
                    HalfInt::from_twice(a.twice + b.twice)
                ),
            });
        }
        Ok(LevelLabel {
            configuration,
            term,
            j,
        })
    }

    /// Parse and check a label given as three fields (the columns of level tables and
    /// of the assign CSV): configuration, term and J in any notation that
    /// [`crate::notation`] reads (`3P*`, `3P°` and `3Po` are the same term).
    pub fn from_fields(configuration: &str, term: &str, j: &str) -> Result<Self, LabelError> {
        let configuration = configuration.parse().map_err(|e| LabelError {
            part: "configuration",
            problem: format!("{e}"),
        })?;
        let term = term.parse().map_err(|e| LabelError {
            part: "term",
            problem: format!("{e}"),
        })?;
        let j = j.parse().map_err(|e| LabelError {
            part: "J",
            problem: format!("{e}"),
        })?;
        LevelLabel::new(configuration, term, j)
    }

    /// Parity of the level.
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

/// The two angular momenta whose sum is J in a term: (L, S) for LS, (K, s) for
/// pair coupling, (j₁, j₂) for jj.
fn coupled_pair(term: &Term) -> (HalfInt, HalfInt) {
    match term {
        Term::Ls(t) => (HalfInt::from_int(t.l), t.spin()),
        Term::Pair(t) => (t.k, HalfInt::from_twice(t.multiplicity.saturating_sub(1))),
        Term::Jj(t) => (t.j1, t.j2),
    }
}

/// |a − b| ≤ c ≤ a + b with a + b + c an integer.
fn triangle(a: HalfInt, b: HalfInt, c: HalfInt) -> bool {
    let (a, b, c) = (a.twice, b.twice, c.twice);
    (a + b + c) % 2 == 0 && c >= a.abs_diff(b) && c <= a + b
}

impl fmt::Display for LevelLabel {
    /// `configuration term J`, separated by single spaces: `1s.2p 3P° 2`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {} {}", self.configuration, self.term, self.j)
    }
}

impl FromStr for LevelLabel {
    type Err = LabelError;

    /// Read `configuration term J` as printed by `Display`: the last two
    /// whitespace-separated words are the term and J, the rest the configuration
    /// (which may itself contain spaces, as in `1s2 2p`).
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let mut words = text.split_whitespace().rev();
        let missing = || LabelError {
            part: "configuration",
            problem: format!(
                "cannot read level '{text}': expected a configuration, a term and J \
                 separated by spaces, as in '1s.2p 3P° 2'"
            ),
        };
        let j = words.next().ok_or_else(missing)?;
        let term = words.next().ok_or_else(missing)?;
        let configuration: Vec<&str> = words.rev().collect();
        if configuration.is_empty() {
            return Err(missing());
        }
        LevelLabel::from_fields(&configuration.join(" "), term, j)
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

    #[test]
    fn parity_must_agree_with_the_configuration() {
        // 1s2p is odd ((−1)^1): an even 3P term cannot belong to it.
        let e = LevelLabel::from_fields("1s.2p", "3P", "1").unwrap_err();
        assert_eq!(e.part, "term");
        assert!(
            e.problem.contains("even") && e.problem.contains("odd"),
            "{e}"
        );
    }

    #[test]
    fn j_must_be_allowed_by_the_term() {
        // Vector addition: 3P has J = 0, 1, 2; 2[3/2] has J = 1, 2; (3/2,1/2) has J = 1, 2.
        assert!(LevelLabel::from_fields("1s.2p", "3P°", "2").is_ok());
        let e = LevelLabel::from_fields("1s.2p", "3P°", "3").unwrap_err();
        assert_eq!(e.part, "J");
        assert!(e.problem.contains("between 0 and 2"), "{e}");
        assert!(LevelLabel::from_fields("1s.2p", "3P°", "1/2").is_err());
        assert!(LevelLabel::from_fields("2p5.3s", "2[3/2]°", "2").is_ok());
        assert!(LevelLabel::from_fields("2p5.3s", "2[3/2]°", "0").is_err());
        assert!(LevelLabel::from_fields("2p5.3s", "(3/2,1/2)°", "1").is_ok());
        assert!(LevelLabel::from_fields("2p5.3s", "(3/2,1/2)°", "3").is_err());
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
    fn incomplete_labels_are_refused() {
        for text in ["", "3P° 2", "1s.2p 3P°", "1s.2p 3X 2"] {
            assert!(text.parse::<LevelLabel>().is_err(), "{text}");
        }
    }
}
