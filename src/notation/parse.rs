//! nom parsers for the labels of [`super`], and their `FromStr` impls.

use std::str::FromStr;

use nom::{
    IResult, Parser,
    branch::alt,
    bytes::complete::tag,
    character::complete::{char, digit1, satisfy},
    combinator::{map_res, opt, value},
    sequence::{delimited, preceded},
};

use super::{
    ConfigPart, Configuration, HalfInt, Intermediate, JjTerm, LsTerm, ORBITAL_LETTERS, PairTerm,
    Parity, Species, Subshell, Term, element,
};

/// A label that could not be read. The message quotes the label and says what was expected.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("cannot read {what} '{label}': {problem}")]
pub struct NotationError {
    /// What kind of label was expected (`configuration`, `term`, `J`, `species`).
    pub what: &'static str,
    /// The text as given.
    pub label: String,
    /// What is wrong and what was expected.
    pub problem: String,
}

const EXPECT_J: &str = "expected a non-negative integer or an odd number over 2, as in 0, 2 or 3/2";
const EXPECT_TERM: &str = "expected an LS term such as 3P, 1D° or 2D#2, a pair-coupling term such \
     as 2[3/2]°, or a jj term such as (3/2,1/2)°; odd parity may be written °, * or o";
const EXPECT_CONFIG: &str = "expected subshells such as 1s2.2s2.2p6.3s or 1s2 2p (n, an l letter, \
     then the number of electrons), optionally with intermediate terms such as (2P*<3/2>) or (5D)";
const EXPECT_SPECIES: &str = "expected an element symbol and a Roman numeral, as in He I or Fe II";

fn number(input: &str) -> IResult<&str, u32> {
    map_res(digit1, str::parse::<u32>).parse(input)
}

fn half_int(input: &str) -> IResult<&str, HalfInt> {
    let (rest, numerator) = number(input)?;
    let (rest, halves) = opt(tag("/2")).parse(rest)?;
    match halves {
        Some(_) if numerator % 2 == 1 => Ok((rest, HalfInt::from_twice(numerator))),
        Some(_) => Err(nom::Err::Error(nom::error::Error::new(
            input,
            nom::error::ErrorKind::Verify,
        ))),
        None => Ok((rest, HalfInt::from_int(numerator))),
    }
}

fn parity_mark(input: &str) -> IResult<&str, Parity> {
    value(Parity::Odd, alt((tag("°"), tag("*"), tag("o")))).parse(input)
}

fn term_l(input: &str) -> IResult<&str, u32> {
    let (rest, c) = satisfy(|c| c.is_ascii_uppercase()).parse(input)?;
    match ORBITAL_LETTERS
        .iter()
        .position(|&b| b.to_ascii_uppercase() == c as u8)
    {
        Some(l) => Ok((rest, l as u32)),
        None => Err(nom::Err::Error(nom::error::Error::new(
            input,
            nom::error::ErrorKind::Char,
        ))),
    }
}

fn ls_term(input: &str) -> IResult<&str, LsTerm> {
    let (rest, multiplicity) = number(input)?;
    let (rest, l) = term_l(rest)?;
    let (rest, parity_before) = opt(parity_mark).parse(rest)?;
    let (rest, index) = opt(preceded(char('#'), number)).parse(rest)?;
    let (rest, parity_after) = if parity_before.is_none() {
        opt(parity_mark).parse(rest)?
    } else {
        (rest, None)
    };
    let parity = parity_before.or(parity_after).unwrap_or(Parity::Even);
    Ok((
        rest,
        LsTerm {
            multiplicity,
            l,
            parity,
            index,
        },
    ))
}

fn pair_term(input: &str) -> IResult<&str, PairTerm> {
    let (rest, multiplicity) = number(input)?;
    let (rest, k) = delimited(char('['), half_int, char(']')).parse(rest)?;
    let (rest, parity) = opt(parity_mark).parse(rest)?;
    Ok((
        rest,
        PairTerm {
            multiplicity,
            k,
            parity: parity.unwrap_or(Parity::Even),
        },
    ))
}

fn jj_term(input: &str) -> IResult<&str, JjTerm> {
    let (rest, _) = char('(').parse(input)?;
    let (rest, j1) = half_int(rest)?;
    let (rest, _) = char(',').parse(rest)?;
    let (rest, j2) = half_int(rest)?;
    let (rest, _) = char(')').parse(rest)?;
    let (rest, parity) = opt(parity_mark).parse(rest)?;
    Ok((
        rest,
        JjTerm {
            j1,
            j2,
            parity: parity.unwrap_or(Parity::Even),
        },
    ))
}

fn term(input: &str) -> IResult<&str, Term> {
    alt((
        jj_term.map(Term::Jj),
        pair_term.map(Term::Pair),
        ls_term.map(Term::Ls),
    ))
    .parse(input)
}

fn orbital_l(input: &str) -> IResult<&str, u32> {
    let (rest, c) = satisfy(|c| c.is_ascii_lowercase() && c != 'j').parse(input)?;
    match ORBITAL_LETTERS.iter().position(|&b| b == c as u8) {
        Some(l) => Ok((rest, l as u32)),
        None => Err(nom::Err::Error(nom::error::Error::new(
            input,
            nom::error::ErrorKind::Char,
        ))),
    }
}

fn subshell(input: &str) -> IResult<&str, Subshell> {
    let (rest, n) = number(input)?;
    let (rest, l) = orbital_l(rest)?;
    let (rest, occupancy) = opt(number).parse(rest)?;
    Ok((
        rest,
        Subshell {
            n,
            l,
            occupancy: occupancy.unwrap_or(1),
        },
    ))
}

fn intermediate(input: &str) -> IResult<&str, Intermediate> {
    let (rest, _) = char('(').parse(input)?;
    let (rest, term) = term(rest)?;
    let (rest, j) = opt(delimited(char('<'), half_int, char('>'))).parse(rest)?;
    let (rest, _) = char(')').parse(rest)?;
    Ok((rest, Intermediate { term, j }))
}

fn config_part(input: &str) -> IResult<&str, ConfigPart> {
    alt((
        subshell.map(ConfigPart::Subshell),
        intermediate.map(ConfigPart::Intermediate),
    ))
    .parse(input)
}

/// Run `parser` on the whole of `text` (trimmed); report `problem` on any failure.
fn whole<T>(
    text: &str,
    what: &'static str,
    problem: &str,
    mut parser: impl FnMut(&str) -> IResult<&str, T>,
) -> Result<T, NotationError> {
    let trimmed = text.trim();
    let error = |problem: String| NotationError {
        what,
        label: text.to_string(),
        problem,
    };
    if trimmed.is_empty() {
        return Err(error(format!("the label is empty; {problem}")));
    }
    match parser(trimmed) {
        Ok(("", parsed)) => Ok(parsed),
        Ok((rest, _)) => Err(error(format!("unexpected '{rest}' at the end; {problem}"))),
        Err(_) => Err(error(problem.to_string())),
    }
}

impl FromStr for HalfInt {
    type Err = NotationError;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        whole(s, "J", EXPECT_J, half_int)
    }
}

impl FromStr for Term {
    type Err = NotationError;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let term = whole(s, "term", EXPECT_TERM, term)?;
        let multiplicity = match term {
            Term::Ls(t) => t.multiplicity,
            Term::Pair(t) => t.multiplicity,
            Term::Jj(_) => 1,
        };
        if multiplicity == 0 {
            return Err(NotationError {
                what: "term",
                label: s.to_string(),
                problem: "the multiplicity 2S+1 must be at least 1".into(),
            });
        }
        Ok(term)
    }
}

impl FromStr for Configuration {
    type Err = NotationError;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let config = whole(s, "configuration", EXPECT_CONFIG, |input| {
            let mut parts = Vec::new();
            let (mut rest, first) = config_part(input)?;
            parts.push(first);
            loop {
                let trimmed = rest.trim_start_matches(|c: char| c == '.' || c.is_whitespace());
                if trimmed.is_empty() {
                    rest = trimmed;
                    break;
                }
                // Two subshells need a separator between them; an intermediate term
                // in parentheses needs none (`3d6(5D)4s`).
                let separated = trimmed.len() < rest.len()
                    || trimmed.starts_with('(')
                    || matches!(parts.last(), Some(ConfigPart::Intermediate(_)));
                if !separated {
                    break; // `whole` reports the unread rest.
                }
                let (next, part) = config_part(trimmed)?;
                parts.push(part);
                rest = next;
            }
            Ok((rest, Configuration { parts }))
        })?;
        check_configuration(s, &config)?;
        Ok(config)
    }
}

/// Physical checks on a parsed configuration: n > l, occupancy within the Pauli
/// limit 2(2l+1), no subshell written twice.
fn check_configuration(label: &str, config: &Configuration) -> Result<(), NotationError> {
    let error = |problem: String| NotationError {
        what: "configuration",
        label: label.to_string(),
        problem,
    };
    let mut seen = Vec::new();
    for shell in config.subshells() {
        if shell.n == 0 || shell.n <= shell.l {
            return Err(error(format!(
                "subshell {} is impossible: n must exceed l (n = {}, l = {})",
                shell.orbital(),
                shell.n,
                shell.l
            )));
        }
        if shell.occupancy == 0 || shell.occupancy > shell.capacity() {
            return Err(error(format!(
                "{} electrons in a {} subshell: it holds 1 to {}",
                shell.occupancy,
                shell.orbital(),
                shell.capacity()
            )));
        }
        if seen.contains(&(shell.n, shell.l)) {
            return Err(error(format!(
                "subshell {} is written twice",
                shell.orbital()
            )));
        }
        seen.push((shell.n, shell.l));
    }
    Ok(())
}

impl FromStr for Species {
    type Err = NotationError;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let error = |problem: String| NotationError {
            what: "species",
            label: s.to_string(),
            problem,
        };
        let trimmed = s.trim();
        let symbol_len = trimmed
            .char_indices()
            .skip(1)
            .find(|(_, c)| !c.is_ascii_lowercase())
            .map_or(trimmed.len(), |(i, _)| i);
        let (symbol, rest) = trimmed.split_at(symbol_len);
        let atomic_number = element::atomic_number(symbol).ok_or_else(|| {
            error(format!(
                "'{symbol}' is not an element symbol; {EXPECT_SPECIES}"
            ))
        })?;
        let numeral = rest.trim_start_matches([' ', '_', '\t']);
        let spectrum = from_roman(numeral).ok_or_else(|| {
            error(format!(
                "'{numeral}' is not a Roman numeral; {EXPECT_SPECIES}"
            ))
        })?;
        if spectrum > atomic_number {
            return Err(error(format!(
                "{symbol} has {atomic_number} electrons, so its spectra run from I to {}",
                roman(atomic_number)
            )));
        }
        Ok(Species {
            atomic_number,
            charge: spectrum - 1,
        })
    }
}

const ROMAN: [(u32, &str); 13] = [
    (1000, "M"),
    (900, "CM"),
    (500, "D"),
    (400, "CD"),
    (100, "C"),
    (90, "XC"),
    (50, "L"),
    (40, "XL"),
    (10, "X"),
    (9, "IX"),
    (5, "V"),
    (4, "IV"),
    (1, "I"),
];

/// The Roman numeral of `n` ≥ 1.
pub(super) fn roman(mut n: u32) -> String {
    let mut out = String::new();
    for (value, letters) in ROMAN {
        while n >= value {
            out.push_str(letters);
            n -= value;
        }
    }
    out
}

/// The value of a canonical Roman numeral (as [`roman`] prints it), if `text` is one.
fn from_roman(text: &str) -> Option<u32> {
    if text.is_empty() || !text.chars().all(|c| "IVXLCDM".contains(c)) {
        return None;
    }
    let mut rest = text;
    let mut total = 0;
    for (value, letters) in ROMAN {
        while let Some(tail) = rest.strip_prefix(letters) {
            total += value;
            rest = tail;
        }
    }
    (rest.is_empty() && total > 0 && roman(total) == text).then_some(total)
}

#[cfg(test)]
mod tests {
    use super::super::*;
    use proptest::prelude::*;

    #[test]
    fn reads_the_reference_table_notation() {
        // Labels as printed in the NIST ASD (2014) exports in shared/reference-data.
        let c: Configuration = "2s2.2p5.(2P*<3/2>).3s".parse().unwrap();
        assert_eq!(c.to_string(), "2s2.2p5.(2P°<3/2>).3s");
        assert_eq!(c.parity(), Parity::Odd);
        assert_eq!(c.electron_count(), 8);
        let c: Configuration = "5d9.6s2.(2D<5/2>).7s".parse().unwrap();
        assert_eq!(c.parity(), Parity::Even);
        let t: Term = "2[3/2]*".parse().unwrap();
        assert_eq!(t.to_string(), "2[3/2]°");
        assert_eq!(t.parity(), Parity::Odd);
        let t: Term = "3P*".parse().unwrap();
        assert_eq!(
            t,
            Term::Ls(LsTerm {
                multiplicity: 3,
                l: 1,
                parity: Parity::Odd,
                index: None
            })
        );
    }

    #[test]
    fn reads_compact_and_spaced_configurations() {
        let a: Configuration = "1s2 2p".parse().unwrap();
        let b: Configuration = "1s2.2p".parse().unwrap();
        assert_eq!(a, b);
        let c: Configuration = "3d6(5D)4s".parse().unwrap();
        assert_eq!(c.to_string(), "3d6.(5D).4s");
        assert_eq!(c.subshells().count(), 2);
        let d: Configuration = "1s.10d".parse().unwrap();
        assert_eq!(d.subshells().nth(1).unwrap().n, 10);
    }

    #[test]
    fn odd_parity_marks_are_equivalent() {
        for label in ["1D°", "1D*", "1Do"] {
            let t: Term = label.parse().unwrap();
            assert_eq!(t.to_string(), "1D°");
        }
        let t: Term = "2D#2°".parse().unwrap();
        assert_eq!(t, "2D°#2".parse().unwrap());
    }

    #[test]
    fn bad_labels_are_quoted_with_what_was_expected() {
        let e = "3J".parse::<Term>().unwrap_err();
        assert!(
            e.to_string().contains("'3J'") && e.to_string().contains("expected"),
            "{e}"
        );
        let e = "1s3".parse::<Configuration>().unwrap_err();
        assert!(
            e.to_string().contains("3 electrons in a 1s subshell"),
            "{e}"
        );
        let e = "2d".parse::<Configuration>().unwrap_err();
        assert!(e.to_string().contains("n must exceed l"), "{e}");
        let e = "2p63s".parse::<Configuration>().unwrap_err();
        assert!(e.to_string().contains("2p63s"), "{e}");
        assert!("1s2.1s".parse::<Configuration>().is_err());
        assert!("".parse::<Configuration>().is_err());
        assert!("2/2".parse::<HalfInt>().is_err());
        assert!("-1".parse::<HalfInt>().is_err());
        assert!("Xx I".parse::<Species>().is_err());
        assert!("He IIII".parse::<Species>().is_err());
        assert!("He IV".parse::<Species>().is_err());
    }

    #[test]
    fn species_labels() {
        let s: Species = "Fe II".parse().unwrap();
        assert_eq!((s.atomic_number, s.charge), (26, 1));
        assert_eq!(s.to_string(), "Fe II");
        assert_eq!("HeI".parse::<Species>().unwrap().to_string(), "He I");
        assert_eq!("Xe XLIV".parse::<Species>().unwrap().charge, 43);
    }

    fn any_parity() -> impl Strategy<Value = Parity> {
        prop_oneof![Just(Parity::Even), Just(Parity::Odd)]
    }

    fn any_half_int() -> impl Strategy<Value = HalfInt> {
        (0u32..40).prop_map(HalfInt::from_twice)
    }

    fn any_term() -> impl Strategy<Value = Term> {
        prop_oneof![
            (
                1u32..9,
                0u32..12,
                any_parity(),
                proptest::option::of(1u32..5)
            )
                .prop_map(|(multiplicity, l, parity, index)| Term::Ls(LsTerm {
                    multiplicity,
                    l,
                    parity,
                    index
                })),
            (1u32..4, any_half_int(), any_parity()).prop_map(|(multiplicity, k, parity)| {
                Term::Pair(PairTerm {
                    multiplicity,
                    k,
                    parity,
                })
            }),
            (any_half_int(), any_half_int(), any_parity())
                .prop_map(|(j1, j2, parity)| Term::Jj(JjTerm { j1, j2, parity })),
        ]
    }

    fn any_configuration() -> impl Strategy<Value = Configuration> {
        let part = prop_oneof![
            3 => (1u32..12, 0u32..5, 1u32..30).prop_map(|(n, l, occ)| {
                let l = l.min(n - 1);
                ConfigPart::Subshell(Subshell { n, l, occupancy: 1 + (occ - 1) % (2 * (2 * l + 1)) })
            }),
            1 => (any_term(), proptest::option::of(any_half_int()))
                .prop_map(|(term, j)| ConfigPart::Intermediate(Intermediate { term, j })),
        ];
        proptest::collection::vec(part, 1..6).prop_filter_map("distinct subshells", |parts| {
            let mut seen = std::collections::HashSet::new();
            let distinct = parts.iter().all(|p| match p {
                ConfigPart::Subshell(s) => seen.insert((s.n, s.l)),
                ConfigPart::Intermediate(_) => true,
            });
            distinct.then_some(Configuration { parts })
        })
    }

    proptest! {
        #[test]
        fn term_print_parse_round_trip(term in any_term()) {
            prop_assert_eq!(term.to_string().parse::<Term>().unwrap(), term);
        }

        #[test]
        fn configuration_print_parse_round_trip(config in any_configuration()) {
            prop_assert_eq!(config.to_string().parse::<Configuration>().unwrap(), config);
        }

        #[test]
        fn j_print_parse_round_trip(j in any_half_int()) {
            prop_assert_eq!(j.to_string().parse::<HalfInt>().unwrap(), j);
        }

        #[test]
        fn species_print_parse_round_trip(z in 1u32..119, charge in 0u32..118) {
            let species = Species { atomic_number: z, charge: charge % z };
            prop_assert_eq!(species.to_string().parse::<Species>().unwrap(), species);
        }
    }
}
