//! Numbers printed to the digits they carry, fast, for the CSV and JSON outputs.
//!
//! Three kinds of number, three rules:
//!
//! - **Positions** (wavenumbers, level energies, deviations in cm⁻¹; wavelengths) are
//!   rounded to a fixed resolution: [`WAVENUMBER_DECIMALS`] decimals in cm⁻¹
//!   (10⁻⁸ cm⁻¹) and the same 10⁻¹¹ nm in every length unit
//!   ([`wavelength_decimals`]). That is ten times finer than the smallest
//!   uncertainty of any line predicted from the compiled tables (10⁻⁷ cm⁻¹, H I
//!   1s – np in the NIST ASD 2014 export; 1.5·10⁻¹⁰ nm for Lyman α), and far below
//!   what a measured line carries, so the rounding never shows in a result.
//! - **Uncertainties, deviations in standard uncertainties, probabilities and line
//!   strengths** get three significant digits ([`UNCERTAINTY_DIGITS`]).
//! - **Numbers as given** in an input (a line's position as read, its intensity) are
//!   printed with the fewest digits that read back to the same value, which for a
//!   number read from text gives that text again.
//!
//! The rounding is exact (the decimal nearest to the binary value, as
//! `format!("{:.N}")` gives it), and the rounded decimal is then held as the double
//! nearest to it, whose shortest printing (Ryū, the `ryu` crate, which `serde_json`
//! uses as well) is that decimal with its trailing zeros dropped: the CSV and the
//! JSON print the same text. A number so large that the resolution would pass 15
//! significant digits keeps 15 (the digits a double holds).
//!
//! Written by hand because no well-kept crate rounds to a given number of decimals
//! or significant digits without going through `std::fmt` (several times slower in
//! a loop over millions of numbers); the slow exact path of `std::fmt` is kept for
//! the rare values that lie within a rounding error of a tie.

/// Decimals of every wavenumber, energy and deviation in cm⁻¹: 10⁻⁸ cm⁻¹.
pub const WAVENUMBER_DECIMALS: u32 = 8;

/// Significant digits of uncertainties, deviations in standard uncertainties,
/// probabilities and line strengths.
pub const UNCERTAINTY_DIGITS: u32 = 3;

/// Most significant digits a rounded number keeps (what a double holds exactly).
const MAX_SIGNIFICANT: i32 = 15;

/// 10^k for k = 0…22, all exact in a double.
const POWERS_OF_TEN: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Decimals of a wavelength in the unit whose length is `nm_per_unit` nanometres
/// (1 for nm, 0.1 for Å, 1000 for µm): a resolution of 10⁻¹¹ nm (11 decimals in
/// nm, 10 in Å, 14 in µm).
pub fn wavelength_decimals(nm_per_unit: f64) -> u32 {
    let decimals = 11.0 + nm_per_unit.log10();
    decimals.round().clamp(0.0, 22.0) as u32
}

/// `value` rounded to `decimals` decimals, as the nearest double (non-finite values
/// unchanged; at most 15 significant digits are kept).
pub fn round_fixed(value: f64, decimals: u32) -> f64 {
    if !value.is_finite() || value == 0.0 {
        return value;
    }
    // Fewer decimals where the resolution would pass 15 significant digits.
    let magnitude = magnitude(value.abs());
    let decimals = (decimals as i32).min(MAX_SIGNIFICANT - 1 - magnitude);
    round_at(value, decimals)
}

/// `value` rounded to `digits` significant digits (1–15), as the nearest double
/// (zero and non-finite values unchanged).
pub fn round_significant(value: f64, digits: u32) -> f64 {
    if !value.is_finite() || value == 0.0 {
        return value;
    }
    let digits = (digits as i32).clamp(1, MAX_SIGNIFICANT);
    let decimals = digits - 1 - magnitude(value.abs());
    // Rounding up may carry into a new leading digit (999.6 → 1000): still the
    // right number, with one significant digit fewer to show.
    round_at(value, decimals)
}

/// ⌊log10 x⌋ for a finite x > 0.
fn magnitude(x: f64) -> i32 {
    // From the binary exponent (log10 2 = 0.30103), then corrected by comparison:
    // several times cheaper than log10 in a loop over millions of numbers.
    let exponent = ((x.to_bits() >> 52) & 0x7ff) as i32;
    let guess = if exponent == 0 {
        x.log10().floor() as i32
    } else {
        ((exponent - 1023) as f64 * std::f64::consts::LOG10_2).floor() as i32
    };
    // log10 can be off by one next to a power of ten.
    if power_of_ten(guess) > x {
        guess - 1
    } else if power_of_ten(guess + 1) <= x {
        guess + 1
    } else {
        guess
    }
}

/// 10^k as a double (exact for |k| ≤ 22).
fn power_of_ten(k: i32) -> f64 {
    match POWERS_OF_TEN.get(k.unsigned_abs() as usize) {
        Some(&p) if k >= 0 => p,
        Some(&p) => 1.0 / p,
        None => 10f64.powi(k),
    }
}

/// `value` rounded at 10^(−decimals) (decimals may be negative), as the nearest
/// double to the rounded decimal.
fn round_at(value: f64, decimals: i32) -> f64 {
    match scaled(value, decimals) {
        // A value that rounds to zero is zero, without a sign.
        Some(0.0) => 0.0,
        Some(rounded) => {
            let power = power_of_ten(decimals.abs());
            // One correctly rounded operation on exact operands: the double
            // nearest to the decimal rounded·10^(−d).
            if decimals >= 0 {
                rounded / power
            } else {
                rounded * power
            }
        }
        None => exact(value, decimals),
    }
}

/// value·10^decimals rounded to an integer (as a double), when that can be done
/// exactly in one correctly rounded operation: |decimals| ≤ 22, the result below
/// 2^52, and value·10^decimals far enough from a tie that the half-ulp error of
/// the product cannot move it across. `None` otherwise (the slow exact path).
fn scaled(value: f64, decimals: i32) -> Option<f64> {
    let power = POWERS_OF_TEN
        .get(decimals.unsigned_abs() as usize)
        .copied()?;
    let x = if decimals >= 0 {
        value * power
    } else {
        value / power
    };
    // Not below 2^52 (or NaN): the slow path.
    if x.abs() >= 4_503_599_627_370_496.0 || x.is_nan() {
        return None;
    }
    let distance_to_tie = ((x - x.trunc()).abs() - 0.5).abs();
    (distance_to_tie > 4.0 * f64::EPSILON * x.abs().max(1.0)).then(|| x.round())
}

/// Append the decimal `digits`·10^(−decimals) as Ryū prints the double nearest to
/// it (which it is, for at most 15 significant digits): plain notation for
/// magnitudes from 10⁻⁵ to below 10¹⁶, exponent notation outside, trailing zeros
/// dropped, no `.0` after an integer.
fn push_decimal(out: &mut Vec<u8>, negative: bool, mut digits: u64, mut decimals: i32) {
    if digits == 0 {
        out.push(b'0');
        return;
    }
    while digits.is_multiple_of(10) {
        digits /= 10;
        decimals -= 1;
    }
    if negative {
        out.push(b'-');
    }
    let mut buffer = itoa::Buffer::new();
    let text = buffer.format(digits).as_bytes();
    let length = text.len() as i32;
    // The value is 0.text × 10^kk (Ryū's layout rule, pretty/mod.rs).
    let kk = length - decimals;
    if decimals <= 0 && kk <= 16 {
        out.extend_from_slice(text);
        out.extend(std::iter::repeat_n(b'0', (-decimals) as usize));
    } else if 0 < kk && kk <= 16 {
        let (whole, fraction) = text.split_at(kk as usize);
        out.extend_from_slice(whole);
        out.push(b'.');
        out.extend_from_slice(fraction);
    } else if -5 < kk && kk <= 0 {
        out.extend_from_slice(b"0.");
        out.extend(std::iter::repeat_n(b'0', (-kk) as usize));
        out.extend_from_slice(text);
    } else {
        let (first, rest) = text.split_at(1);
        out.extend_from_slice(first);
        if !rest.is_empty() {
            out.push(b'.');
            out.extend_from_slice(rest);
        }
        out.push(b'e');
        let mut buffer = itoa::Buffer::new();
        out.extend_from_slice(buffer.format(kk - 1).as_bytes());
    }
}

/// Append `value` rounded at 10^(−decimals), the text that [`push_shortest`] gives
/// for the rounded double, by integer arithmetic where it can.
fn push_rounded(out: &mut Vec<u8>, value: f64, decimals: i32) {
    match scaled(value, decimals) {
        Some(rounded) => push_decimal(
            out,
            value.is_sign_negative() && rounded != 0.0,
            rounded.abs() as u64,
            decimals,
        ),
        None => push_shortest(out, exact(value, decimals)),
    }
}

/// The exact rounding through `std::fmt` (slow, for near-ties and extreme values).
fn exact(value: f64, decimals: i32) -> f64 {
    let text = if decimals >= 0 {
        format!("{value:.prec$}", prec = decimals as usize)
    } else {
        // Rounding to the left of the point: as significant digits in exponent form.
        let digits = (magnitude(value.abs()) + decimals).max(0) as usize;
        format!("{value:.digits$e}")
    };
    let rounded: f64 = text.parse().unwrap_or(value);
    if rounded == 0.0 { 0.0 } else { rounded }
}

/// Append the shortest text that reads back to `value` (`100`, `0.0123`, `1.5e-7`,
/// `inf`, `NaN`): Ryū's digits, without a trailing `.0`.
pub fn push_shortest(out: &mut Vec<u8>, value: f64) {
    if !value.is_finite() {
        out.extend_from_slice(match value {
            v if v.is_nan() => b"NaN".as_slice(),
            v if v > 0.0 => b"inf",
            _ => b"-inf",
        });
        return;
    }
    let mut buffer = ryu::Buffer::new();
    let text = buffer.format_finite(value);
    out.extend_from_slice(text.strip_suffix(".0").unwrap_or(text).as_bytes());
}

/// Append `value` rounded to `decimals` decimals (at most 15 significant digits):
/// the text [`push_shortest`] gives for [`round_fixed`]'s result.
pub fn push_fixed(out: &mut Vec<u8>, value: f64, decimals: u32) {
    if !value.is_finite() || value == 0.0 {
        return push_shortest(out, value);
    }
    let decimals = (decimals as i32).min(MAX_SIGNIFICANT - 1 - magnitude(value.abs()));
    push_rounded(out, value, decimals);
}

/// Append a wavenumber, energy or deviation in cm⁻¹ at the fixed resolution.
pub fn push_wavenumber(out: &mut Vec<u8>, value_cm1: f64) {
    push_fixed(out, value_cm1, WAVENUMBER_DECIMALS);
}

/// Append an uncertainty, a deviation in standard uncertainties, a probability or a
/// line strength with three significant digits: the text [`push_shortest`] gives
/// for [`round_significant`]'s result.
pub fn push_uncertainty(out: &mut Vec<u8>, value: f64) {
    if !value.is_finite() || value == 0.0 {
        return push_shortest(out, value);
    }
    let decimals = UNCERTAINTY_DIGITS as i32 - 1 - magnitude(value.abs());
    push_rounded(out, value, decimals);
}

/// Append an unsigned integer.
pub fn push_integer(out: &mut Vec<u8>, value: usize) {
    let mut buffer = itoa::Buffer::new();
    out.extend_from_slice(buffer.format(value).as_bytes());
}

/// A position that serialises rounded to the given decimals (for JSON):
/// `Fixed(σ, WAVENUMBER_DECIMALS)` for a wavenumber.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fixed(pub f64, pub u32);

/// An uncertainty-like number that serialises with three significant digits.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Uncertainty(pub f64);

impl serde::Serialize for Fixed {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_f64(round_fixed(self.0, self.1))
    }
}

impl serde::Serialize for Uncertainty {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_f64(round_significant(self.0, UNCERTAINTY_DIGITS))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn text(value: f64, push: fn(&mut Vec<u8>, f64)) -> String {
        let mut out = Vec::new();
        push(&mut out, value);
        String::from_utf8(out).unwrap()
    }

    #[test]
    fn positions_keep_eight_decimals_and_drop_trailing_zeros() {
        // The 17-digit printing of a Ritz difference, and a level of the NIST ASD
        // 2014 H I export (82258.9191133 cm⁻¹), which reads back as printed.
        assert_eq!(text(25746.23205579957, push_wavenumber), "25746.2320558");
        assert_eq!(text(82258.9191133, push_wavenumber), "82258.9191133");
        assert_eq!(text(82258.9543992821, push_wavenumber), "82258.95439928");
        assert_eq!(text(-0.000123456789, push_wavenumber), "-0.00012346");
        assert_eq!(text(0.0, push_wavenumber), "0");
        assert_eq!(text(1e-9, push_wavenumber), "0");
        assert_eq!(text(-7.0e-10, push_wavenumber), "0");
        assert_eq!(text(17000.0, push_wavenumber), "17000");
    }

    #[test]
    fn uncertainties_keep_three_significant_digits() {
        assert_eq!(text(0.0123456, push_uncertainty), "0.0123");
        assert_eq!(text(0.001, push_uncertainty), "0.001");
        assert_eq!(text(-2.71559, push_uncertainty), "-2.72");
        assert_eq!(text(123456.0, push_uncertainty), "123000");
        assert_eq!(text(9.996, push_uncertainty), "10");
        assert_eq!(text(1.23456e-7, push_uncertainty), "1.23e-7");
        assert_eq!(text(0.0, push_uncertainty), "0");
        assert_eq!(text(f64::INFINITY, push_uncertainty), "inf");
        assert_eq!(text(f64::NEG_INFINITY, push_uncertainty), "-inf");
        assert_eq!(text(f64::NAN, push_uncertainty), "NaN");
    }

    #[test]
    fn ties_round_as_std_fmt_does() {
        // 0.125 is exact in binary: a true tie, which std::fmt rounds to even.
        assert_eq!(
            round_significant(0.125, 2),
            format!("{:.1e}", 0.125).parse::<f64>().unwrap()
        );
        assert_eq!(
            round_fixed(2.5, 0),
            format!("{:.0}", 2.5).parse::<f64>().unwrap()
        );
        // 1.000000005 is not exact in binary: whichever side of the tie it lies on decides.
        assert_eq!(
            round_fixed(1.000000005, 8),
            format!("{:.8}", 1.000000005).parse::<f64>().unwrap()
        );
    }

    #[test]
    fn wavelength_resolution_is_ten_to_the_minus_eleven_nm() {
        assert_eq!(wavelength_decimals(1.0), 11);
        assert_eq!(wavelength_decimals(0.1), 10);
        assert_eq!(wavelength_decimals(1000.0), 14);
    }

    #[test]
    fn huge_values_keep_fifteen_digits() {
        assert_eq!(
            round_fixed(1.234_567_890_123_456_7e20, 8),
            1.234_567_890_123_46e20
        );
        assert_eq!(text(1e300, push_uncertainty), "1e300");
        assert_eq!(text(1.23456e-300, push_uncertainty), "1.23e-300");
    }

    proptest! {
        // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
        #![proptest_config(proptest::test_runner::Config {
            rng_seed: proptest::test_runner::RngSeed::Fixed(12),
            ..proptest::test_runner::Config::default()
        })]

        // The fast rounding agrees with the exact decimal rounding of std::fmt.
        #[test]
        fn fixed_rounding_is_exact(value in -1e6f64..1e6, decimals in 0u32..9) {
            let expected: f64 = format!("{value:.prec$}", prec = decimals as usize).parse().unwrap();
            let magnitude = if value == 0.0 { 0 } else { value.abs().log10().floor() as i32 };
            prop_assume!(decimals as i32 + magnitude < 14);
            prop_assert_eq!(round_fixed(value, decimals), expected);
        }

        #[test]
        fn significant_rounding_is_exact(mantissa in 1.0f64..10.0, exponent in -30i32..30) {
            let value = mantissa * 10f64.powi(exponent);
            let expected: f64 = format!("{value:.2e}").parse().unwrap();
            prop_assert_eq!(round_significant(value, 3), expected);
        }

        // The integer path prints what Ryū prints for the rounded double, so the
        // CSV and the JSON agree.
        #[test]
        fn integer_printing_is_ryu_printing(mantissa in -10.0f64..10.0, exponent in -12i32..18) {
            let value = mantissa * 10f64.powi(exponent);
            let mut shortest = Vec::new();
            push_shortest(&mut shortest, round_fixed(value, WAVENUMBER_DECIMALS));
            prop_assert_eq!(text(value, push_wavenumber), String::from_utf8(shortest).unwrap());
            let mut shortest = Vec::new();
            push_shortest(&mut shortest, round_significant(value, UNCERTAINTY_DIGITS));
            prop_assert_eq!(text(value, push_uncertainty), String::from_utf8(shortest).unwrap());
        }

        // What is printed reads back to the rounded value, within half a unit of
        // the resolution of the original.
        #[test]
        fn printed_positions_read_back(value in 0.0f64..1e6) {
            let printed: f64 = text(value, push_wavenumber).parse().unwrap();
            prop_assert!((printed - value).abs() <= 0.5e-8 + 4.0 * f64::EPSILON * value);
        }
    }
}
