//! Labels of the trade: configurations, terms, J values and species.
//!
//! Every label can be parsed from text (with [`std::str::FromStr`]) and printed
//! back (with [`std::fmt::Display`]); printing then parsing gives the same value.
//!
//! | label | examples read | printed as |
//! |---|---|---|
//! | [`Configuration`] | `1s2.2s2.2p6.3s`, `1s2 2p`, `2s2.2p5.(2P*<3/2>).3s`, `3d6(5D)4s` | `1s2.2p`, `2s2.2p5.(2P°<3/2>).3s` |
//! | [`Term`] (LS) | `3P`, `1D°`, `1D*`, `1Do`, `2D#2`, `2D2`, `a 5D`, `z 5F*`, `3P*?` | `3P`, `1D°`, `2D#2`, `a 5D`, `z 5F°`, `3P°?` |
//! | [`Term`] (pair coupling) | `2[3/2]*`, `2[5/2]`, `2[3]*`, `2[3/2]*?` | `2[3/2]°`, `2[3]°`, `2[3/2]°?` |
//! | [`Term`] (jj coupling) | `(3/2,1/2)*`, `(1,5/2)*` | `(3/2,1/2)°`, `(1,5/2)°` |
//! | [`Term`] (parity only) | `*`, `°`, `#2*` | `°`, `#2°` |
//! | [`Term`] (named by a number) | `62192e`, `58661o`, `113716`, `1*` | `62192e`, `58661°`, `113716e`, `1°` |
//! | [`Term`] (two pair terms) | `2[1/2]*,2[3/2]*` | `2[1/2]°,2[3/2]°` |
//! | [`Configuration`] | `3d6.(5D).4s (6D).5p`, `3s2.3p.(2P*<1/2>).6p<1/2>`, `3s2.3p.nd`, `2s2.2p2.(3P).4f D`, `3s.3p.(3P*).8p?` | `3d6.(5D).4s.(6D).5p`, `3s2.3p.(2P°<1/2>).6p<1/2>`, `3s2.3p.nd`, `2s2.2p2.(3P).4f D`, `3s.3p.(3P°).8p?` |
//! | [`HalfInt`] (J) | `0`, `3/2` | `0`, `3/2` |
//! | [`Species`] | `He I`, `Fe II`, `HeI` | `He I` |
//!
//! Odd parity is printed `°` and read as `°`, `*` or `o`. A repeated term of one
//! configuration (the two ²D of d³, or a label a table prints twice) carries an index
//! after `#`; in LS terms the index may also follow the letter directly (`3P2`, the
//! seniority-ordered index of the compilations of complex spectra). Marks of the
//! compilations are kept: a lower-case letter before an LS term (`a 5D`, `z 5F°`, which
//! orders the terms of a complex spectrum), `?` after a term or configuration (the
//! designation is uncertain), `n` for an unknown principal quantum number (`nd`), the j
//! of a subshell in jj and pair-coupled labels (`6p<1/2>`), and the L of LK coupling
//! after the outer electron (`4f D`, with the term `2[3]°`). A level that the
//! compilation names by its energy or a number, with `e` (even) or `o` (odd), is a
//! [`Term::Numbered`]; one whose term is not given keeps only its parity
//! ([`Term::Unnamed`]).
//!
//! ```
//! use termsight::notation::{Configuration, Term, Parity};
//! let config: Configuration = "1s2 2s2 2p6 3s 3p".parse().unwrap();
//! assert_eq!(config.to_string(), "1s2.2s2.2p6.3s.3p");
//! assert_eq!(config.parity(), Parity::Odd);
//! let term: Term = "3P*".parse().unwrap();
//! assert_eq!(term.to_string(), "3P°");
//! ```

pub mod element;
mod parse;

use std::fmt;

use serde::{Deserialize, Serialize};

pub use parse::NotationError;

/// Letters for orbital angular momentum l = 0, 1, 2, … (`j` is skipped by convention).
pub const ORBITAL_LETTERS: &[u8] = b"spdfghiklmnoqrtuv";

/// Parity of a state: (−1)^Σl.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Parity {
    /// Even, (−1)^Σl = +1.
    Even,
    /// Odd, (−1)^Σl = −1; printed `°`.
    Odd,
}

impl Parity {
    /// The parity (−1)^l_sum.
    pub fn from_l_sum(l_sum: u32) -> Parity {
        if l_sum.is_multiple_of(2) {
            Parity::Even
        } else {
            Parity::Odd
        }
    }

    /// +1 for even, −1 for odd.
    pub fn sign(self) -> i32 {
        match self {
            Parity::Even => 1,
            Parity::Odd => -1,
        }
    }

    /// The mark printed after a term: nothing for even, `°` for odd.
    pub fn mark(self) -> &'static str {
        match self {
            Parity::Even => "",
            Parity::Odd => "°",
        }
    }

    /// `even` or `odd`.
    pub fn name(self) -> &'static str {
        match self {
            Parity::Even => "even",
            Parity::Odd => "odd",
        }
    }
}

impl fmt::Display for Parity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A non-negative integer or half-integer (J, S, K, M), stored as twice its value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct HalfInt {
    /// Twice the value: 3 means 3/2.
    pub twice: u32,
}

impl HalfInt {
    /// The half-integer `twice`/2.
    pub const fn from_twice(twice: u32) -> HalfInt {
        HalfInt { twice }
    }

    /// The integer `value`.
    pub const fn from_int(value: u32) -> HalfInt {
        HalfInt { twice: 2 * value }
    }

    /// The value as a float.
    pub fn value(self) -> f64 {
        self.twice as f64 / 2.0
    }

    /// 2J + 1, the statistical weight of a level of this J.
    pub fn multiplicity(self) -> u32 {
        self.twice + 1
    }
}

impl fmt::Display for HalfInt {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.twice.is_multiple_of(2) {
            write!(f, "{}", self.twice / 2)
        } else {
            write!(f, "{}/2", self.twice)
        }
    }
}

/// One subshell of a configuration: `n l^occupancy`, e.g. `2p6`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Subshell {
    /// Principal quantum number n ≥ l + 1.
    pub n: u32,
    /// Orbital angular momentum l.
    pub l: u32,
    /// Number of electrons, 1 … 2(2l + 1).
    pub occupancy: u32,
}

impl Subshell {
    /// The most electrons the subshell can hold, 2(2l + 1).
    pub fn capacity(&self) -> u32 {
        2 * (2 * self.l + 1)
    }

    /// True when the subshell is full.
    pub fn is_closed(&self) -> bool {
        self.occupancy == self.capacity()
    }

    /// The orbital label without occupancy, e.g. `2p`.
    pub fn orbital(&self) -> String {
        format!("{}{}", self.n, orbital_letter(self.l))
    }
}

impl fmt::Display for Subshell {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}{}", self.n, orbital_letter(self.l))?;
        if self.occupancy != 1 {
            write!(f, "{}", self.occupancy)?;
        }
        Ok(())
    }
}

/// The letter of orbital angular momentum `l` (`s`, `p`, `d`, …); `?` beyond the table.
pub fn orbital_letter(l: u32) -> char {
    ORBITAL_LETTERS.get(l as usize).map_or('?', |&b| b as char)
}

/// The upper-case letter of total orbital angular momentum `L` (`S`, `P`, `D`, …).
pub fn term_letter(l: u32) -> char {
    orbital_letter(l).to_ascii_uppercase()
}

/// A coupled intermediate state written inside a configuration label, such as the
/// parent `(2P°<3/2>)` of `2s2.2p5.(2P°<3/2>).3s` or `(5D)` of `3d6(5D)4s`.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Intermediate {
    /// The intermediate term.
    pub term: Term,
    /// Its J, when given (`<3/2>`).
    pub j: Option<HalfInt>,
}

impl fmt::Display for Intermediate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "({}", self.term)?;
        if let Some(j) = self.j {
            write!(f, "<{j}>")?;
        }
        write!(f, ")")
    }
}

/// One item of a configuration label: a subshell, a coupled intermediate state, or a
/// mark of the compilations.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum ConfigPart {
    /// A subshell such as `2p5`.
    Subshell(Subshell),
    /// A coupled intermediate (parent) state such as `(2P°<3/2>)`.
    Intermediate(Intermediate),
    /// A subshell with its j written after it, `6p<1/2>` (jj and pair-coupled labels).
    SubshellJ(Subshell, HalfInt),
    /// A subshell whose principal quantum number is not given, `nd` (a Rydberg
    /// series member the compilation does not number).
    UnknownN {
        /// Orbital angular momentum l.
        l: u32,
        /// Number of electrons.
        occupancy: u32,
    },
    /// The L of LK coupling, written after the outer electron: the `D` of
    /// `2s2.2p2.(3P).4f D` (the parent's L coupled with the outer electron's l).
    CoupledL(u32),
    /// `?`: the compilation marks the designation before it as uncertain.
    Uncertain,
}

impl ConfigPart {
    /// The orbital angular momentum l and the electrons of a part that holds
    /// electrons (a subshell, with or without its n or j written).
    pub fn electrons(&self) -> Option<(u32, u32)> {
        match self {
            ConfigPart::Subshell(s) | ConfigPart::SubshellJ(s, _) => Some((s.l, s.occupancy)),
            ConfigPart::UnknownN { l, occupancy } => Some((*l, *occupancy)),
            _ => None,
        }
    }
}

/// An electron configuration, in the order written, with optional intermediate terms.
///
/// Printed with `.` between items. Two configurations are equal when their labels
/// are; use [`Configuration::subshells`] to compare occupations only.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Configuration {
    /// Subshells and intermediate terms in the order written.
    pub parts: Vec<ConfigPart>,
}

impl Configuration {
    /// A configuration of plain subshells.
    pub fn from_subshells(subshells: impl IntoIterator<Item = Subshell>) -> Configuration {
        Configuration {
            parts: subshells.into_iter().map(ConfigPart::Subshell).collect(),
        }
    }

    /// The subshells whose n is known (with or without their j written), in the
    /// order written.
    pub fn subshells(&self) -> impl Iterator<Item = &Subshell> + '_ {
        self.parts.iter().filter_map(|p| match p {
            ConfigPart::Subshell(s) | ConfigPart::SubshellJ(s, _) => Some(s),
            _ => None,
        })
    }

    /// True when every subshell is written with its n (no `nd`), so that subshells
    /// can be compared between configurations.
    pub fn is_fully_numbered(&self) -> bool {
        !self
            .parts
            .iter()
            .any(|p| matches!(p, ConfigPart::UnknownN { .. }))
    }

    /// True when the label holds no part at all (a level that a table gives without
    /// a configuration).
    pub fn is_empty(&self) -> bool {
        self.parts.is_empty()
    }

    /// Number of electrons written (subshells with an unknown n included).
    pub fn electron_count(&self) -> u32 {
        self.parts
            .iter()
            .filter_map(ConfigPart::electrons)
            .map(|(_, n)| n)
            .sum()
    }

    /// Parity (−1)^Σ occupancy·l over every subshell written (even for a
    /// configuration with no subshell).
    pub fn parity(&self) -> Parity {
        Parity::from_l_sum(
            self.parts
                .iter()
                .filter_map(ConfigPart::electrons)
                .map(|(l, n)| l * n)
                .sum(),
        )
    }

    /// The same configuration without intermediate terms, e.g. `2s2.2p5.3s`.
    pub fn without_intermediates(&self) -> Configuration {
        Configuration::from_subshells(self.subshells().copied())
    }
}

impl fmt::Display for Configuration {
    /// Parts separated by `.`; the L of LK coupling after a space (`4f D`) and `?`
    /// directly after the part it qualifies.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, part) in self.parts.iter().enumerate() {
            match part {
                ConfigPart::Uncertain => {}
                ConfigPart::CoupledL(_) if i > 0 => f.write_str(" ")?,
                _ if i > 0 => f.write_str(".")?,
                _ => {}
            }
            match part {
                ConfigPart::Subshell(s) => write!(f, "{s}")?,
                ConfigPart::Intermediate(t) => write!(f, "{t}")?,
                ConfigPart::SubshellJ(s, j) => write!(f, "{s}<{j}>")?,
                ConfigPart::UnknownN { l, occupancy } => {
                    write!(f, "n{}", orbital_letter(*l))?;
                    if *occupancy != 1 {
                        write!(f, "{occupancy}")?;
                    }
                }
                ConfigPart::CoupledL(l) => write!(f, "{}", term_letter(*l))?,
                ConfigPart::Uncertain => f.write_str("?")?,
            }
        }
        Ok(())
    }
}

/// Marks the compilations put on a term: a letter before it and a `?` after it.
#[derive(
    Debug, Clone, Copy, Default, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize,
)]
pub struct TermMarks {
    /// The lower-case letter that orders the terms of a complex spectrum (`a 5D`,
    /// `z 5F°`: a, b, … for low even terms, z, y, … for low odd ones).
    pub letter: Option<char>,
    /// `?` after the term: the compilation marks the designation as uncertain.
    pub uncertain: bool,
}

impl TermMarks {
    fn write_letter(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.letter {
            Some(letter) => write!(f, "{letter} "),
            None => Ok(()),
        }
    }

    fn write_uncertain(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.uncertain {
            f.write_str("?")?;
        }
        Ok(())
    }
}

/// `#index` when there is one.
fn write_index(f: &mut fmt::Formatter<'_>, index: Option<u32>) -> fmt::Result {
    match index {
        Some(index) => write!(f, "#{index}"),
        None => Ok(()),
    }
}

/// An LS (Russell–Saunders) term ^{2S+1}L with parity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct LsTerm {
    /// Multiplicity 2S + 1 (≥ 1).
    pub multiplicity: u32,
    /// Total orbital angular momentum L.
    pub l: u32,
    /// Parity.
    pub parity: Parity,
    /// Index that tells apart repeated terms of one configuration (`2D#1`, `2D#2`).
    pub index: Option<u32>,
    /// The compilation's letter before the term and `?` after it.
    pub marks: TermMarks,
}

impl LsTerm {
    /// Total spin S = (multiplicity − 1)/2.
    pub fn spin(&self) -> HalfInt {
        HalfInt::from_twice(self.multiplicity.saturating_sub(1))
    }
}

impl fmt::Display for LsTerm {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.marks.write_letter(f)?;
        write!(f, "{}{}", self.multiplicity, term_letter(self.l))?;
        write_index(f, self.index)?;
        f.write_str(self.parity.mark())?;
        self.marks.write_uncertain(f)
    }
}

/// A pair-coupling (J₁l or J₁L₂, "jK") term `2s+1[K]`, as used for the excited
/// levels of the noble gases: the core J₁ couples with the outer electron's l to K,
/// and K with the outer electron's spin s to J.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct PairTerm {
    /// 2s + 1 of the outer electron(s), the number before the bracket (2 for one electron).
    pub multiplicity: u32,
    /// K, the bracketed quantum number.
    pub k: HalfInt,
    /// Parity.
    pub parity: Parity,
    /// Index that tells apart a label printed twice (`2[3/2]#2°`).
    pub index: Option<u32>,
    /// The compilation's marks (`?`).
    pub marks: TermMarks,
}

impl fmt::Display for PairTerm {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.marks.write_letter(f)?;
        write!(f, "{}[{}]", self.multiplicity, self.k)?;
        write_index(f, self.index)?;
        f.write_str(self.parity.mark())?;
        self.marks.write_uncertain(f)
    }
}

/// A jj-coupling term `(j₁,j₂)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct JjTerm {
    /// j of the first group.
    pub j1: HalfInt,
    /// j of the second group.
    pub j2: HalfInt,
    /// Parity.
    pub parity: Parity,
    /// Index that tells apart a label printed twice (`(1,5/2)#2°`).
    pub index: Option<u32>,
    /// The compilation's marks (`?`).
    pub marks: TermMarks,
}

impl fmt::Display for JjTerm {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.marks.write_letter(f)?;
        write!(f, "({},{})", self.j1, self.j2)?;
        write_index(f, self.index)?;
        f.write_str(self.parity.mark())?;
        self.marks.write_uncertain(f)
    }
}

/// A term label in one of the coupling schemes of the trade.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Term {
    /// LS coupling, `3P°`.
    Ls(LsTerm),
    /// Pair coupling, `2[3/2]°`.
    Pair(PairTerm),
    /// jj coupling, `(3/2,1/2)°`.
    Jj(JjTerm),
    /// No term is given, only the parity: printed `°` for odd and nothing for even
    /// (the compilations print `*` or leave the field blank), with an index when a
    /// table gives the same label twice (`#2°`).
    Unnamed {
        /// Parity.
        parity: Parity,
        /// Index that tells apart a label printed twice.
        index: Option<u32>,
    },
    /// A level the compilation designates by a number, usually its energy in cm⁻¹
    /// rounded down (`62192e`), with `e` for even and `o` for odd parity (read also
    /// `*` or `°`; no letter is even). Printed `62192e` or `58661°`.
    Numbered {
        /// The number.
        number: u32,
        /// Parity.
        parity: Parity,
    },
    /// Two pair-coupling terms for one level, `2[1/2]°,2[3/2]°` (the compilation does
    /// not decide between them).
    DoublePair(PairTerm, PairTerm),
}

/// The coupling scheme a term is written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Coupling {
    /// LS (Russell–Saunders) coupling.
    Ls,
    /// Pair (jK) coupling.
    Pair,
    /// jj coupling.
    Jj,
    /// No coupling scheme can be told: the term is not given, or only a number.
    Unknown,
}

impl Term {
    /// Parity of the term.
    pub fn parity(&self) -> Parity {
        match self {
            Term::Ls(t) => t.parity,
            Term::Pair(t) | Term::DoublePair(t, _) => t.parity,
            Term::Jj(t) => t.parity,
            Term::Unnamed { parity, .. } | Term::Numbered { parity, .. } => *parity,
        }
    }

    /// The coupling scheme.
    pub fn coupling(&self) -> Coupling {
        match self {
            Term::Ls(_) => Coupling::Ls,
            Term::Pair(_) | Term::DoublePair(..) => Coupling::Pair,
            Term::Jj(_) => Coupling::Jj,
            Term::Unnamed { .. } | Term::Numbered { .. } => Coupling::Unknown,
        }
    }

    /// True when the term names a coupled state (LS, pair or jj); false when the
    /// compilation gives only the parity or a number.
    pub fn is_named(&self) -> bool {
        self.coupling() != Coupling::Unknown
    }

    /// The repeat index (`#2`), if the term has one.
    pub fn index(&self) -> Option<u32> {
        match self {
            Term::Ls(t) => t.index,
            Term::Pair(t) => t.index,
            Term::Jj(t) => t.index,
            Term::Unnamed { index, .. } => *index,
            Term::Numbered { .. } | Term::DoublePair(..) => None,
        }
    }

    /// The same term with the repeat index `index` (none for a numbered or double
    /// term, which have no index).
    pub fn with_index(self, index: Option<u32>) -> Term {
        match self {
            Term::Ls(t) => Term::Ls(LsTerm { index, ..t }),
            Term::Pair(t) => Term::Pair(PairTerm { index, ..t }),
            Term::Jj(t) => Term::Jj(JjTerm { index, ..t }),
            Term::Unnamed { parity, .. } => Term::Unnamed { parity, index },
            other => other,
        }
    }

    /// The LS term, if the label is in LS coupling.
    pub fn as_ls(&self) -> Option<&LsTerm> {
        match self {
            Term::Ls(t) => Some(t),
            _ => None,
        }
    }
}

impl fmt::Display for Term {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Term::Ls(t) => t.fmt(f),
            Term::Pair(t) => t.fmt(f),
            Term::Jj(t) => t.fmt(f),
            Term::Unnamed { parity, index } => {
                write_index(f, *index)?;
                f.write_str(parity.mark())
            }
            Term::Numbered { number, parity } => match parity {
                Parity::Even => write!(f, "{number}e"),
                Parity::Odd => write!(f, "{number}°"),
            },
            Term::DoublePair(a, b) => write!(f, "{a},{b}"),
        }
    }
}

/// A spectrum: an element and its ionisation stage, `He I` (neutral), `Fe II` (singly ionised).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Species {
    /// Atomic number Z.
    pub atomic_number: u32,
    /// Ion charge: 0 for spectrum I, 1 for II, …
    pub charge: u32,
}

impl Species {
    /// The element symbol.
    pub fn symbol(&self) -> &'static str {
        element::symbol(self.atomic_number).unwrap_or("?")
    }

    /// Number of electrons, Z − charge.
    pub fn electron_count(&self) -> u32 {
        self.atomic_number.saturating_sub(self.charge)
    }
}

impl fmt::Display for Species {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.symbol(), parse::roman(self.charge + 1))
    }
}
