//! Generator of the demo line list `examples/argon-arc/lines.csv`.
//!
//! Invented scenario: a free-burning argon arc on the demonstration bench of a
//! plasma course, observed side-on through a radiometrically calibrated
//! spectrometer (400–850 nm in air, peaks read to 0.003 nm, intensities in photon
//! counts with 5 % standard uncertainty). A trace of hydrogen in the gas gives Hα
//! and Hβ, whose widths are measured (instrumental FWHM 0.05 nm).
//!
//! How the lines are made (from the compiled reference levels and transition
//! probabilities, NIST ASD), for an arc in local thermodynamic equilibrium at
//! T = 13 000 K and n_e = 1.0e17 cm⁻³:
//! - Ar I and Ar II: the 25 brightest lines of each stage with a published A value
//!   in the range, photon intensities I ∝ g_k A_ki (N/U) e^(−E_k/kT), the ion's N⁺/N⁰
//!   from the Saha equation (2 (U⁺/U⁰)(2π m_e kT/h²)^{3/2} e^(−χ/kT)/n_e, lowering
//!   left out: 150 cm⁻¹ here), partition functions summed over the compiled levels;
//!   a log-normal scatter of 5 %.
//! - Hα and Hβ (their 2p ²P°3/2 – nd ²D5/2 components): no intensity, a FWHM made
//!   from the Stark width of the Gigosos, González & Cardeñoso (2003) fits at n_e,
//!   the Doppler width at T and the instrument, combined by the Voigt approximation
//!   of Olivero & Longbothum (1977); 3 % uncertainty.
//!
//! Run `cargo run --example argon-arc > examples/argon-arc/lines.csv` to regenerate
//! the file; the seed is fixed, so the output is the same every time.

use termsight::levels::{EMBEDDED_TABLES, Predictions};
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

/// Spectrometer range in air, nm.
const RANGE_NM: (f64, f64) = (400.0, 850.0);
/// Standard uncertainty of a reading, nm.
const UNCERTAINTY_NM: f64 = 0.003;
/// Relative standard uncertainty (and scatter) of the intensities.
const INTENSITY_SCATTER: f64 = 0.05;
/// The arc: T in K, n_e in cm⁻³.
const TEMPERATURE_K: f64 = 13_000.0;
const DENSITY_CM3: f64 = 1.0e17;
/// Instrumental FWHM, nm.
const INSTRUMENT_NM: f64 = 0.05;
/// c₂ = hc/k, cm K (CODATA 2018).
const C2: f64 = 1.438_776_877_503_933_8;
/// χ(Ar I), χ(Ar II) in cm⁻¹ (NIST ASD, 15.7596117 and 27.62967 eV, from memory).
const CHI_CM1: (f64, f64) = (15.759_611_7 * 8_065.543_937, 27.629_67 * 8_065.543_937);
/// Seed of the random numbers.
const SEED: u64 = 20_261_203;

/// A small seeded random number generator (SplitMix64; Steele, Lea & Flood 2014,
/// OOPSLA), as in the other example: the committed file does not change when a
/// dependency changes its streams.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal, by the Box–Muller transform (Box & Muller 1958).
    fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
}

fn predictions(species: &str) -> Predictions {
    let table = EMBEDDED_TABLES
        .iter()
        .find(|t| t.species == species)
        .expect("compiled table");
    // With the published transition probabilities of the compiled line list.
    table.predictions().expect("valid predictions")
}

fn air_nm(sigma_cm1: f64) -> f64 {
    Wavelength::from_wavenumber_cm1(
        sigma_cm1,
        LengthUnit::Nanometre,
        Medium::Air,
        AirFormula::default(),
    )
    .map_or(0.0, |w| w.value)
}

/// U(T) summed over the levels below `limit_cm1`.
fn partition(p: &Predictions, limit_cm1: f64) -> f64 {
    p.levels()
        .iter()
        .filter(|l| l.energy_cm1 < limit_cm1)
        .map(|l| f64::from(l.label.j.multiplicity()) * (-l.energy_cm1 * C2 / TEMPERATURE_K).exp())
        .sum()
}

/// The `count` brightest lines of a stage with population factor `population`/U:
/// (vacuum wavenumber, photon intensity, arbitrary scale).
fn brightest(p: &Predictions, limit_cm1: f64, population: f64, count: usize) -> Vec<(f64, f64)> {
    let u = partition(p, limit_cm1);
    let mut lines: Vec<(f64, f64)> = p
        .lines()
        .iter()
        .filter_map(|line| {
            let ga = line.transition_probability?.ga_s1();
            let (_, upper) = p.levels_of(line)?;
            let nm = air_nm(line.wavenumber_cm1);
            let usable = (RANGE_NM.0..=RANGE_NM.1).contains(&nm)
                && upper.energy_cm1 < limit_cm1 - 1000.0
                && !line.bracketed_level;
            usable.then(|| {
                let intensity =
                    population / u * ga * (-upper.energy_cm1 * C2 / TEMPERATURE_K).exp();
                (line.wavenumber_cm1, intensity)
            })
        })
        .collect();
    lines.sort_by(|a, b| b.1.total_cmp(&a.1));
    lines.truncate(count);
    lines
}

/// Stark FWHM, nm (Gigosos, González & Cardeñoso 2003: Hα 1.098 nm, Hβ 4.800 nm at
/// 10¹⁷ cm⁻³, exponents 0.67965 and 0.68116; from memory).
fn stark_nm(alpha: bool) -> f64 {
    let (w0, p) = if alpha {
        (1.098, 0.67965)
    } else {
        (4.800, 0.68116)
    };
    w0 * (DENSITY_CM3 / 1e17).powf(p)
}

fn main() {
    let mut rng = SplitMix64(SEED);
    let neutral = predictions("Ar I");
    let ion = predictions("Ar II");
    let u0 = partition(&neutral, CHI_CM1.0);
    let u1 = partition(&ion, CHI_CM1.1);
    let saha = 4.829_366e15
        * TEMPERATURE_K.powf(1.5)
        * (u1 / u0)
        * (-CHI_CM1.0 * C2 / TEMPERATURE_K).exp()
        / DENSITY_CM3;
    let mut lines = brightest(&neutral, CHI_CM1.0, 1.0, 25);
    lines.extend(brightest(&ion, CHI_CM1.1, saha, 25));
    let scale = 50_000.0 / lines.iter().map(|l| l.1).fold(0.0, f64::max);
    // (nm, uncertainty nm, intensity, intensity uncertainty, fwhm, fwhm uncertainty)
    type Reading = (f64, f64, String, String, String, String);
    let mut readings: Vec<Reading> = lines
        .into_iter()
        .map(|(sigma, intensity)| {
            let nm = air_nm(sigma) + UNCERTAINTY_NM * rng.normal();
            let counts = scale * intensity * (INTENSITY_SCATTER * rng.normal()).exp();
            (
                nm,
                UNCERTAINTY_NM,
                format!("{counts:.1}"),
                format!("{:.1}", INTENSITY_SCATTER * counts),
                String::new(),
                String::new(),
            )
        })
        .collect();
    let hydrogen = predictions("H I");
    for line in hydrogen.lines() {
        let Some((lower, upper)) = hydrogen.levels_of(line) else {
            continue;
        };
        let upper_label = upper.label.to_string();
        let alpha = upper_label == "3d 2D 5/2";
        if lower.label.to_string() != "2p 2P° 3/2" || !(alpha || upper_label == "4d 2D 5/2") {
            continue;
        }
        let nm = air_nm(line.wavenumber_cm1);
        // Doppler FWHM 7.16e-7 λ (T/M)^½ (Griem 1997, §4.1), M = 1.008 u.
        let doppler = 7.16e-7 * nm * (TEMPERATURE_K / 1.008).sqrt();
        let gauss = INSTRUMENT_NM.hypot(doppler);
        let lorentz = stark_nm(alpha);
        let fwhm = 0.5346 * lorentz + (0.2166 * lorentz * lorentz + gauss * gauss).sqrt();
        let fwhm = fwhm * (1.0 + 0.03 * rng.normal());
        readings.push((
            nm + 0.02 * rng.normal(),
            0.02,
            String::new(),
            String::new(),
            format!("{fwhm:.3}"),
            format!("{:.3}", 0.03 * fwhm),
        ));
    }
    readings.sort_by(|a, b| a.0.total_cmp(&b.0));
    println!("# Demo data, invented: a free-burning argon arc on the bench of a plasma course,");
    println!("# calibrated spectrometer. Made by examples/argon-arc/main.rs (seeded); see");
    println!("# README.md there. Wavelengths in standard air, nm; intensities in photon counts.");
    println!(
        "wavelength_nm,uncertainty_nm,medium,intensity,uncertainty_intensity,fwhm_nm,fwhm_uncertainty_nm"
    );
    for (nm, u, intensity, ui, fwhm, uf) in readings {
        println!("{nm:.4},{u},air,{intensity},{ui},{fwhm},{uf}");
    }
}
