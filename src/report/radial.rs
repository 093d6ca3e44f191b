//! The output of `termsight radial`: orbital energies and radii per configuration,
//! then the radial integrals, as terminal tables ([`radial_table`]) or one JSON
//! document ([`radial_json`]).

use comfy_table::{Cell, CellAlignment, Table, presets::UTF8_BORDERS_ONLY};
use serde::Serialize;

use crate::notation::Species;
use crate::radial::integrals::mean_radius_bohr;
use crate::radial::{IntegralKind, RadialIntegral, ScaleFactors, ScfSolution};
use crate::units::constants::{FINE_STRUCTURE_ALPHA, HARTREE_CM1};

/// The largest atomic number for which the non-relativistic field is offered
/// without a warning: Xe, Z = 54, the heaviest atom of the published
/// Hartree–Fock totals the tests compare with, where (αZ)² = 0.155.
pub const NONRELATIVISTIC_LIMIT_Z: u32 = 54;

/// One configuration's result.
#[derive(Debug, Clone, Serialize)]
pub struct ConfigurationReport {
    /// The configuration label.
    pub configuration: String,
    /// E_av, hartree.
    pub total_energy_hartree: f64,
    /// −V/T, the virial ratio: 2 for a converged Hartree–Fock solution (virial
    /// theorem), a check of the solution.
    pub virial_ratio: f64,
    /// Iterations used.
    pub iterations: u32,
    /// Last residual (see [`ScfSolution::residual`]).
    pub residual: f64,
    /// The grid step h in ln(Z r) used (finer than asked where an orbital needs it).
    pub grid_step: f64,
    /// The grid's largest radius, bohr.
    pub grid_r_max_bohr: f64,
    /// The orbitals.
    pub orbitals: Vec<OrbitalReport>,
}

/// One orbital's numbers.
#[derive(Debug, Clone, Serialize)]
pub struct OrbitalReport {
    /// Label, e.g. `3p`.
    pub orbital: String,
    /// Electrons in it.
    pub occupancy: u32,
    /// Orbital energy, hartree.
    pub energy_hartree: f64,
    /// Orbital energy, cm⁻¹.
    pub energy_cm1: f64,
    /// ⟨r⟩, bohr.
    pub mean_radius_bohr: f64,
}

/// Everything `termsight radial` prints.
#[derive(Debug, Clone, Serialize)]
pub struct RadialReport {
    /// The spectrum, e.g. `Mg I`.
    pub species: String,
    /// Atomic number.
    pub atomic_number: u32,
    /// The method's name.
    pub method: String,
    /// Grid step h asked for (an upper bound: see each configuration's).
    pub grid_step: f64,
    /// The scale factors used.
    pub scales: ScaleFactors,
    /// Per configuration.
    pub configurations: Vec<ConfigurationReport>,
    /// The radial integrals.
    pub integrals: Vec<RadialIntegral>,
    /// Notes on what the numbers do not include (printed after the tables).
    pub notes: Vec<String>,
}

impl RadialReport {
    /// The report of `solutions` (one per configuration, in order) and their
    /// `integrals`, computed with grid step at most `grid_step`.
    pub fn new(
        species: Species,
        solutions: &[ScfSolution],
        integrals: Vec<RadialIntegral>,
        scales: ScaleFactors,
        grid_step: f64,
    ) -> RadialReport {
        let configurations = solutions
            .iter()
            .map(|s| ConfigurationReport {
                configuration: s.configuration.to_string(),
                total_energy_hartree: s.energy.total_hartree,
                virial_ratio: s.energy.virial_ratio(),
                iterations: s.iterations,
                residual: s.residual,
                grid_step: s.grid.step(),
                grid_r_max_bohr: s.grid.r().last().copied().unwrap_or(0.0),
                orbitals: s
                    .orbitals
                    .iter()
                    .map(|o| OrbitalReport {
                        orbital: o.label(),
                        occupancy: o.subshell.occupancy,
                        energy_hartree: o.energy_hartree,
                        energy_cm1: o.energy_hartree * HARTREE_CM1,
                        mean_radius_bohr: mean_radius_bohr(&s.grid, &o.p),
                    })
                    .collect(),
            })
            .collect();
        let mut notes = Vec::new();
        if let Some(note) = relativistic_note(species.atomic_number) {
            notes.push(note);
        }
        if integrals
            .iter()
            .any(|i| matches!(i.kind, IntegralKind::SpinOrbit { .. }))
        {
            // Measured in radial::integrals (observed/computed ζ for thirteen spectra).
            notes.push(
                "ζ is the central-field value without core polarisation: the observed ζ of \
                 a neutral atom's valence p electron is 1.3–1.6 times it (--scale-zeta), of \
                 ions and p⁵ shells about 1 times it."
                    .to_string(),
            );
        }
        RadialReport {
            species: species.to_string(),
            atomic_number: species.atomic_number,
            method: solutions
                .first()
                .map_or("", |s| s.method.name())
                .to_string(),
            grid_step,
            scales,
            configurations,
            integrals,
            notes,
        }
    }
}

/// For Z above [`NONRELATIVISTIC_LIMIT_Z`], what leaving out relativity means.
///
/// The relativistic corrections to the energy of an electron in a shell of
/// charge Z grow as (αZ)² relative to its binding (the Dirac energy of a hydrogenic
/// level, expanded: E = −Z²/2n² [1 + (αZ)²/n (1/(j+½) − 3/4n) + …]; Bethe &
/// Salpeter 1957, eq. 16.12, which for 1s is (αZ)²/4), so the note quotes (αZ)².
pub fn relativistic_note(atomic_number: u32) -> Option<String> {
    if atomic_number <= NONRELATIVISTIC_LIMIT_Z {
        return None;
    }
    let alpha_z = FINE_STRUCTURE_ALPHA * atomic_number as f64;
    Some(format!(
        "Z = {atomic_number}: relativistic effects are not included (the field is \
         non-relativistic). They grow as (αZ)², here {:.2}: the 1s energy is too high by \
         about (αZ)²/4 = {:.0} % (Dirac's formula), inner s and p orbitals are too \
         diffuse and d and f orbitals too compact, so E_av differences that move an \
         electron between s or p and d or f shells are off, and ζ, with no relativistic \
         contraction of p orbitals, tends to come out too small; fit the parameters to \
         observed levels before trusting them.",
        alpha_z * alpha_z,
        25.0 * alpha_z * alpha_z
    ))
}

/// The report as terminal tables.
pub fn radial_table(report: &RadialReport) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "{} (Z = {}): {}; grid step h ≤ {:.6} in ln(Z r)\n",
        report.species, report.atomic_number, report.method, report.grid_step
    ));
    for c in &report.configurations {
        out.push_str(&format!(
            "\n{}: E_av = {:.9} hartree, −V/T = {:.9}, {} iteration{}, last change {:.1e}; \
             grid h = {:.6}, r ≤ {:.0} bohr\n",
            c.configuration,
            c.total_energy_hartree,
            c.virial_ratio,
            c.iterations,
            if c.iterations == 1 { "" } else { "s" },
            c.residual,
            c.grid_step,
            c.grid_r_max_bohr
        ));
        let mut table = new_table(&[
            "orbital",
            "electrons",
            "ε (hartree)",
            "ε (cm⁻¹)",
            "⟨r⟩ (bohr)",
        ]);
        for o in &c.orbitals {
            table.add_row(vec![
                Cell::new(&o.orbital),
                right(o.occupancy.to_string()),
                right(format!("{:.8}", o.energy_hartree)),
                right(format!("{:.2}", o.energy_cm1)),
                right(format!("{:.6}", o.mean_radius_bohr)),
            ]);
        }
        out.push_str(&table.to_string());
        out.push('\n');
    }
    out.push_str(&format!(
        "\nRadial integrals, cm⁻¹ (r(a,b) in bohr). Scale factors: F^k and G^k {}, R^k {}, \
         ζ {}, E_av differences {}.\n",
        report.scales.direct_exchange,
        report.scales.interaction,
        report.scales.spin_orbit,
        report.scales.average_energy
    ));
    let mut table = new_table(&["integral", "configuration", "value", "scale", "scaled"]);
    for i in &report.integrals {
        let label = |index: usize| {
            report
                .configurations
                .get(index)
                .map_or(String::new(), |c| c.configuration.clone())
        };
        let configurations = match i.other_configuration {
            Some(other) => format!("{} – {}", label(i.configuration), label(other)),
            None => label(i.configuration),
        };
        let digits = if matches!(i.kind, IntegralKind::Dipole { .. }) {
            6
        } else {
            3
        };
        // Values too small for the fixed decimals (ζ of a Rydberg g orbital) in
        // exponent form, so that they do not read as zero.
        let number = |value: f64| {
            if value != 0.0 && value.abs() < 0.1 {
                format!("{value:.3e}")
            } else {
                format!("{value:.digits$}")
            }
        };
        table.add_row(vec![
            Cell::new(&i.name),
            Cell::new(configurations),
            right(number(i.value)),
            right(format!("{}", i.scale)),
            right(number(i.scaled)),
        ]);
    }
    out.push_str(&table.to_string());
    out.push('\n');
    for note in &report.notes {
        out.push_str(&wrap(note, 88));
    }
    out
}

/// `text` broken into lines of at most `width` characters at spaces.
fn wrap(text: &str, width: usize) -> String {
    let mut out = String::new();
    let mut line = String::new();
    for word in text.split(' ') {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            out.push_str(&line);
            out.push('\n');
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        out.push_str(&line);
        out.push('\n');
    }
    out
}

fn new_table(header: &[&str]) -> Table {
    let mut table = Table::new();
    table
        .load_style(UTF8_BORDERS_ONLY)
        .set_header(header.to_vec());
    table
}

fn right(text: String) -> Cell {
    Cell::new(text).set_alignment(CellAlignment::Right)
}

/// The report as one JSON document (with a final newline).
pub fn radial_json(report: &RadialReport) -> Result<String, serde_json::Error> {
    let mut text = serde_json::to_string_pretty(report)?;
    text.push('\n');
    Ok(text)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn relativistic_note_only_beyond_xenon() {
        assert_eq!(relativistic_note(54), None);
        let note = relativistic_note(79).unwrap();
        // (αZ)² for gold: (79/137.036)² = 0.332 (α from CODATA).
        assert!(
            note.contains("0.33") && note.contains("not included"),
            "{note}"
        );
    }

    #[test]
    fn wrap_keeps_every_word_within_the_width() {
        let text = "one two three four five six seven eight nine ten";
        let wrapped = wrap(text, 12);
        assert!(
            wrapped.lines().all(|l| l.chars().count() <= 12),
            "{wrapped}"
        );
        assert_eq!(
            wrapped.split_whitespace().collect::<Vec<_>>().join(" "),
            text
        );
    }
}
