//! Angular-momentum algebra: Wigner 3j and 6j symbols, Clebsch–Gordan
//! coefficients and the Condon–Shortley c^k(l m, l' m') coefficients.
//!
//! Every function takes angular momenta as *twice* their value (`two_j = 3` means
//! j = 3/2), so that integers and half-integers share one type and no rounding
//! happens at the boundary. Each symbol exists in two forms:
//!
//! - an exact form ([`three_j_exact`], [`six_j_exact`], [`ck_exact`]) that returns
//!   a [`SignedSqrt`], ±√(p/q) with p/q an exact big rational: Racah's sums are
//!   evaluated in big-integer arithmetic, so the result is exact for every argument
//!   (the check tables go to j = 20; the factorial table goes much further);
//! - an `f64` form ([`three_j`], [`six_j`], [`clebsch_gordan`], [`ck`]) that rounds
//!   the exact value once.
//!
//! # Invalid arguments and selection rules
//!
//! A *selection-rule zero* is a well-formed symbol that vanishes: m₁+m₂+m₃ ≠ 0, or a
//! triad that breaks the triangle rule |a−b| ≤ c ≤ a+b. These return `Ok(0)`, because
//! sums over coupled states run through them all the time.
//!
//! An *ill-formed* symbol names a state that does not exist: |m| > j, j and m not
//! both integer or both half-integer, or (6j) a triad whose sum is not an integer.
//! These return [`AngularError`].
//!
//! # Why hand-written
//!
//! The `wigners` crate (0.3) computes 3j symbols for integer j only (its arguments
//! are `u32` j and `i32` m, not doubled) and has no 6j symbols; spin coupling and
//! the half-integer J of odd-electron ions need both. Racah's closed formulas are
//! short, so they are written here with `num-bigint`/`num-rational` for exactness.
//!
//! ```
//! use termsight::angular::{three_j, six_j};
//! // (1/2 1/2 1; 1/2 -1/2 0) = 1/√6 (Edmonds 1957, Table 2).
//! let value = three_j([1, 1, 2], [1, -1, 0]).unwrap();
//! assert!((value - 1.0 / 6f64.sqrt()).abs() < 1e-15);
//! // {1 1 1; 1 1 1} = 1/6.
//! assert!((six_j([2, 2, 2, 2, 2, 2]).unwrap() - 1.0 / 6.0).abs() < 1e-15);
//! ```

mod exact;
mod gaunt;
mod wigner;

pub use exact::SignedSqrt;
pub use gaunt::{CkTable, ck, ck_exact};
pub use wigner::{
    clebsch_gordan, clebsch_gordan_exact, nine_j, six_j, six_j_exact, three_j, three_j_exact,
};

/// The largest doubled angular momentum accepted (j ≤ 200): it bounds the
/// factorial table (Racah's sums reach (j₁+j₂+j₃+1)! and, for 6j, (Σ/2 + 1)!).
pub const MAX_TWO_J: u32 = 400;

/// An ill-formed angular-momentum symbol.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[non_exhaustive]
pub enum AngularError {
    /// A projection larger than its angular momentum, |m| > j.
    #[error("projection m = {} exceeds j = {}", half(*two_m), half(*two_j as i32))]
    ProjectionOutOfRange {
        /// 2j.
        two_j: u32,
        /// 2m.
        two_m: i32,
    },
    /// j and m are not both integers or both half-integers.
    #[error("j = {} and m = {} are not both integer or both half-integer", half(*two_j as i32), half(*two_m))]
    MixedIntegerness {
        /// 2j.
        two_j: u32,
        /// 2m.
        two_m: i32,
    },
    /// A triad of a 6j symbol whose sum j₁+j₂+j₃ is not an integer.
    #[error("the triad ({}, {}, {}) does not sum to an integer", half(triad[0] as i32), half(triad[1] as i32), half(triad[2] as i32))]
    HalfIntegerTriad {
        /// The three doubled angular momenta.
        triad: [u32; 3],
    },
    /// An angular momentum beyond [`MAX_TWO_J`].
    #[error("angular momentum {} is beyond the supported {}", half(*two_j as i32), MAX_TWO_J / 2)]
    TooLarge {
        /// 2j.
        two_j: u32,
    },
}

/// Print a doubled value as `3/2` or `2`.
fn half(twice: i32) -> String {
    if twice % 2 == 0 {
        format!("{}", twice / 2)
    } else {
        format!("{twice}/2")
    }
}

/// True when a, b, c (doubled) satisfy the triangle rule and a+b+c is even.
pub fn triangle(two_a: u32, two_b: u32, two_c: u32) -> bool {
    (two_a + two_b + two_c).is_multiple_of(2)
        && two_c <= two_a + two_b
        && two_a <= two_b + two_c
        && two_b <= two_c + two_a
}
