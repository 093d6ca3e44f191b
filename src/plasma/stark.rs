//! Electron density from the Stark widths of the hydrogen Balmer lines Hα and Hβ.
//!
//! Formula: the fits of Gigosos, González & Cardeñoso (2003, Spectrochim. Acta B 58,
//! 1489–1504) to computer-simulated profiles (ions moving, electrons and ions
//! together), for the full width at half maximum of the whole line:
//! Hβ: w = 4.800 nm (n_e / 10²³ m⁻³)^0.68116;
//! Hα: w = 1.098 nm (n_e / 10²³ m⁻³)^0.67965.
//! Inverted: n_e = 10¹⁷ cm⁻³ (w / w₀)^{1/p}. The coefficients are written from
//! memory of the paper (so said); they are the ones widely quoted from it. The fits
//! depend only weakly on temperature, which they leave out.
//! Validity accepted here: 10¹⁴ to 10¹⁸ cm⁻³ (from memory: the simulations of the
//! paper span about 10²⁰ to 10²⁵ m⁻³; above about 10¹⁸ cm⁻³ the Balmer lines merge
//! with their neighbours, and below 10¹⁴ cm⁻³ the Stark width is smaller than any
//! usual Doppler width). Outside, the result is refused with the reason.
//!
//! The measured width is a Voigt FWHM w_V of a Lorentzian Stark part w_L and a
//! Gaussian part w_G = (w_instrument² + w_Doppler²)^{1/2} (the instrument function
//! taken as Gaussian, as is usual). w_L follows from the approximation of Olivero &
//! Longbothum (1977, J. Quant. Spectrosc. Radiat. Transfer 17, 233; accurate to
//! about 0.02 %): w_V = 0.5346 w_L + (0.2166 w_L² + w_G²)^{1/2}, solved for w_L. The
//! Doppler FWHM is w_D = λ (8 kT ln 2 / (m c²))^{1/2} at the given temperature.
//! (A hydrogen Stark profile is not a Lorentzian; this deconvolution is the usual
//! approximation and the fits are for the whole profile's FWHM.)

use serde::Serialize;

use crate::units::constants::{ATOMIC_MASS_KG, BOLTZMANN_J_K, SPEED_OF_LIGHT_M_S};

/// The Balmer lines with a published Stark-width fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum BalmerLine {
    /// n = 3 → 2, 656.28 nm (air).
    #[serde(rename = "H-alpha")]
    Alpha,
    /// n = 4 → 2, 486.13 nm (air).
    #[serde(rename = "H-beta")]
    Beta,
}

/// Mass of the hydrogen atom, u (standard atomic weight 1.008; IUPAC, from memory).
const HYDROGEN_MASS_U: f64 = 1.008;

/// Densities the fits are used for, cm⁻³ (see the module documentation).
pub const STARK_RANGE_CM3: (f64, f64) = (1e14, 1e18);

impl BalmerLine {
    /// Name in outputs.
    pub fn name(self) -> &'static str {
        match self {
            BalmerLine::Alpha => "H-alpha",
            BalmerLine::Beta => "H-beta",
        }
    }

    /// Vacuum wavenumber of the line centre, cm⁻¹ (NIST ASD, fine-structure
    /// centroid; 15233.07 and 20564.79 cm⁻¹).
    pub fn wavenumber_cm1(self) -> f64 {
        match self {
            BalmerLine::Alpha => 15_233.07,
            BalmerLine::Beta => 20_564.79,
        }
    }

    /// The line whose centre lies within 5 cm⁻¹ of `wavenumber_cm1`.
    pub fn near(wavenumber_cm1: f64) -> Option<BalmerLine> {
        [BalmerLine::Alpha, BalmerLine::Beta]
            .into_iter()
            .find(|l| (l.wavenumber_cm1() - wavenumber_cm1).abs() < 5.0)
    }

    /// (w₀ nm at 10¹⁷ cm⁻³, exponent p) of the fit w = w₀ (n_e/10¹⁷ cm⁻³)^p
    /// (Gigosos, González & Cardeñoso 2003; from memory).
    pub fn fit(self) -> (f64, f64) {
        match self {
            BalmerLine::Alpha => (1.098, 0.67965),
            BalmerLine::Beta => (4.800, 0.68116),
        }
    }

    /// The Stark FWHM, nm, at `density_cm3`.
    pub fn stark_width_nm(self, density_cm3: f64) -> f64 {
        let (w0, p) = self.fit();
        w0 * (density_cm3 / 1e17).powf(p)
    }

    /// The electron density, cm⁻³, of a Stark FWHM `width_nm` (the fit inverted).
    pub fn density_cm3(self, width_nm: f64) -> f64 {
        let (w0, p) = self.fit();
        1e17 * (width_nm / w0).powf(1.0 / p)
    }
}

/// Doppler FWHM, nm, of a line at `wavelength_nm` emitted by atoms of mass `mass_u`
/// at `temperature_k`: λ (8 kT ln 2/(m c²))^{1/2} (textbook, e.g. Griem 1997 §4.1).
pub fn doppler_fwhm_nm(wavelength_nm: f64, temperature_k: f64, mass_u: f64) -> f64 {
    let m = mass_u * ATOMIC_MASS_KG;
    wavelength_nm
        * (8.0 * BOLTZMANN_J_K * temperature_k * std::f64::consts::LN_2
            / (m * SPEED_OF_LIGHT_M_S * SPEED_OF_LIGHT_M_S))
            .sqrt()
}

/// The Voigt FWHM of Lorentzian and Gaussian FWHMs (Olivero & Longbothum 1977).
pub fn voigt_fwhm(lorentz: f64, gauss: f64) -> f64 {
    0.5346 * lorentz + (0.2166 * lorentz * lorentz + gauss * gauss).sqrt()
}

/// The Lorentzian FWHM inside a Voigt FWHM `voigt` with Gaussian FWHM `gauss`
/// (Olivero & Longbothum 1977 solved for w_L: the smaller root of
/// 0.069197 w_L² − 1.0692 w_V w_L + w_V² − w_G² = 0). `None` when w_V ≤ w_G.
pub fn lorentz_fwhm(voigt: f64, gauss: f64) -> Option<f64> {
    if voigt.is_nan() || gauss.is_nan() || voigt <= gauss {
        return None;
    }
    let a = 0.5346 * 0.5346 - 0.2166;
    let b = 2.0 * 0.5346 * voigt;
    let c = voigt * voigt - gauss * gauss;
    // Smaller root of a x² − b x + c = 0, written without cancellation.
    let discriminant = (b * b - 4.0 * a * c).max(0.0);
    Some(2.0 * c / (b + discriminant.sqrt()))
}

/// A measured Balmer-line width.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct WidthMeasurement {
    /// 1-based data row of the line in the input.
    pub line: usize,
    /// Which line.
    pub balmer: BalmerLine,
    /// Measured FWHM, nm.
    pub fwhm_nm: f64,
    /// Its standard uncertainty, nm (0 when none is given).
    pub sigma_nm: f64,
}

/// The electron density from one width.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StarkDensity {
    /// The measurement.
    pub measurement: WidthMeasurement,
    /// Instrumental FWHM used, nm.
    pub instrument_nm: f64,
    /// Temperature used for the Doppler width, K.
    pub temperature_k: f64,
    /// Doppler FWHM, nm.
    pub doppler_nm: f64,
    /// The Stark (Lorentzian) FWHM, nm, and its standard uncertainty.
    pub stark_nm: f64,
    /// Standard uncertainty of the Stark FWHM, nm.
    pub stark_sigma_nm: f64,
    /// n_e, cm⁻³.
    pub density_cm3: f64,
    /// Its standard uncertainty, cm⁻³ (from the width's alone; the fit's own
    /// accuracy is not included).
    pub density_sigma_cm3: f64,
}

/// Why a width gives no density.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum StarkError {
    /// Not a positive finite width.
    #[error("width {value} nm is not a positive number")]
    BadWidth {
        /// The value.
        value: f64,
    },
    /// The measured width is not larger than the instrumental and Doppler widths.
    #[error(
        "the measured FWHM {measured_nm} nm is not wider than the instrument and Doppler widths together ({gaussian_nm:.4} nm: instrument {instrument_nm} nm, Doppler {doppler_nm:.4} nm at {temperature_k:.0} K): no Stark width is left"
    )]
    NarrowerThanInstrument {
        /// Measured FWHM, nm.
        measured_nm: f64,
        /// Gaussian FWHM, nm.
        gaussian_nm: f64,
        /// Instrument FWHM, nm.
        instrument_nm: f64,
        /// Doppler FWHM, nm.
        doppler_nm: f64,
        /// Temperature, K.
        temperature_k: f64,
    },
    /// The density lies outside the range of the fit.
    #[error(
        "n_e = {density_cm3:.3e} cm-3 from {line} lies outside the range of the Gigosos, González & Cardeñoso (2003) fit used here ({low:.0e} to {high:.0e} cm-3)"
    )]
    OutOfRange {
        /// Which line.
        line: &'static str,
        /// The density, cm⁻³.
        density_cm3: f64,
        /// Lower end, cm⁻³.
        low: f64,
        /// Upper end, cm⁻³.
        high: f64,
    },
}

/// The electron density from a measured Balmer width, the instrumental FWHM
/// `instrument_nm` and the temperature for the Doppler width (see the module
/// documentation). The uncertainty of the width is propagated through the
/// deconvolution and the fit.
pub fn stark_density(
    measurement: WidthMeasurement,
    instrument_nm: f64,
    temperature_k: f64,
) -> Result<StarkDensity, StarkError> {
    let measured = measurement.fwhm_nm;
    if !(measured.is_finite() && measured > 0.0) {
        return Err(StarkError::BadWidth { value: measured });
    }
    let wavelength_nm = 1e7 / measurement.balmer.wavenumber_cm1();
    let doppler_nm = doppler_fwhm_nm(wavelength_nm, temperature_k, HYDROGEN_MASS_U);
    let gaussian = instrument_nm.hypot(doppler_nm);
    let narrower = || StarkError::NarrowerThanInstrument {
        measured_nm: measured,
        gaussian_nm: gaussian,
        instrument_nm,
        doppler_nm,
        temperature_k,
    };
    let stark_nm = lorentz_fwhm(measured, gaussian).ok_or_else(narrower)?;
    // dw_L/dw_V by differentiating w_V = 0.5346 w_L + √(0.2166 w_L² + w_G²).
    let root = (0.2166 * stark_nm * stark_nm + gaussian * gaussian).sqrt();
    let dv_dl = 0.5346 + 0.2166 * stark_nm / root;
    let stark_sigma_nm = measurement.sigma_nm.max(0.0) / dv_dl;
    let density_cm3 = measurement.balmer.density_cm3(stark_nm);
    let (low, high) = STARK_RANGE_CM3;
    if !(density_cm3 >= low && density_cm3 <= high) {
        return Err(StarkError::OutOfRange {
            line: measurement.balmer.name(),
            density_cm3,
            low,
            high,
        });
    }
    let (_, p) = measurement.balmer.fit();
    Ok(StarkDensity {
        measurement,
        instrument_nm,
        temperature_k,
        doppler_nm,
        stark_nm,
        stark_sigma_nm,
        density_cm3,
        density_sigma_cm3: density_cm3 * stark_sigma_nm / (p * stark_nm),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_fits_reproduce_their_published_points() {
        // Gigosos, González & Cardeñoso 2003 (from memory): Hβ FWHM 4.800 nm and
        // Hα FWHM 1.098 nm at n_e = 10²³ m⁻³ (the fits' reference points), and the
        // much quoted consequence that Hβ is about 1.00 nm wide at 10¹⁶ cm⁻³
        // (4.800 × 10^−0.68116 = 1.000 nm).
        assert!((BalmerLine::Beta.stark_width_nm(1e17) - 4.800).abs() < 1e-12);
        assert!((BalmerLine::Alpha.stark_width_nm(1e17) - 1.098).abs() < 1e-12);
        assert!((BalmerLine::Beta.stark_width_nm(1e16) - 1.000).abs() < 5e-4);
        // The inverted forms as papers using the fits quote them (from memory):
        // n_e = 10¹⁷ (w/4.800 nm)^1.468 cm⁻³ (Hβ) and 10¹⁷ (w/1.098 nm)^1.4713 cm⁻³
        // (Hα); the exponents are printed to four figures, so 2e-4 relative on the
        // exponent, about 1e-3 on n_e over a decade of width.
        for w in [0.5, 2.0, 9.0] {
            let quoted = 1e17 * (w / 4.800f64).powf(1.468);
            assert!((BalmerLine::Beta.density_cm3(w) / quoted - 1.0).abs() < 2e-3);
        }
        for w in [0.2, 1.0, 3.0] {
            let quoted = 1e17 * (w / 1.098f64).powf(1.4713);
            assert!((BalmerLine::Alpha.density_cm3(w) / quoted - 1.0).abs() < 2e-3);
        }
        // The inverse gives the density back.
        for density in [1e14, 3.3e15, 1e17, 8e17] {
            for line in [BalmerLine::Alpha, BalmerLine::Beta] {
                let back = line.density_cm3(line.stark_width_nm(density));
                assert!((back / density - 1.0).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn voigt_widths_match_the_exact_profile() {
        // scipy.special.voigt_profile, FWHM found by brentq: w_L = w_G = 1 gives
        // 1.6375953596283357; w_L = 0.3, w_G = 1 gives 1.1698032914122478. Olivero
        // & Longbothum's formula is stated accurate to about 0.02 % (0.024 % at
        // w_L/w_G = 0.3, as found here): tolerance 0.03 %.
        assert!((voigt_fwhm(1.0, 1.0) / 1.637_595_359_628_335_7 - 1.0).abs() < 3e-4);
        assert!((voigt_fwhm(0.3, 1.0) / 1.169_803_291_412_247_8 - 1.0).abs() < 3e-4);
        // The inverse undoes the formula, and its limits are the pure profiles.
        for (l, g) in [(1.0, 1.0), (0.3, 1.0), (5.0, 0.1), (0.01, 2.0)] {
            let back = lorentz_fwhm(voigt_fwhm(l, g), g).unwrap();
            assert!((back - l).abs() < 1e-12 * (1.0 + l), "{l} {g} {back}");
        }
        assert!(lorentz_fwhm(1.0, 1.0).is_none());
    }

    #[test]
    fn doppler_width_is_the_textbook_value() {
        // Textbook (Griem 1997 §4.1; from memory): Δλ_D = 7.16×10⁻⁷ λ (T/M)^{1/2};
        // Hβ at 10 000 K: 7.16e-7 × 486.27 × (10⁴/1.008)^{1/2} = 0.0347 nm.
        let w = doppler_fwhm_nm(486.27, 1e4, 1.008);
        assert!(
            (w - 7.16e-7 * 486.27 * (1e4f64 / 1.008).sqrt()).abs() < 2e-5,
            "{w}"
        );
    }

    fn beta(fwhm_nm: f64) -> WidthMeasurement {
        WidthMeasurement {
            line: 1,
            balmer: BalmerLine::Beta,
            fwhm_nm,
            sigma_nm: 0.01,
        }
    }

    #[test]
    fn densities_come_out_of_the_measured_width() {
        // A Stark width of 1.000 nm convolved with 0.05 nm instrument and Doppler at
        // 10 000 K gives n_e back near 10¹⁶ cm⁻³ (the fit's own point, above).
        let doppler = doppler_fwhm_nm(1e7 / 20_564.79, 1e4, 1.008);
        let measured = voigt_fwhm(1.0, 0.05f64.hypot(doppler));
        let result = stark_density(beta(measured), 0.05, 1e4).unwrap();
        assert!((result.stark_nm - 1.0).abs() < 1e-9);
        assert!((result.density_cm3 / 1e16 - 1.0).abs() < 1e-3);
        // σ(n_e)/n_e = σ(w_L)/(p w_L) and σ(w_L) ≥ σ(w_V)/1.0 (dw_V/dw_L ≤ 1).
        assert!(result.density_sigma_cm3 > 0.01 / 0.68116 * 1e16 * 0.99);
    }

    #[test]
    fn widths_narrower_than_the_instrument_or_out_of_range_are_refused() {
        assert!(matches!(
            stark_density(beta(0.04), 0.05, 1e4),
            Err(StarkError::NarrowerThanInstrument { .. })
        ));
        // 50 nm would mean about 3e18 cm⁻³, above the range.
        assert!(matches!(
            stark_density(beta(50.0), 0.05, 1e4),
            Err(StarkError::OutOfRange { .. })
        ));
        // 0.02 nm measured (about 0.013 nm of Stark width beside 0.011 nm of Doppler
        // width at 1000 K) would mean about 2e13 cm⁻³, below it.
        assert!(matches!(
            stark_density(beta(0.02), 0.0, 1e3),
            Err(StarkError::OutOfRange { .. })
        ));
        assert!(matches!(
            stark_density(beta(-1.0), 0.05, 1e4),
            Err(StarkError::BadWidth { .. })
        ));
    }
}
