//! `termsight radial`: orbitals and radial integrals of one or more configurations
//! of an atom or ion, from a self-consistent field, in cm⁻¹.
//!
//! ```text
//! termsight radial --element Mg --config "1s2 2s2 2p6 3s2" --config "1s2 2s2 2p6 3s 3p"
//! ```
//!
//! prints, for each configuration, the orbital energies and mean radii, then every
//! integral a level model needs (E_av differences, F^k, G^k, ζ, and between
//! configurations R^k and ⟨a|r|b⟩), raw and scaled.

use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::time::{Duration, Instant};

use clap::ValueEnum;

use crate::notation::{Configuration, Species, element};
use crate::radial::{
    GridRemedy, GridSpec, PairMixing, RadialError, ScaleFactors, ScfObserver, ScfOptions,
    ScfProgress, ScfSolution, ScfStage, hartree_fock, local_exchange, model_file, radial_integrals,
    screened_hydrogenic, starting_model,
};
use crate::report::{RadialReport, radial_json, radial_table, relativistic_note};

use super::CliError;
use super::output::write_atomically;

/// The value of --charge: a whole number ≥ 0, with a message that says what the
/// charge means instead of quoting the range of an integer type.
fn parse_charge(text: &str) -> Result<u32, String> {
    const MEANING: &str = "the charge is 0 for a neutral atom, 1 for a singly charged \
                           ion (Fe II), 2 for a doubly charged one (Fe III), …";
    match text.trim().parse::<i64>() {
        Ok(charge) if charge < 0 => Err(format!(
            "{charge} is negative: {MEANING}; negative ions are not computed"
        )),
        Ok(charge) => u32::try_from(charge).map_err(|_| {
            format!("{charge} is far more than any element's nuclear charge: {MEANING}")
        }),
        Err(_) => Err(format!("'{text}' is not a whole number: {MEANING}")),
    }
}

/// Arguments of `termsight radial`.
#[derive(Debug, Clone, clap::Args)]
pub struct RadialArgs {
    /// The element, by symbol (`Mg`, `Fe`), or a spectrum (`"Fe II"` = Fe⁺).
    #[arg(long)]
    pub element: String,
    /// Charge of the ion: 0 for the neutral atom, 1 for Fe II, … [default: 0, or
    /// what a spectrum given to --element says].
    #[arg(long, value_parser = parse_charge, allow_hyphen_values = true)]
    pub charge: Option<u32>,
    /// A configuration, written `1s2 2s2 2p6 3s 3p` or `1s2.2s2.2p6.3s.3p`, with
    /// every electron of the ion. Repeat for more configurations; E_av differences
    /// are taken from the first.
    #[arg(long = "config", required = true, value_name = "CONFIGURATION")]
    pub configurations: Vec<String>,
    /// How the orbitals are obtained.
    #[arg(long, value_enum, default_value_t = MethodChoice::HartreeFock)]
    pub method: MethodChoice,
    /// Hartree–Fock: how the mixing of two orbitals of one l is fixed when the
    /// inner one is open (He 1s2s, Mg 3s4s).
    #[arg(long, value_enum, default_value_t = PairMixingChoice::InnerEigenfunction)]
    pub pair_mixing: PairMixingChoice,
    /// Scale factor for F^k and G^k (customary for neutral atoms: 0.8–0.9).
    #[arg(long, default_value_t = 0.85, value_name = "FACTOR")]
    pub scale_slater: f64,
    /// Scale factor for R^k between configurations.
    #[arg(long, default_value_t = 0.85, value_name = "FACTOR")]
    pub scale_interaction: f64,
    /// Scale factor for the spin–orbit parameters ζ.
    #[arg(long, default_value_t = 1.0, value_name = "FACTOR")]
    pub scale_zeta: f64,
    /// Scale factor for E_av differences.
    #[arg(long, default_value_t = 1.0, value_name = "FACTOR")]
    pub scale_eav: f64,
    /// Largest grid step h in ln(Z r); made finer for a Rydberg orbital, to
    /// 0.12/(ζ n) for the orbital of largest n around an ion of charge ζ − 1
    /// [default: 1/96].
    #[arg(long, value_name = "H")]
    pub grid_step: Option<f64>,
    /// Largest radius of the grid, bohr; raised when an orbital needs more
    /// [default: 100].
    #[arg(long, value_name = "BOHR")]
    pub r_max: Option<f64>,
    /// Most self-consistent-field iterations per configuration.
    #[arg(long, default_value_t = 200, value_name = "N")]
    pub max_iterations: u32,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    /// Also write a starting level model of the configurations to this TOML file
    /// (scaled values, every parameter free), for `termsight levels`, `lines` and
    /// `fit`.
    #[arg(long, value_name = "FILE")]
    pub model_out: Option<PathBuf>,
    /// Print no progress lines on stderr.
    #[arg(long)]
    pub quiet: bool,
}

/// The methods offered by `--method`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum MethodChoice {
    /// Hartree–Fock for the average energy of each configuration.
    HartreeFock,
    /// Hartree–Fock–Slater: local ρ^⅓ exchange with Latter's tail.
    LocalExchange,
    /// Hydrogenic orbitals with effective charges by Slater's rules.
    Hydrogenic,
}

/// The choices of `--pair-mixing`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum PairMixingChoice {
    /// The inner orbital an eigenfunction of its own operator in the pair: physical
    /// exchange integrals, but E_av not stationary, so −V/T departs from 2
    /// (He 1s2s: 2.014).
    InnerEigenfunction,
    /// E_av stationary in the mixing angle: −V/T = 2, but the orbitals localise and
    /// the exchange integral comes out far too small (He 1s2s: G0 511 against
    /// 2496 cm⁻¹).
    Stationary,
}

/// The output formats of `--format`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Tables for the terminal.
    Table,
    /// One JSON document.
    Json,
}

/// Run `termsight radial`.
pub fn run(args: RadialArgs) -> Result<(), CliError> {
    let request = Request::from_args(&args)?;
    if let Some(path) = &args.model_out {
        check_directory_exists(path)?;
    }
    let mut progress = Progress::new(args.quiet);
    let report = compute(&request, &mut progress)?;
    if let Some(note) = relativistic_note(request.species.atomic_number)
        && !args.quiet
    {
        eprintln!("termsight radial: warning: {note}");
    }
    let text = match args.format {
        Format::Table => radial_table(&report),
        Format::Json => radial_json(&report)
            .map_err(|e| CliError::Message(format!("cannot write JSON: {e}")))?,
    };
    let mut stdout = io::stdout().lock();
    stdout
        .write_all(text.as_bytes())
        .and_then(|()| stdout.flush())
        .map_err(|source| CliError::Io {
            path: "<stdout>".into(),
            source,
        })?;
    // The model is written after the report, so that a model that cannot be made
    // or written loses none of the computed numbers.
    if let Some(path) = &args.model_out {
        let text = model_text(&request, &report)?;
        write_atomically(path, text.as_bytes())?;
        if !args.quiet {
            eprintln!(
                "termsight radial: starting level model written to {}",
                path.display()
            );
        }
    }
    Ok(())
}

/// Fail before the calculation when the model file's directory is missing.
fn check_directory_exists(path: &std::path::Path) -> Result<(), CliError> {
    match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() && !dir.is_dir() => {
            Err(CliError::Message(format!(
                "--model-out {}: no directory {}",
                path.display(),
                dir.display()
            )))
        }
        _ => Ok(()),
    }
}

/// The text of the starting level model of the report's configurations.
pub fn model_text(request: &Request, report: &RadialReport) -> Result<String, CliError> {
    let model = starting_model(request.species, &request.configurations, &report.integrals)
        .map_err(|e| CliError::Message(format!("--model-out: {e}")))?;
    Ok(model_file(
        &model,
        &report.method,
        &request.scales,
        &report.integrals,
    ))
}

/// What the user asked for, checked.
#[derive(Debug, Clone)]
pub struct Request {
    /// The ion.
    pub species: Species,
    /// The configurations, in the order given.
    pub configurations: Vec<Configuration>,
    /// The method.
    pub method: MethodChoice,
    /// Field settings.
    pub options: ScfOptions,
    /// Scale factors.
    pub scales: ScaleFactors,
}

impl Request {
    /// Check the arguments: the element, the charge, and each configuration's
    /// electron count. Errors name the flag and the value.
    pub fn from_args(args: &RadialArgs) -> Result<Request, CliError> {
        let species = species(&args.element, args.charge)?;
        let electrons = species.electron_count();
        if electrons == 0 {
            return Err(CliError::Message(format!(
                "--charge {}: {} has no electrons left",
                species.charge,
                species.symbol()
            )));
        }
        let mut configurations = Vec::with_capacity(args.configurations.len());
        for text in &args.configurations {
            let configuration: Configuration = text
                .parse()
                .map_err(|e| CliError::Message(format!("--config '{text}': {e}")))?;
            let count = configuration.electron_count();
            if count != electrons {
                return Err(CliError::Message(format!(
                    "--config '{text}': {count} electrons, but {species} has {electrons}"
                )));
            }
            if configurations.contains(&configuration) {
                return Err(CliError::Message(format!("--config '{text}': given twice")));
            }
            configurations.push(configuration);
        }
        let mut grid = GridSpec::default();
        if let Some(step) = args.grid_step {
            grid.step = step;
        }
        if let Some(r_max) = args.r_max {
            grid.r_max_bohr = r_max;
        }
        crate::radial::RadialGrid::new(species.atomic_number as f64, grid)
            .map_err(|e| CliError::Message(format!("--grid-step/--r-max: {e}")))?;
        let options = ScfOptions {
            grid,
            max_iterations: args.max_iterations,
            pair_mixing: match args.pair_mixing {
                PairMixingChoice::InnerEigenfunction => PairMixing::InnerEigenfunction,
                PairMixingChoice::Stationary => PairMixing::Stationary,
            },
            ..ScfOptions::default()
        };
        options
            .validate()
            .map_err(|e| CliError::Message(format!("--max-iterations: {e}")))?;
        let scales = ScaleFactors {
            direct_exchange: args.scale_slater,
            interaction: args.scale_interaction,
            spin_orbit: args.scale_zeta,
            average_energy: args.scale_eav,
        };
        // Name the flag that is out of range, not the whole family.
        for (flag, value) in [
            ("--scale-slater", args.scale_slater),
            ("--scale-interaction", args.scale_interaction),
            ("--scale-zeta", args.scale_zeta),
            ("--scale-eav", args.scale_eav),
        ] {
            if !(value > 0.0 && value <= 2.0) {
                return Err(CliError::Message(format!(
                    "{flag}: the scale factor must lie in (0, 2], not {value}"
                )));
            }
        }
        scales
            .validate()
            .map_err(|e| CliError::Message(format!("--scale-…: {e}")))?;
        Ok(Request {
            species,
            configurations,
            method: args.method,
            options,
            scales,
        })
    }
}

/// The ion named by `--element` (a symbol or a spectrum) and `--charge`.
fn species(element_text: &str, charge: Option<u32>) -> Result<Species, CliError> {
    let text = element_text.trim();
    if let Some(z) = element::atomic_number(text) {
        let charge = charge.unwrap_or(0);
        if charge >= z {
            return Err(CliError::Message(format!(
                "--charge {charge}: {text} (Z = {z}) has at most charge {}",
                z - 1
            )));
        }
        return Ok(Species {
            atomic_number: z,
            charge,
        });
    }
    let species: Species = text.parse().map_err(|e| {
        CliError::Message(format!(
            "--element '{text}': {e} (or give a bare symbol such as Fe, with --charge)"
        ))
    })?;
    match charge {
        Some(c) if c != species.charge => Err(CliError::Message(format!(
            "--charge {c} contradicts --element '{text}' (charge {})",
            species.charge
        ))),
        _ => Ok(species),
    }
}

/// Solve every configuration and gather the integrals.
pub fn compute(request: &Request, observer: &mut Progress) -> Result<RadialReport, CliError> {
    let z = request.species.atomic_number;
    let count = request.configurations.len();
    let mut solutions: Vec<ScfSolution> = Vec::with_capacity(count);
    for (index, configuration) in request.configurations.iter().enumerate() {
        observer.label = format!("{} ({}/{count})", configuration, index + 1);
        let solution = match request.method {
            MethodChoice::HartreeFock => hartree_fock(z, configuration, &request.options, observer),
            MethodChoice::LocalExchange => {
                local_exchange(z, configuration, &request.options, observer)
            }
            MethodChoice::Hydrogenic => screened_hydrogenic(z, configuration, request.options.grid),
        }
        .map_err(|e| {
            CliError::Message(format!(
                "{} {configuration}: {e}{}",
                request.species,
                grid_option_hint(&e)
            ))
        })?;
        observer.finish(&solution);
        solutions.push(solution);
    }
    let integrals = radial_integrals(&solutions, &request.scales)
        .map_err(|e| CliError::Message(e.to_string()))?;
    Ok(RadialReport::new(
        request.species,
        &solutions,
        integrals,
        request.scales,
        request.options.grid.step,
    ))
}

/// The option to change when the grid cannot hold an orbital.
fn grid_option_hint(error: &RadialError) -> &'static str {
    match error {
        RadialError::GridCannotHold { remedy, .. } => match remedy {
            GridRemedy::SmallerStep => " (--grid-step)",
            GridRemedy::LargerStep => " (--grid-step, --r-max)",
            GridRemedy::LargerRadius => " (--r-max)",
        },
        _ => "",
    }
}

/// Progress lines on stderr: nothing for runs shorter than half a second, then
/// one line per iteration (rewritten in place on a terminal).
#[derive(Debug)]
pub struct Progress {
    quiet: bool,
    start: Instant,
    label: String,
    terminal: bool,
    printed: bool,
}

impl Progress {
    /// A progress printer; `quiet` silences it.
    pub fn new(quiet: bool) -> Progress {
        Progress {
            quiet,
            start: Instant::now(),
            label: String::new(),
            terminal: io::stderr().is_terminal(),
            printed: false,
        }
    }

    fn finish(&mut self, solution: &ScfSolution) {
        if self.printed {
            let mut stderr = io::stderr().lock();
            let _ = writeln!(
                stderr,
                "{}termsight radial: {}: done, {} iteration{}",
                if self.terminal { "\r\x1b[K" } else { "" },
                self.label,
                solution.iterations,
                if solution.iterations == 1 { "" } else { "s" }
            );
            self.printed = false;
        }
    }
}

impl ScfObserver for Progress {
    fn iteration(&mut self, p: &ScfProgress) {
        if self.quiet || self.start.elapsed() < Duration::from_millis(500) {
            return;
        }
        let stage = match p.stage {
            ScfStage::LocalExchange => "local exchange",
            ScfStage::HartreeFock => "Hartree–Fock",
        };
        let line = format!(
            "termsight radial: {}: {stage} iteration {}: E = {:.9} hartree, ΔE = {:.1e}, change {:.1e}",
            self.label, p.iteration, p.total_energy_hartree, p.energy_change_hartree, p.residual
        );
        let mut stderr = io::stderr().lock();
        let _ = if self.terminal {
            write!(stderr, "\r\x1b[K{line}")
        } else {
            writeln!(stderr, "{line}")
        };
        let _ = stderr.flush();
        self.printed = true;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::Parser;

    fn args(list: &[&str]) -> RadialArgs {
        #[derive(Parser)]
        struct Wrapper {
            #[command(flatten)]
            args: RadialArgs,
        }
        let mut argv = vec!["radial"];
        argv.extend_from_slice(list);
        Wrapper::try_parse_from(argv)
            .expect("the test arguments parse")
            .args
    }

    #[test]
    fn element_as_symbol_with_charge_or_as_spectrum() {
        let a = Request::from_args(&args(&[
            "--element",
            "Fe",
            "--charge",
            "1",
            "--config",
            "1s2 2s2 2p6 3s2 3p6 3d6 4s",
        ]))
        .unwrap();
        assert_eq!(a.species.to_string(), "Fe II");
        let b = Request::from_args(&args(&[
            "--element",
            "Fe II",
            "--config",
            "1s2 2s2 2p6 3s2 3p6 3d6 4s",
        ]))
        .unwrap();
        assert_eq!(b.species, a.species);
    }

    #[test]
    fn errors_name_the_flag_and_value() {
        let wrong_count =
            Request::from_args(&args(&["--element", "Mg", "--config", "1s2 2s2 2p6 3s"]))
                .unwrap_err()
                .to_string();
        assert!(
            wrong_count.contains("--config '1s2 2s2 2p6 3s'"),
            "{wrong_count}"
        );
        assert!(wrong_count.contains("11 electrons") && wrong_count.contains("Mg I has 12"));
        let bad_element = Request::from_args(&args(&["--element", "Xx", "--config", "1s"]))
            .unwrap_err()
            .to_string();
        assert!(bad_element.contains("--element 'Xx'"), "{bad_element}");
        let contradiction = Request::from_args(&args(&[
            "--element",
            "Fe II",
            "--charge",
            "2",
            "--config",
            "1s",
        ]))
        .unwrap_err()
        .to_string();
        assert!(contradiction.contains("--charge 2"), "{contradiction}");
        let unreadable = Request::from_args(&args(&["--element", "He", "--config", "1s2 2x"]))
            .unwrap_err()
            .to_string();
        assert!(unreadable.contains("--config '1s2 2x'"), "{unreadable}");
        let scale = Request::from_args(&args(&[
            "--element",
            "He",
            "--config",
            "1s2",
            "--scale-zeta=-1",
        ]))
        .unwrap_err()
        .to_string();
        assert!(scale.contains("zeta"), "{scale}");
        let step = Request::from_args(&args(&[
            "--element",
            "He",
            "--config",
            "1s2",
            "--grid-step",
            "0.5",
        ]))
        .unwrap_err()
        .to_string();
        assert!(step.contains("--grid-step"), "{step}");
        let twice = Request::from_args(&args(&[
            "--element",
            "He",
            "--config",
            "1s2",
            "--config",
            "1s2",
        ]))
        .unwrap_err()
        .to_string();
        assert!(twice.contains("given twice"), "{twice}");
    }

    #[test]
    fn table_and_json_hold_the_numbers() {
        let request = Request::from_args(&args(&[
            "--element",
            "He",
            "--config",
            "1s 2s",
            "--config",
            "1s 2p",
            "--method",
            "hydrogenic",
        ]))
        .unwrap();
        let report = compute(&request, &mut Progress::new(true)).unwrap();
        let table = radial_table(&report);
        assert!(table.contains("He I (Z = 2)"));
        assert!(table.contains("G0(1s,2s)") && table.contains("P(2s,2p)"));
        let json: serde_json::Value = serde_json::from_str(&radial_json(&report).unwrap()).unwrap();
        assert_eq!(json["configurations"][0]["configuration"], "1s.2s");
        assert_eq!(json["integrals"][1]["kind"], "exchange");
    }
}
