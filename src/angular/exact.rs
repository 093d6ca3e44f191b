//! Exact values of the form ±√(p/q) and the factorial table they are built from.

use std::fmt;
use std::sync::OnceLock;

use num_bigint::{BigInt, BigUint};
use num_rational::BigRational;
use num_traits::{One, Signed, ToPrimitive, Zero};

/// An exact real number ±√(p/q), with p/q a non-negative big rational: the form of
/// every 3j, 6j and Clebsch–Gordan coefficient (Racah 1942).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SignedSqrt {
    /// True for a negative value.
    pub negative: bool,
    /// The square of the value, p/q ≥ 0.
    pub square: BigRational,
}

impl SignedSqrt {
    /// Zero.
    pub fn zero() -> SignedSqrt {
        SignedSqrt {
            negative: false,
            square: BigRational::zero(),
        }
    }

    /// `sign`·√`prefactor`·`sum`, with `prefactor` ≥ 0: the shape of Racah's formulas.
    pub(crate) fn from_parts(sign: i32, prefactor: BigRational, sum: BigRational) -> SignedSqrt {
        if sum.is_zero() || prefactor.is_zero() {
            return SignedSqrt::zero();
        }
        let negative = (sign < 0) != sum.is_negative();
        SignedSqrt {
            negative,
            square: prefactor * &sum * &sum,
        }
    }

    /// The product of two such numbers.
    pub fn mul(&self, other: &SignedSqrt) -> SignedSqrt {
        let square = &self.square * &other.square;
        if square.is_zero() {
            return SignedSqrt::zero();
        }
        SignedSqrt {
            negative: self.negative != other.negative,
            square,
        }
    }

    /// The value multiplied by `sign`·√`factor`, `factor` ≥ 0.
    pub fn scale(&self, sign: i32, factor: BigRational) -> SignedSqrt {
        self.mul(&SignedSqrt {
            negative: sign < 0,
            square: factor,
        })
    }

    /// True when the value is zero.
    pub fn is_zero(&self) -> bool {
        self.square.is_zero()
    }

    /// The value rounded to `f64` (relative error below 1e-15).
    pub fn to_f64(&self) -> f64 {
        let magnitude = self.square.to_f64().unwrap_or(f64::NAN).sqrt();
        if self.negative { -magnitude } else { magnitude }
    }
}

impl fmt::Display for SignedSqrt {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sign = if self.negative { "-" } else { "" };
        write!(f, "{sign}sqrt({})", self.square)
    }
}

/// n! as a big integer, from a table computed once up to the largest n that
/// Racah's sums reach for j ≤ [`super::MAX_TWO_J`]/2.
pub(crate) fn factorial(n: u32) -> &'static BigUint {
    static TABLE: OnceLock<Vec<BigUint>> = OnceLock::new();
    let table = TABLE.get_or_init(|| {
        // 6j sums reach (j1+j2+j4+j5+1)! ≤ (4·200 + 1)!.
        let len = 2 * super::MAX_TWO_J as usize + 2;
        let mut table = Vec::with_capacity(len);
        let mut value = BigUint::one();
        table.push(value.clone());
        for k in 1..len {
            value *= BigUint::from(k);
            table.push(value.clone());
        }
        table
    });
    &table[n as usize]
}

/// n! as a big rational.
pub(crate) fn factorial_q(n: u32) -> BigRational {
    BigRational::from_integer(BigInt::from(factorial(n).clone()))
}

/// A big rational from an integer.
pub(crate) fn rational(value: i64) -> BigRational {
    BigRational::from_integer(BigInt::from(value))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factorials_are_exact() {
        // 20! = 2432902008176640000 (common practice, no source).
        assert_eq!(factorial(20).to_string(), "2432902008176640000");
        assert_eq!(factorial(0), &BigUint::one());
    }

    #[test]
    fn signed_sqrt_arithmetic() {
        let half = SignedSqrt::from_parts(-1, rational(1) / rational(2), rational(1));
        assert!((half.to_f64() + 0.5f64.sqrt()).abs() < 1e-16);
        let product = half.mul(&half);
        assert!((product.to_f64() - 0.5).abs() < 1e-16);
        assert!(SignedSqrt::from_parts(1, rational(3), rational(0)).is_zero());
    }
}
