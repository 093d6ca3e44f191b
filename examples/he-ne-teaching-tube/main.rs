//! Generator of the demo line list `examples/he-ne-teaching-tube/lines.csv`.
//!
//! Invented scenario: a student checks a helium–neon discharge tube on the grating
//! spectrometer of a teaching laboratory, 380–900 nm in air, wavelengths read to
//! 0.003 nm (standard uncertainty). The tube has a trace of hydrogen (water vapour
//! let in when it was last opened), and the spectrometer shows a few spurious peaks
//! (stray light, a grating ghost) that belong to no species.
//!
//! How the lines are made (all from the compiled reference levels, NIST ASD 2014):
//! - He I: every LS-allowed multiplet from 1s2s or 1s2p up to a level with n ≤ 5,
//!   one line per multiplet at its component with the largest upper J (then the
//!   largest lower J), the strongest component of an LS multiplet (common practice,
//!   no source); the spectrometer does not resolve the fine structure.
//! - Ne I: every 2p5 3p → 2p5 3s line (the red and orange lines of a neon glow).
//! - H I: Hα to Hδ, each at its 2p 2P°3/2 – nd 2D5/2 component.
//! - Spurious peaks: 4 wavenumbers drawn uniformly in the range, kept only when no
//!   predicted line of any compiled table lies within 10 standard uncertainties.
//! - Every wavelength gets Gaussian noise of the stated uncertainty; intensities are
//!   invented (log-uniform, 5 to 5000 counts).
//!
//! Run `cargo run --example he-ne-teaching-tube > examples/he-ne-teaching-tube/lines.csv`
//! to regenerate the file; the seed is fixed, so the output is the same every time.

use termsight::levels::{EMBEDDED_TABLES, Level, Predictions, predict_from_table};
use termsight::notation::{ConfigPart, Term};
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

/// Spectrometer range in air, nm.
const RANGE_NM: (f64, f64) = (380.0, 900.0);
/// Standard uncertainty of a reading, nm.
const UNCERTAINTY_NM: f64 = 0.003;
/// Seed of the random numbers.
const SEED: u64 = 20_240_611;

/// A small seeded random number generator (SplitMix64; Steele, Lea & Flood 2014,
/// OOPSLA). Written here rather than taken from a crate so that the committed file
/// does not change when a dependency changes its streams.
struct SplitMix64(u64);

impl SplitMix64 {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
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
    predict_from_table(&table.load().expect("valid table")).expect("valid predictions")
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

fn in_range(sigma_cm1: f64) -> bool {
    let nm = air_nm(sigma_cm1);
    nm >= RANGE_NM.0 && nm <= RANGE_NM.1
}

/// Principal quantum number of the last subshell of a level's configuration.
fn outer_n(level: &Level) -> u32 {
    level
        .label
        .configuration
        .subshells()
        .last()
        .map_or(0, |s| s.n)
}

fn helium_lines() -> Vec<f64> {
    let p = predictions("He I");
    let mut best: Vec<(String, f64, (u32, u32))> = Vec::new();
    for line in p.lines() {
        let (lower, upper) = p.levels_of(line).expect("levels");
        let from_n2 = outer_n(lower) == 2 && lower.label.configuration.to_string() != "1s2";
        if !from_n2 || outer_n(upper) > 5 || !in_range(line.wavenumber_cm1) {
            continue;
        }
        if line.flags.intercombination || line.flags.l_forbidden || line.flags.jump_forbidden {
            continue;
        }
        let multiplet = format!(
            "{} {} – {} {}",
            lower.label.configuration,
            lower.label.term,
            upper.label.configuration,
            upper.label.term
        );
        let j = (upper.label.j.twice, lower.label.j.twice);
        match best.iter_mut().find(|(m, _, _)| *m == multiplet) {
            Some(entry) if j > entry.2 => *entry = (multiplet, line.wavenumber_cm1, j),
            Some(_) => {}
            None => best.push((multiplet, line.wavenumber_cm1, j)),
        }
    }
    best.into_iter().map(|(_, sigma, _)| sigma).collect()
}

fn neon_lines() -> Vec<f64> {
    let p = predictions("Ne I");
    let outer = |level: &Level| {
        level
            .label
            .configuration
            .parts
            .iter()
            .rev()
            .find_map(|part| match part {
                ConfigPart::Subshell(s) => Some((s.n, s.l)),
                _ => None,
            })
    };
    p.lines()
        .iter()
        .filter(|line| {
            let (lower, upper) = p.levels_of(line).expect("levels");
            outer(lower) == Some((3, 0))
                && outer(upper) == Some((3, 1))
                && in_range(line.wavenumber_cm1)
        })
        .map(|line| line.wavenumber_cm1)
        .collect()
}

fn hydrogen_lines() -> Vec<f64> {
    let p = predictions("H I");
    p.lines()
        .iter()
        .filter(|line| {
            let (lower, upper) = p.levels_of(line).expect("levels");
            lower.label.to_string() == "2p 2P° 3/2"
                && matches!(upper.label.term, Term::Ls(t) if t.l == 2)
                && upper.label.j.twice == 5
                && (3..=6).contains(&outer_n(upper))
        })
        .map(|line| line.wavenumber_cm1)
        .collect()
}

fn spurious_lines(rng: &mut SplitMix64) -> Vec<f64> {
    let sets: Vec<Predictions> = EMBEDDED_TABLES
        .iter()
        .map(|t| predictions(t.species))
        .collect();
    let (low, high) = (1e7 / RANGE_NM.1, 1e7 / RANGE_NM.0);
    let mut found = Vec::new();
    while found.len() < 4 {
        let sigma = low + (high - low) * rng.uniform();
        let u_sigma = sigma * sigma * UNCERTAINTY_NM * 1e-7;
        let clear = sets.iter().all(|p| {
            p.lines()
                .iter()
                .all(|l| (l.wavenumber_cm1 - sigma).abs() > 10.0 * u_sigma)
        });
        if clear {
            found.push(sigma);
        }
    }
    found
}

fn main() {
    let mut rng = SplitMix64(SEED);
    let mut sigmas: Vec<f64> = helium_lines();
    sigmas.extend(neon_lines());
    sigmas.extend(hydrogen_lines());
    sigmas.extend(spurious_lines(&mut rng));
    let mut readings: Vec<(f64, f64)> = sigmas
        .into_iter()
        .map(|sigma| {
            let nm = air_nm(sigma) + UNCERTAINTY_NM * rng.normal();
            let intensity = (5.0f64.ln() + rng.uniform() * (1000.0f64).ln()).exp();
            (nm, intensity.round())
        })
        .collect();
    readings.sort_by(|a, b| a.0.total_cmp(&b.0));
    println!("# Demo data, invented: a helium-neon discharge tube checked on a teaching-lab");
    println!("# grating spectrometer. Made by examples/he-ne-teaching-tube/main.rs (seeded);");
    println!("# see README.md there. Wavelengths in standard air, nm.");
    println!("wavelength_nm,uncertainty_nm,medium,intensity");
    for (nm, intensity) in readings {
        println!("{nm:.4},{UNCERTAINTY_NM},air,{intensity}");
    }
}
