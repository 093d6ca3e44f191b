//! `termsight plasma ASSIGNED.csv`: temperature and electron density of the plasma
//! that emitted an assigned line list (Boltzmann, Saha–Boltzmann, Stark widths of
//! Hα and Hβ, McWhirter check).

use std::path::PathBuf;

use clap::ValueEnum;

use super::CliError;
use super::input::open_input;
use super::output::{write_atomically, write_output};
use super::paths::{NamedPath, check_outputs};
use crate::assign::{AssignmentRecord, Flag, read_assignments};
use crate::levels::csv_text::{csv_rows, read_csv_text};
use crate::location::Location;
use crate::plasma::IntensityUnits;
use crate::plasma::diagnose::{PlasmaOptions, diagnose};
use crate::plasma::saha::{LineData, SahaMode};
use crate::plasma::stark::{BalmerLine, WidthMeasurement};
use crate::report::{PlasmaInput, plasma_csv, plasma_json, plasma_points_csv, plasma_table};

/// Long help of `termsight plasma`.
pub const LONG_ABOUT: &str = "\
Temperature and electron density of the plasma that emitted an assigned line list:
the CSV that `termsight assign --format csv` writes.

Lines used: the rank-1 candidate of each observed line that has an observed intensity
and a published transition probability (the column ga_s1); lines flagged as blends are
left out. Every output says how many lines were used and left out.

Per element:
- a Boltzmann plot of each stage, ln(I λ / g_k A_ki) against the upper-level energy
  E_k, fitted by weighted least squares for the excitation temperature T ± σ (refused
  with fewer than 3 lines, or upper levels spanning less than kT);
- a Saha–Boltzmann plot of each pair of successive stages (Ar I and Ar II): the ion's
  points moved by the ionisation energy less its Debye–Hückel lowering and by the
  Saha term, fitted for T and n_e together, or T with n_e given (--density), or n_e
  with T given (--temperature); refused when the element has one stage only;
- the McWhirter criterion for local thermodynamic equilibrium (LTE): the minimum n_e
  at T for the largest gap between adjacent levels of the stages used (the gap is
  named), beside the measured n_e, with a verdict.

Electron density from Stark widths: when the file has a column width_nm or fwhm_nm
(measured full width at half maximum, nm; passed through from the line list; an
uncertainty in width_uncertainty_nm or fwhm_uncertainty_nm), the widths of Hα and Hβ
give n_e by the fits of Gigosos, González & Cardeñoso (2003), after removing the
instrumental width (--instrument-fwhm-nm) and the Doppler width of hydrogen at T by
the Voigt approximation of Olivero & Longbothum (1977). Widths narrower than the
instrument and densities outside 1e14–1e18 cm-3 are refused with the reason.

Intensity uncertainties: a column uncertainty_intensity (same unit as the intensity)
weights the fits when every used line has one; else the lines count equally and the
scatter sets the uncertainties.

Assumptions: LTE, optically thin lines, one spectral response for all lines;
partition functions summed over the compiled levels (NIST ASD) below the lowered
ionisation limit (they are too small at high T, where unobserved high levels count);
ionisation energies from the NIST ASD (written from memory of its tables).

Examples:
  termsight assign lines.csv --species Ar --species H --format csv -o assigned.csv
  termsight plasma assigned.csv --instrument-fwhm-nm 0.05
  termsight plasma assigned.csv --temperature 11000 --temperature-uncertainty 500
  termsight plasma assigned.csv --format csv -o plasma.csv --points points.csv";

/// Output formats of `termsight plasma`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PlasmaFormat {
    /// A summary for the terminal.
    Table,
    /// CSV, one row per fit or width.
    Csv,
    /// JSON with every fit, its points and every refusal.
    Json,
}

/// What the intensity column measures.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum UnitsArg {
    /// Photon counts: I ∝ gA e^(−E/kT).
    Photon,
    /// Energy: I ∝ gA e^(−E/kT)/λ.
    Energy,
}

/// Arguments of `termsight plasma`.
#[derive(Debug, clap::Args)]
pub struct PlasmaArgs {
    /// The assigned lines: the CSV that `termsight assign --format csv` writes (its
    /// rank-1 rows are used), or - for standard input.
    #[arg(value_name = "ASSIGNED")]
    pub assigned: PathBuf,
    /// What the intensities measure (as for `termsight assign`).
    #[arg(long = "intensity-units", value_enum, default_value_t = UnitsArg::Photon)]
    pub intensity_units: UnitsArg,
    /// Instrumental FWHM, nm, removed from the Balmer widths (taken as Gaussian);
    /// 0 for none. Without it, widths give no density.
    #[arg(long = "instrument-fwhm-nm", value_name = "NM")]
    pub instrument_fwhm_nm: Option<f64>,
    /// Take T as given (K) and fit only n_e in the Saha–Boltzmann plots.
    #[arg(long, value_name = "KELVIN", conflicts_with = "density")]
    pub temperature: Option<f64>,
    /// Standard uncertainty of --temperature, K, propagated into n_e.
    #[arg(
        long = "temperature-uncertainty",
        value_name = "KELVIN",
        requires = "temperature",
        default_value_t = 0.0
    )]
    pub temperature_uncertainty: f64,
    /// Take n_e as given (cm⁻³, e.g. 1e17) and fit only T in the Saha–Boltzmann
    /// plots.
    #[arg(long, value_name = "CM-3")]
    pub density: Option<f64>,
    /// Standard uncertainty of --density, cm⁻³, propagated into T.
    #[arg(
        long = "density-uncertainty",
        value_name = "CM-3",
        requires = "density",
        default_value_t = 0.0
    )]
    pub density_uncertainty: f64,
    /// Temperature for the Doppler width of hydrogen, K. [default: --temperature, else
    /// the first Saha–Boltzmann T, else the first Boltzmann T]
    #[arg(long = "doppler-temperature", value_name = "KELVIN")]
    pub doppler_temperature: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = PlasmaFormat::Table)]
    pub format: PlasmaFormat,
    /// Write the results to FILE (replaced in one step) instead of standard output.
    #[arg(long, short, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also write the points of every Boltzmann and Saha–Boltzmann plot, with the
    /// fitted line at each, as CSV to FILE (for figures).
    #[arg(long, value_name = "FILE")]
    pub points: Option<PathBuf>,
    /// Allow an output file to be the input file (replaced once the output is
    /// complete); without it such a run is refused.
    #[arg(long = "overwrite-input")]
    pub overwrite_input: bool,
}

/// Optional columns of the assign CSV read here (pass-through columns of the line
/// list; names compared without case).
const UNCERTAINTY_INTENSITY: &str = "uncertainty_intensity";
const WIDTH_COLUMNS: [&str; 2] = ["width_nm", "fwhm_nm"];
const WIDTH_UNCERTAINTY_COLUMNS: [&str; 2] = ["width_uncertainty_nm", "fwhm_uncertainty_nm"];

/// Largest input read, bytes: the limit of the assign CSV reader
/// (`crate::assign::record::MAX_ASSIGN_CSV_BYTES`, not exported).
const MAX_INPUT_BYTES: u64 = 4 << 30;

/// Run `termsight plasma`.
pub fn run(args: PlasmaArgs) -> Result<(), CliError> {
    let inputs = [NamedPath {
        option: "ASSIGNED",
        path: &args.assigned,
    }];
    let mut outputs = Vec::new();
    if let Some(path) = &args.output {
        outputs.push(NamedPath {
            option: "--output",
            path,
        });
    }
    if let Some(path) = &args.points {
        outputs.push(NamedPath {
            option: "--points",
            path,
        });
    }
    check_outputs(&inputs, &outputs, args.overwrite_input)?;
    let options = options(&args)?;
    let units = match args.intensity_units {
        UnitsArg::Photon => IntensityUnits::Photon,
        UnitsArg::Energy => IntensityUnits::Energy,
    };
    let (lines, widths, input) = read_input(&args, units)?;
    let diagnosis = diagnose(&lines, &widths, &options);
    let text: Vec<u8> = match args.format {
        PlasmaFormat::Table => plasma_table(&diagnosis, &input).into_bytes(),
        PlasmaFormat::Csv => plasma_csv(&diagnosis, &input),
        PlasmaFormat::Json => plasma_json(&diagnosis, &input).into_bytes(),
    };
    if let Some(path) = &args.points {
        write_atomically(path, &plasma_points_csv(&diagnosis, &input))?;
    }
    write_output(args.output.as_deref(), &text)
}

/// The library's options from the flags, each checked.
fn options(args: &PlasmaArgs) -> Result<PlasmaOptions, CliError> {
    fn positive(name: &str, value: f64) -> Result<f64, CliError> {
        if value.is_finite() && value > 0.0 {
            Ok(value)
        } else {
            Err(CliError::Message(format!(
                "--{name} {value}: expected a positive number"
            )))
        }
    }
    fn at_least_zero(name: &str, value: f64) -> Result<f64, CliError> {
        if value.is_finite() && value >= 0.0 {
            Ok(value)
        } else {
            Err(CliError::Message(format!(
                "--{name} {value}: expected a number ≥ 0"
            )))
        }
    }
    let mode = match (args.temperature, args.density) {
        (Some(t), _) => SahaMode::GivenTemperature {
            temperature_k: positive("temperature", t)?,
            sigma_k: at_least_zero("temperature-uncertainty", args.temperature_uncertainty)?,
        },
        (None, Some(n)) => SahaMode::GivenDensity {
            density_cm3: positive("density", n)?,
            sigma_cm3: at_least_zero("density-uncertainty", args.density_uncertainty)?,
        },
        (None, None) => SahaMode::Joint,
    };
    Ok(PlasmaOptions {
        mode,
        instrument_fwhm_nm: args
            .instrument_fwhm_nm
            .map(|w| at_least_zero("instrument-fwhm-nm", w))
            .transpose()?,
        doppler_temperature_k: args
            .doppler_temperature
            .map(|t| positive("doppler-temperature", t))
            .transpose()?,
    })
}

/// The optional columns: their index among the pass-through columns.
struct Optional {
    uncertainty_intensity: Option<(usize, String)>,
    width: Option<(usize, String)>,
    width_uncertainty: Option<(usize, String)>,
}

fn find_column(
    extra: &[String],
    names: &[&str],
    source: &str,
) -> Result<Option<(usize, String)>, CliError> {
    let found: Vec<(usize, String)> = extra
        .iter()
        .enumerate()
        .filter(|(_, c)| names.iter().any(|n| c.trim().eq_ignore_ascii_case(n)))
        .map(|(i, c)| (i, c.clone()))
        .collect();
    match found.as_slice() {
        [] => Ok(None),
        [one] => Ok(Some(one.clone())),
        [first, second, ..] => Err(CliError::Message(format!(
            "{source}: columns '{}' and '{}' both give the same quantity; keep one",
            first.1, second.1
        ))),
    }
}

/// A number ≥ 0 in an optional column, or none when the field is blank.
fn optional_number(
    record: &AssignmentRecord,
    column: &Option<(usize, String)>,
    at: &Location,
) -> Result<Option<f64>, CliError> {
    let Some((index, name)) = column else {
        return Ok(None);
    };
    let text = record.extra.get(*index).map_or("", |t| t.trim());
    if text.is_empty() {
        return Ok(None);
    }
    text.parse::<f64>()
        .ok()
        .filter(|v| v.is_finite() && *v >= 0.0)
        .map(Some)
        .ok_or_else(|| {
            CliError::Message(format!(
                "{}: '{text}' is not a number ≥ 0",
                at.clone().column(name.as_str())
            ))
        })
}

/// Read the assign CSV: the lines of the plots, the Balmer widths, and what was
/// used and left out.
fn read_input(
    args: &PlasmaArgs,
    units: IntensityUnits,
) -> Result<(Vec<LineData>, Vec<WidthMeasurement>, PlasmaInput), CliError> {
    let (mut reader, source) = open_input(&args.assigned)?;
    let text = read_csv_text(&mut reader, MAX_INPUT_BYTES, "an assign CSV").map_err(|e| {
        CliError::Message(format!(
            "{}: {}",
            Location::line(&source, e.line()),
            match e {
                crate::levels::csv_text::CsvError::Unreadable { message, .. } => message,
                _ => "cannot read the assignments".into(),
            }
        ))
    })?;
    let file =
        read_assignments(text.as_bytes(), &source).map_err(|e| CliError::Message(e.to_string()))?;
    // The file line of each record: the rows in the order `read_assignments` read
    // them (it has already accepted every row).
    let file_lines: Vec<usize> = match csv_rows(&text) {
        Ok((_, rows)) => rows.filter_map(Result::ok).map(|(line, _)| line).collect(),
        Err(_) => Vec::new(),
    };
    let optional = Optional {
        uncertainty_intensity: find_column(&file.extra_columns, &[UNCERTAINTY_INTENSITY], &source)?,
        width: find_column(&file.extra_columns, &WIDTH_COLUMNS, &source)?,
        width_uncertainty: find_column(&file.extra_columns, &WIDTH_UNCERTAINTY_COLUMNS, &source)?,
    };
    if file.records.is_empty() {
        return Err(CliError::Message(format!(
            "{source}: no rows after the header: nothing to fit"
        )));
    }

    let mut lines = Vec::new();
    let mut widths = Vec::new();
    let mut notes = Vec::new();
    let mut input = PlasmaInput {
        source: source.clone(),
        intensity_units: units,
        rank_one_rows: 0,
        lines_used: 0,
        without_intensity: 0,
        without_ga: 0,
        blends: 0,
        intensity_uncertainties: true,
        notes: Vec::new(),
    };
    let mut seen_lines = std::collections::HashSet::new();
    for (i, record) in file.records.iter().enumerate() {
        let at = Location::line(&source, file_lines.get(i).copied().unwrap_or(0));
        // Widths: once per observed line (its first row), whatever its assignment.
        if seen_lines.insert(record.line)
            && let Some(fwhm_nm) = optional_number(record, &optional.width, &at)?
        {
            let sigma_nm = optional_number(record, &optional.width_uncertainty, &at)?;
            match BalmerLine::near(record.observed_wavenumber_cm1) {
                Some(balmer) => widths.push(WidthMeasurement {
                    line: record.line,
                    balmer,
                    fwhm_nm,
                    sigma_nm: sigma_nm.unwrap_or(0.0),
                }),
                None => notes.push(format!(
                    "{at}: a width, but the line at {:.3} cm-1 is neither Hα nor Hβ: not used (Stark densities come from those two only).",
                    record.observed_wavenumber_cm1
                )),
            }
        }
        if record.rank != Some(1) {
            continue;
        }
        let Some(candidate) = &record.candidate else {
            continue;
        };
        input.rank_one_rows += 1;
        let Some(intensity) = record.observed_intensity.filter(|v| *v > 0.0) else {
            input.without_intensity += 1;
            continue;
        };
        let Some(ga_s1) = candidate.ga_s1.filter(|v| *v > 0.0) else {
            input.without_ga += 1;
            continue;
        };
        if record.flags.contains(&Flag::Blend) {
            input.blends += 1;
            continue;
        }
        let sigma = optional_number(record, &optional.uncertainty_intensity, &at)?;
        let wavenumber_cm1 = record.observed_wavenumber_cm1;
        if !(wavenumber_cm1.is_finite() && wavenumber_cm1 > 0.0) {
            return Err(CliError::Message(format!(
                "{}: '{wavenumber_cm1}' is not a positive wavenumber",
                at.column("observed_wavenumber_cm1")
            )));
        }
        // The plots take energy intensities: photon counts times σ (a common factor
        // aside).
        let to_energy = match units {
            IntensityUnits::Photon => wavenumber_cm1,
            IntensityUnits::Energy => 1.0,
        };
        input.intensity_uncertainties &= sigma.is_some_and(|s| s > 0.0);
        lines.push(LineData {
            line: record.line,
            species: candidate.species,
            upper_energy_cm1: candidate.upper_energy_cm1.max(candidate.lower_energy_cm1),
            wavenumber_cm1,
            intensity: intensity * to_energy,
            intensity_sigma: sigma.map(|s| s * to_energy),
            ga_s1,
        });
    }
    input.lines_used = lines.len();
    input.intensity_uncertainties &= !lines.is_empty();
    input.notes = notes;
    if lines.is_empty() && widths.is_empty() {
        return Err(CliError::Message(format!(
            "{source}: no usable line: of {} rank-1 lines, {} have no observed intensity, {} no published gA and {} are blends (a Boltzmann plot needs rank-1 lines with an intensity and a gA)",
            input.rank_one_rows, input.without_intensity, input.without_ga, input.blends
        )));
    }
    Ok((lines, widths, input))
}
