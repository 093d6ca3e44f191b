//! Wigner 3j and 6j symbols by Racah's formulas, 9j symbols from 6j, and
//! Clebsch–Gordan coefficients.

use std::collections::HashMap;
use std::hash::Hash;
use std::sync::{Mutex, OnceLock};

use num_rational::BigRational;
use num_traits::Zero;

use super::exact::{SignedSqrt, factorial_q, rational};
use super::{AngularError, MAX_TWO_J, triangle};

/// Check one (j, m) pair: j within range, |m| ≤ j, j − m an integer.
fn check_pair(two_j: u32, two_m: i32) -> Result<(), AngularError> {
    if two_j > MAX_TWO_J {
        return Err(AngularError::TooLarge { two_j });
    }
    if (two_j as i64 + two_m as i64) % 2 != 0 {
        return Err(AngularError::MixedIntegerness { two_j, two_m });
    }
    if two_m.unsigned_abs() > two_j {
        return Err(AngularError::ProjectionOutOfRange { two_j, two_m });
    }
    Ok(())
}

/// Δ(abc) = (a+b−c)!(a−b+c)!(−a+b+c)!/(a+b+c+1)! for a triad (doubled values)
/// that satisfies the triangle rule.
fn delta(a: u32, b: u32, c: u32) -> BigRational {
    let (a, b, c) = (a as i64, b as i64, c as i64);
    let f = |twice: i64| factorial_q((twice / 2) as u32);
    f(a + b - c) * f(a - b + c) * f(-a + b + c) / f(a + b + c + 2)
}

/// (−1)^n for an integer n.
fn parity_sign(n: i64) -> i32 {
    if n.rem_euclid(2) == 0 { 1 } else { -1 }
}

/// The exact Wigner 3j symbol (j₁ j₂ j₃; m₁ m₂ m₃), arguments doubled.
///
/// Racah (1942) formula in the form of Edmonds (1957, eq. 3.7.3):
/// (j₁ j₂ j₃; m₁ m₂ m₃) = (−1)^(j₁−j₂−m₃) √[Δ(j₁j₂j₃) Π(jᵢ+mᵢ)!(jᵢ−mᵢ)!]
/// Σ_t (−1)^t / [t!(j₃−j₂+t+m₁)!(j₃−j₁+t−m₂)!(j₁+j₂−j₃−t)!(j₁−t−m₁)!(j₂−t+m₂)!].
///
/// Returns 0 when m₁+m₂+m₃ ≠ 0 or the triangle rule fails; an error when a
/// projection is out of range or j and m differ in integerness (module doc).
pub fn three_j_exact(two_j: [u32; 3], two_m: [i32; 3]) -> Result<SignedSqrt, AngularError> {
    for (j, m) in two_j.iter().zip(two_m) {
        check_pair(*j, m)?;
    }
    let [j1, j2, j3] = two_j.map(|x| x as i64);
    let [m1, m2, m3] = two_m.map(|x| x as i64);
    if m1 + m2 + m3 != 0 || !triangle(two_j[0], two_j[1], two_j[2]) {
        return Ok(SignedSqrt::zero());
    }
    // Everything below is in doubled units; every combination used is even.
    let f = |twice: i64| factorial_q((twice / 2) as u32);
    let t_min = 0.max(j2 - j3 - m1).max(j1 - j3 + m2);
    let t_max = (j1 + j2 - j3).min(j1 - m1).min(j2 + m2);
    let mut sum = BigRational::zero();
    let mut t = t_min;
    while t <= t_max {
        let denominator = f(t)
            * f(j3 - j2 + t + m1)
            * f(j3 - j1 + t - m2)
            * f(j1 + j2 - j3 - t)
            * f(j1 - t - m1)
            * f(j2 - t + m2);
        let term = BigRational::from_integer(1.into()) / denominator;
        if parity_sign(t / 2) > 0 {
            sum += term;
        } else {
            sum -= term;
        }
        t += 2;
    }
    let prefactor = delta(two_j[0], two_j[1], two_j[2])
        * f(j1 + m1)
        * f(j1 - m1)
        * f(j2 + m2)
        * f(j2 - m2)
        * f(j3 + m3)
        * f(j3 - m3);
    let sign = parity_sign((j1 - j2 - m3) / 2);
    Ok(SignedSqrt::from_parts(sign, prefactor, sum))
}

/// Remember at most this many values per symbol (a bound on memory; the level
/// model of one ion needs a few thousand).
const CACHE_LIMIT: usize = 1 << 20;

/// A process-wide memo of symbol values.
type Memo<K> = OnceLock<Mutex<HashMap<K, f64>>>;

/// Look `key` up in `cache`, computing and storing it on a miss. The exact
/// big-rational sums cost microseconds each, and building a level model asks for
/// the same few thousand symbols many times over.
fn memoised<K: Hash + Eq + Copy>(
    cache: &'static Memo<K>,
    key: K,
    compute: impl FnOnce() -> Result<f64, AngularError>,
) -> Result<f64, AngularError> {
    let map = cache.get_or_init(|| Mutex::new(HashMap::new()));
    if let Some(&value) = map.lock().ok().and_then(|m| m.get(&key).copied()).as_ref() {
        return Ok(value);
    }
    let value = compute()?;
    if let Ok(mut m) = map.lock()
        && m.len() < CACHE_LIMIT
    {
        m.insert(key, value);
    }
    Ok(value)
}

/// The Wigner 3j symbol as `f64` (see [`three_j_exact`]); values are remembered.
pub fn three_j(two_j: [u32; 3], two_m: [i32; 3]) -> Result<f64, AngularError> {
    static CACHE: Memo<([u32; 3], [i32; 3])> = OnceLock::new();
    memoised(&CACHE, (two_j, two_m), || {
        three_j_exact(two_j, two_m).map(|v| v.to_f64())
    })
}

/// The exact Wigner 6j symbol {j₁ j₂ j₃; j₄ j₅ j₆}, arguments doubled.
///
/// Racah (1942) formula in the form of Edmonds (1957, eq. 6.3.7):
/// {j₁ j₂ j₃; j₄ j₅ j₆} = √[Δ(j₁j₂j₃)Δ(j₁j₅j₆)Δ(j₄j₂j₆)Δ(j₄j₅j₃)]
/// Σ_t (−1)^t (t+1)! / [(t−a₁)!(t−a₂)!(t−a₃)!(t−a₄)!(b₁−t)!(b₂−t)!(b₃−t)!],
/// a₁ = j₁+j₂+j₃, a₂ = j₁+j₅+j₆, a₃ = j₄+j₂+j₆, a₄ = j₄+j₅+j₃,
/// b₁ = j₁+j₂+j₄+j₅, b₂ = j₂+j₃+j₅+j₆, b₃ = j₃+j₁+j₆+j₄.
///
/// Returns 0 when a triad breaks the triangle rule; an error when a triad sum is
/// not an integer (module doc).
pub fn six_j_exact(two_j: [u32; 6]) -> Result<SignedSqrt, AngularError> {
    if let Some(&two_j) = two_j.iter().find(|&&j| j > MAX_TWO_J) {
        return Err(AngularError::TooLarge { two_j });
    }
    let [j1, j2, j3, j4, j5, j6] = two_j;
    let triads = [[j1, j2, j3], [j1, j5, j6], [j4, j2, j6], [j4, j5, j3]];
    for triad in triads {
        if !(triad[0] + triad[1] + triad[2]).is_multiple_of(2) {
            return Err(AngularError::HalfIntegerTriad { triad });
        }
    }
    if !triads.iter().all(|t| triangle(t[0], t[1], t[2])) {
        return Ok(SignedSqrt::zero());
    }
    let a = triads.map(|t| (t[0] + t[1] + t[2]) as i64 / 2);
    let [j1, j2, j3, j4, j5, j6] = two_j.map(|x| x as i64);
    let b = [
        (j1 + j2 + j4 + j5) / 2,
        (j2 + j3 + j5 + j6) / 2,
        (j3 + j1 + j6 + j4) / 2,
    ];
    let f = |n: i64| factorial_q(n as u32);
    let t_min = *a.iter().max().unwrap_or(&0);
    let t_max = *b.iter().min().unwrap_or(&0);
    let mut sum = BigRational::zero();
    for t in t_min..=t_max {
        let denominator = a.iter().map(|&ai| f(t - ai)).product::<BigRational>()
            * b.iter().map(|&bi| f(bi - t)).product::<BigRational>();
        let term = f(t + 1) / denominator;
        if t % 2 == 0 {
            sum += term;
        } else {
            sum -= term;
        }
    }
    let prefactor = triads
        .iter()
        .map(|t| delta(t[0], t[1], t[2]))
        .product::<BigRational>();
    Ok(SignedSqrt::from_parts(1, prefactor, sum))
}

/// The Wigner 6j symbol as `f64` (see [`six_j_exact`]); values are remembered.
pub fn six_j(two_j: [u32; 6]) -> Result<f64, AngularError> {
    static CACHE: Memo<[u32; 6]> = OnceLock::new();
    memoised(&CACHE, two_j, || six_j_exact(two_j).map(|v| v.to_f64()))
}

/// The Wigner 9j symbol {j₁ j₂ j₃; j₄ j₅ j₆; j₇ j₈ j₉} as `f64`, arguments
/// doubled and given row by row, as the sum of products of three 6j symbols
/// (Edmonds 1957, eq. 6.4.3, from memory):
/// Σ_x (−1)^(2x) (2x+1) {j₁ j₄ j₇; j₈ j₉ x} {j₂ j₅ j₈; j₄ x j₆} {j₃ j₆ j₉; x j₁ j₂}.
/// Each 6j is exact and rounded once, so the sum carries a few ulps of rounding.
///
/// Returns 0 when a row or column breaks the triangle rule; an error when a row
/// or column sum is not an integer. Values are remembered.
pub fn nine_j(two_j: [u32; 9]) -> Result<f64, AngularError> {
    if let Some(&two_j) = two_j.iter().find(|&&j| j > MAX_TWO_J) {
        return Err(AngularError::TooLarge { two_j });
    }
    let [j1, j2, j3, j4, j5, j6, j7, j8, j9] = two_j;
    let lines = [
        [j1, j2, j3],
        [j4, j5, j6],
        [j7, j8, j9],
        [j1, j4, j7],
        [j2, j5, j8],
        [j3, j6, j9],
    ];
    for triad in lines {
        if !(triad[0] + triad[1] + triad[2]).is_multiple_of(2) {
            return Err(AngularError::HalfIntegerTriad { triad });
        }
    }
    if !lines.iter().all(|t| triangle(t[0], t[1], t[2])) {
        return Ok(0.0);
    }
    static CACHE: Memo<[u32; 9]> = OnceLock::new();
    memoised(&CACHE, two_j, || {
        // x couples with j₁ and j₉, j₈ and j₄, j₂ and j₆.
        let low = j1.abs_diff(j9).max(j4.abs_diff(j8)).max(j2.abs_diff(j6));
        let high = (j1 + j9).min(j4 + j8).min(j2 + j6);
        let mut sum = 0.0;
        let mut x = low;
        while x <= high {
            let term = six_j([j1, j4, j7, j8, j9, x])?
                * six_j([j2, j5, j8, j4, x, j6])?
                * six_j([j3, j6, j9, x, j1, j2])?;
            // (−1)^(2x) with 2x = x doubled.
            let sign = if x.is_multiple_of(2) { 1.0 } else { -1.0 };
            sum += sign * (x as f64 + 1.0) * term;
            x += 2;
        }
        Ok(sum)
    })
}

/// The exact Clebsch–Gordan coefficient ⟨j₁ m₁ j₂ m₂ | J M⟩ (Condon–Shortley
/// phase), arguments doubled:
/// ⟨j₁ m₁ j₂ m₂ | J M⟩ = (−1)^(j₁−j₂+M) √(2J+1) (j₁ j₂ J; m₁ m₂ −M)
/// (Edmonds 1957, eq. 3.7.1).
pub fn clebsch_gordan_exact(
    two_j1: u32,
    two_m1: i32,
    two_j2: u32,
    two_m2: i32,
    two_j: u32,
    two_m: i32,
) -> Result<SignedSqrt, AngularError> {
    let symbol = three_j_exact([two_j1, two_j2, two_j], [two_m1, two_m2, -two_m])?;
    let sign = parity_sign((two_j1 as i64 - two_j2 as i64 + two_m as i64) / 2);
    Ok(symbol.scale(sign, rational(two_j as i64 + 1)))
}

/// The Clebsch–Gordan coefficient as `f64` (see [`clebsch_gordan_exact`]);
/// values are remembered.
pub fn clebsch_gordan(
    two_j1: u32,
    two_m1: i32,
    two_j2: u32,
    two_m2: i32,
    two_j: u32,
    two_m: i32,
) -> Result<f64, AngularError> {
    static CACHE: Memo<[i32; 6]> = OnceLock::new();
    let key = [
        two_j1 as i32,
        two_m1,
        two_j2 as i32,
        two_m2,
        two_j as i32,
        two_m,
    ];
    memoised(&CACHE, key, || {
        clebsch_gordan_exact(two_j1, two_m1, two_j2, two_m2, two_j, two_m).map(|v| v.to_f64())
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn nine_j_values() {
        // Values from sympy 1.14 (sympy.physics.wigner.wigner_9j, exact: 1/18, √7/60,
        // 1/315, 41/2450, √21/2100), rows given
        // in order, angular momenta doubled.
        let cases: [([u32; 9], f64); 5] = [
            ([2, 2, 2, 2, 2, 2, 2, 2, 0], 1.0 / 18.0),
            ([4, 2, 2, 1, 1, 2, 5, 3, 4], 7f64.sqrt() / 60.0),
            ([6, 4, 2, 5, 1, 4, 7, 5, 6], 1.0 / 315.0),
            ([4, 4, 4, 4, 4, 4, 4, 4, 4], 41.0 / 2450.0),
            ([6, 6, 4, 3, 3, 2, 5, 3, 2], 21f64.sqrt() / 2100.0),
        ];
        for (args, want) in cases {
            let got = nine_j(args).unwrap();
            assert!((got - want).abs() < 1e-14, "{args:?}: {got} vs {want}");
        }
        // A triangle broken in a column: zero; a half-integer row sum: an error.
        assert_eq!(nine_j([2, 2, 2, 2, 2, 2, 8, 2, 2]).unwrap(), 0.0);
        assert!(nine_j([1, 2, 2, 2, 2, 2, 2, 2, 2]).is_err());
    }

    #[test]
    fn nine_j_with_a_zero_is_a_six_j() {
        // {a b e; c d e; f f 0} = (−1)^(b+c+e+f) {a b e; d c f} / √((2e+1)(2f+1))
        // (Edmonds 1957, eq. 6.4.14, from memory).
        for (a, b, c, d, e, f) in [(2, 2, 2, 2, 2, 4), (3, 1, 4, 2, 2, 3), (6, 4, 1, 3, 4, 5)] {
            let nine = nine_j([a, b, e, c, d, e, f, f, 0]).unwrap();
            let six = six_j([a, b, e, d, c, f]).unwrap();
            let sign = if ((b + c + e + f) / 2) % 2 == 0 {
                1.0
            } else {
                -1.0
            };
            let want = sign * six / (((e + 1) * (f + 1)) as f64).sqrt();
            assert!((nine - want).abs() < 1e-14, "{nine} vs {want}");
            assert!(want.abs() > 1e-6, "the check must not be a zero");
        }
    }

    #[test]
    fn spin_coupling_coefficients() {
        // Two spins 1/2: ⟨½ ½ ½ −½|0 0⟩ = 1/√2, ⟨½ −½ ½ ½|0 0⟩ = −1/√2,
        // ⟨½ ½ ½ −½|1 0⟩ = 1/√2 (Condon & Shortley 1935, table 2³).
        let s = 0.5f64.sqrt();
        assert!((clebsch_gordan(1, 1, 1, -1, 0, 0).unwrap() - s).abs() < 1e-15);
        assert!((clebsch_gordan(1, -1, 1, 1, 0, 0).unwrap() + s).abs() < 1e-15);
        assert!((clebsch_gordan(1, 1, 1, -1, 2, 0).unwrap() - s).abs() < 1e-15);
        // Stretched state: ⟨j j j j|2j 2j⟩ = 1.
        assert!((clebsch_gordan(4, 4, 6, 6, 10, 10).unwrap() - 1.0).abs() < 1e-15);
    }

    #[test]
    fn ill_formed_arguments_are_errors() {
        assert!(matches!(
            three_j([2, 2, 2], [4, -2, -2]),
            Err(AngularError::ProjectionOutOfRange { .. })
        ));
        assert!(matches!(
            three_j([2, 1, 1], [1, -1, 0]),
            Err(AngularError::MixedIntegerness { .. })
        ));
        assert!(matches!(
            six_j([1, 1, 1, 2, 2, 2]),
            Err(AngularError::HalfIntegerTriad { .. })
        ));
        assert!(matches!(
            six_j([402, 2, 2, 2, 2, 2]),
            Err(AngularError::TooLarge { .. })
        ));
    }

    proptest! {
        // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
        #![proptest_config(ProptestConfig { cases: 64, rng_seed: proptest::test_runner::RngSeed::Fixed(17), ..ProptestConfig::default() })]

        #[test]
        fn three_j_orthogonality(two_j1 in 0u32..8, two_j2 in 0u32..8, pick in 0u32..100) {
            // Σ_{m1 m2} (2j+1)(j1 j2 j; m1 m2 m)(j1 j2 j'; m1 m2 m) = δ_jj'
            // (Edmonds 1957, eq. 3.7.8), for j = j' at m = −(m1+m2) = j (stretched side).
            let lo = two_j1.abs_diff(two_j2);
            let hi = two_j1 + two_j2;
            let two_j = lo + 2 * (pick % ((hi - lo) / 2 + 1));
            let mut total = 0.0;
            let mut m1 = -(two_j1 as i32);
            while m1 <= two_j1 as i32 {
                let m2 = -(two_j as i32) - m1;
                if m2.unsigned_abs() <= two_j2 {
                    let v = three_j([two_j1, two_j2, two_j], [m1, m2, two_j as i32]).unwrap();
                    total += (two_j as f64 + 1.0) * v * v;
                }
                m1 += 2;
            }
            prop_assert!((total - 1.0).abs() < 1e-12);
        }

        #[test]
        fn six_j_column_permutation_symmetry(j in proptest::array::uniform6(0u32..9)) {
            // The 6j symbol is invariant under permutation of its columns
            // (Edmonds 1957, eq. 6.2.4).
            let a = six_j(j);
            let b = six_j([j[1], j[0], j[2], j[4], j[3], j[5]]);
            let c = six_j([j[2], j[1], j[0], j[5], j[4], j[3]]);
            match (a, b, c) {
                (Ok(a), Ok(b), Ok(c)) => {
                    prop_assert!((a - b).abs() < 1e-13 && (a - c).abs() < 1e-13);
                }
                (a, b, c) => prop_assert!(a.is_err() && b.is_err() && c.is_err()),
            }
        }
    }
}
