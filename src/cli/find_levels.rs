//! `termsight find-levels`: search the unassigned lines for new levels.

use std::io::{self, Read, Write};
use std::path::PathBuf;

use clap::ValueEnum;

use super::CliError;
use super::assign::{AirFormulaArg, MediumArg, read_options, report_skipped};
use super::input::open_input;
use super::level_sets::{LevelSets, level_sets};
use super::output::write_output;
use crate::assign::read_assignments;
use crate::levels::Level;
use crate::levels::search::{SearchConfig, SearchLine, SearchProgress, find_levels};
use crate::linelist::{GlobalUncertainty, read_line_list};
use crate::notation::Species;
use crate::report::{LevelSearchReport, level_search_csv, level_search_json, level_search_table};

/// Search the lines that no known transition explains for new levels: energies E
/// at which several lines are each the difference between E and a known level of
/// the opposite parity, with J values the E1 rules allow.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct FindLevelsArgs {
    /// The lines: the CSV that `termsight assign --format csv` writes (its
    /// unassigned lines are searched, or every line with --all-lines), or a measured
    /// line list as `assign` reads it; - for standard input.
    #[arg(value_name = "LINES")]
    pub lines: PathBuf,

    /// The spectrum whose known levels the new ones combine with: a compiled table
    /// (`He I`; see `termsight assign --list-species`). With --levels, a table of
    /// yours for it replaces the compiled one.
    #[arg(long = "species", value_name = "SPECTRUM")]
    pub species: Vec<String>,

    /// The known levels in FILE (the level-table CSV
    /// species,configuration,term,J,energy_cm1,uncertainty_cm1,source); repeat for
    /// several files. The levels must be of one spectrum, or name it with --species.
    #[arg(long = "levels", value_name = "FILE")]
    pub levels: Vec<PathBuf>,

    /// Search every line of an assign CSV, assigned or not.
    #[arg(long = "all-lines")]
    pub all_lines: bool,

    /// The fewest lines a candidate level needs (2 to 1000).
    #[arg(short = 'm', long = "min-lines", value_name = "M", default_value_t = SearchConfig::DEFAULT_MIN_LINES)]
    pub min_lines: usize,

    /// A line supports an energy E when |σ − |E − E_k|| is within K combined
    /// standard uncertainties (the line's and the known level's).
    #[arg(short = 'k', long = "within", value_name = "K", default_value_t = SearchConfig::DEFAULT_TOLERANCE_SIGMA)]
    pub within: f64,

    /// Lowest energy searched, cm⁻¹. [default: 0]
    #[arg(long = "lowest", value_name = "CM1")]
    pub lowest: Option<f64>,

    /// Highest energy searched, cm⁻¹. [default: the highest known level plus the
    /// largest wavenumber]
    #[arg(long = "highest", value_name = "CM1")]
    pub highest: Option<f64>,

    /// Show only candidates whose chance probability (the look-elsewhere factor of
    /// the whole search included) is at most P.
    #[arg(long = "max-probability", value_name = "P", default_value_t = SearchConfig::DEFAULT_MAX_CHANCE_PROBABILITY)]
    pub max_probability: f64,

    /// Count the density of candidate energies for the chance probability within
    /// FACTOR times the search's largest tolerance (K times the largest combined
    /// uncertainty) on either side of a candidate.
    #[arg(long = "density-window", value_name = "FACTOR", default_value_t = SearchConfig::DEFAULT_DENSITY_WINDOW_FACTOR)]
    pub density_window: f64,

    /// Output format: a table to read; CSV in the columns of a level table (one row
    /// per candidate and allowed J), to append to your level table; or JSON. The CSV
    /// has the eighth column energy_status (empty) when the known levels are a
    /// compiled table or every --levels file has that column.
    #[arg(long, value_enum, default_value_t = FindFormat::Table)]
    pub format: FindFormat,

    /// Write the results to FILE instead of standard output (complete or not at
    /// all: written to a temporary file, then renamed).
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,

    /// For a line list: medium of wavelengths whose row does not give one.
    /// [default: air at and above 200 nm, vacuum below]
    #[arg(long, value_enum)]
    pub medium: Option<MediumArg>,

    /// For a line list: standard uncertainty of lines that do not give one, with
    /// its unit: 0.002nm, 0.02A, 0.05cm-1.
    #[arg(long, value_name = "VALUE")]
    pub uncertainty: Option<GlobalUncertainty>,

    /// For a line list: refractive index of standard air for air wavelengths.
    #[arg(long = "air-formula", value_enum, default_value_t = AirFormulaArg::BirchDowns)]
    pub air_formula: AirFormulaArg,

    /// For a line list: leave out bad rows (each reported on standard error)
    /// instead of stopping at the first one.
    #[arg(long = "skip-bad")]
    pub skip_bad: bool,
}

const AFTER_HELP: &str = "\
Examples:
  termsight assign lines.csv --species \"He I\" --format csv -o assigned.csv
  termsight find-levels assigned.csv --species \"He I\"
  termsight find-levels assigned.csv --levels my-levels.csv --format csv -o new.csv
  tail -n +2 new.csv >> my-levels.csv     # then assign again with --levels my-levels.csv
  termsight find-levels lines.csv --species \"Ne I\" --min-lines 4 --lowest 140000

Each candidate: its energy ± standard uncertainty (weighted mean of the lines'
E_k ± σ), parity, the J values ΔJ = 0, ±1 (not 0–0) allow with every supporting
level, the chance probability that so many lines agree by chance anywhere in the
search (Poisson, from the local density of E_k ± σ), and its lines with their
residuals. A line supports one candidate only. Flags: intercombination (no spin
of the new level makes every line spin-allowed), coincides (a known level of that
parity lies within the tolerance).";

/// Output formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FindFormat {
    /// A table for the terminal.
    Table,
    /// CSV in the columns of a level table.
    Csv,
    /// JSON.
    Json,
}

/// Slabs above which progress is shown on standard error.
const PROGRESS_ABOVE: usize = 8;

/// Run `termsight find-levels`.
pub fn run(args: FindLevelsArgs) -> Result<(), CliError> {
    let config = search_config(&args)?;
    let (species, levels, level_source) = known_levels(&args)?;
    let status_column = args.levels.is_empty() || args.levels.iter().all(|p| has_status_column(p));
    let (lines, line_source) = read_lines(&args)?;
    let mut progress = |p: SearchProgress| {
        if p.total > PROGRESS_ABOVE && p.done < p.total {
            let _ = writeln!(
                io::stderr(),
                "termsight: searched {} of {} parts of the energy window",
                p.done,
                p.total
            );
        }
    };
    let search = find_levels(&lines, &levels, &config, &mut progress);
    let sources = [line_source, level_source];
    let report = LevelSearchReport {
        search: &search,
        lines: &lines,
        levels: &levels,
        species,
        sources: &sources,
        status_column,
    };
    let bytes = match args.format {
        FindFormat::Table => level_search_table(&report).into_bytes(),
        FindFormat::Csv => level_search_csv(&report),
        FindFormat::Json => level_search_json(&report).into_bytes(),
    };
    write_output(args.output.as_deref(), &bytes)
}

fn search_config(args: &FindLevelsArgs) -> Result<SearchConfig, CliError> {
    fn flag(name: &'static str) -> impl Fn(crate::levels::search::SearchConfigError) -> CliError {
        move |e| CliError::Message(format!("--{name}: {e}"))
    }
    let mut config = SearchConfig::default()
        .with_min_lines(args.min_lines)
        .map_err(flag("min-lines"))?
        .with_tolerance_sigma(args.within)
        .map_err(flag("within"))?
        .with_max_chance_probability(args.max_probability)
        .map_err(flag("max-probability"))?
        .with_density_window_factor(args.density_window)
        .map_err(flag("density-window"))?;
    if args.lowest.is_some() || args.highest.is_some() {
        let low = args.lowest.unwrap_or(0.0);
        let high = args.highest.unwrap_or(f64::MAX / 4.0);
        config = config
            .with_energy_range_cm1(low, high)
            .map_err(flag("lowest/--highest"))?;
    }
    Ok(config)
}

/// The known levels of the one spectrum searched, with a sentence on their source.
fn known_levels(args: &FindLevelsArgs) -> Result<(Species, Vec<Level>, String), CliError> {
    if args.species.is_empty() && args.levels.is_empty() {
        return Err(CliError::Message(
            "name the spectrum whose levels the new ones combine with: --species \"He I\" \
             (a compiled table) or --levels FILE"
                .into(),
        ));
    }
    let LevelSets {
        wanted,
        compiled,
        tables,
    } = level_sets(&args.levels, &args.species, false)?;
    let mut levels: Vec<Level> = Vec::new();
    let mut sources = Vec::new();
    for table in compiled {
        let loaded = table.load().map_err(|e| CliError::Message(e.to_string()))?;
        sources.push(format!(
            "the compiled {} table ({})",
            table.species,
            table.citation()
        ));
        levels.extend(loaded.levels);
    }
    for table in tables {
        sources.push(table.source.clone());
        levels.extend(table.levels);
    }
    if !wanted.is_empty() {
        levels.retain(|l| wanted.contains(&l.species));
    }
    let mut species: Vec<Species> = Vec::new();
    for level in &levels {
        if !species.contains(&level.species) {
            species.push(level.species);
        }
    }
    match species.as_slice() {
        [one] => Ok((
            *one,
            levels,
            format!("Known levels: {}.", sources.join(", ")),
        )),
        [] => Err(CliError::Message(
            "no known level of the spectrum named with --species in the tables given".into(),
        )),
        many => Err(CliError::Message(format!(
            "the known levels are of {} spectra ({}); find-levels searches one at a time: \
             name it with --species",
            many.len(),
            many.iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join(", ")
        ))),
    }
}

/// Whether the level table at `path` has the column `energy_status` (as the compiled
/// tables have): its header, the first line neither blank nor a `#` comment, names
/// it. False when the file cannot be read (it has been read once already).
fn has_status_column(path: &std::path::Path) -> bool {
    std::fs::read_to_string(path).is_ok_and(|text| header_names_status(&text))
}

/// Whether the header of a level table's text names the column `energy_status`.
fn header_names_status(text: &str) -> bool {
    text.lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .is_some_and(|h| {
            h.split(',').any(|c| {
                c.trim()
                    .trim_matches('"')
                    .eq_ignore_ascii_case("energy_status")
            })
        })
}

/// Whether the text is an assign CSV: its header (the first line that is neither
/// blank nor a `#` comment) names the columns `rank` and `observed_wavenumber_cm1`.
fn is_assign_csv(text: &[u8]) -> bool {
    let header = text
        .split(|&b| b == b'\n')
        .map(|l| String::from_utf8_lossy(l).trim().to_string())
        .find(|l| !l.is_empty() && !l.starts_with('#'));
    header.is_some_and(|h| {
        let columns: Vec<&str> = h.split(',').map(str::trim).collect();
        columns.contains(&"rank") && columns.contains(&"observed_wavenumber_cm1")
    })
}

/// The lines to search, with a sentence on where they come from.
fn read_lines(args: &FindLevelsArgs) -> Result<(Vec<SearchLine>, String), CliError> {
    let (mut reader, name) = open_input(&args.lines)?;
    let mut text = Vec::new();
    reader
        .read_to_end(&mut text)
        .map_err(|source| CliError::Io {
            path: name.clone(),
            source,
        })?;
    if is_assign_csv(&text) {
        let file = read_assignments(text.as_slice(), &name)
            .map_err(|e| CliError::Message(e.to_string()))?;
        let mut seen = std::collections::HashSet::new();
        let lines: Vec<SearchLine> = file
            .records
            .iter()
            .filter(|r| args.all_lines || r.rank.is_none())
            .filter(|r| seen.insert(r.line))
            .map(|r| SearchLine {
                row: r.line,
                wavenumber_cm1: r.observed_wavenumber_cm1,
                uncertainty_cm1: r.observed_uncertainty_cm1,
                intensity: r.observed_intensity,
            })
            .collect();
        let which = if args.all_lines {
            "every line"
        } else {
            "the unassigned lines"
        };
        let sentence = format!("Lines: {which} of the assign CSV {name} ({}).", lines.len());
        return Ok((lines, sentence));
    }
    if args.all_lines {
        return Err(CliError::Message(format!(
            "{name}: --all-lines is for an assign CSV; a line list is searched whole"
        )));
    }
    let options = read_options(
        args.medium,
        args.uncertainty,
        args.air_formula,
        args.skip_bad,
    );
    let list = read_line_list(text.as_slice(), &name, &options)
        .map_err(|e| CliError::Message(e.to_string()))?;
    report_skipped(&list);
    let lines: Vec<SearchLine> = list
        .lines
        .iter()
        .map(|l| SearchLine {
            row: l.row,
            wavenumber_cm1: l.wavenumber_cm1,
            uncertainty_cm1: l.uncertainty_cm1,
            intensity: l.intensity,
        })
        .collect();
    let sentence = format!(
        "Lines: every line of the line list {name} ({}).",
        lines.len()
    );
    Ok((lines, sentence))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_the_status_column_of_a_level_table() {
        // The compiled tables' header (reference-levels/*.csv) has it; the seven
        // columns of a level table alone do not.
        assert!(header_names_status(
            "# He I levels\nspecies,configuration,term,J,energy_cm1,uncertainty_cm1,source,energy_status\n"
        ));
        assert!(!header_names_status(
            "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\nHe I,,x,1,1,1,energy_status\n"
        ));
        assert!(!header_names_status(""));
    }

    #[test]
    fn tells_an_assign_csv_from_a_line_list() {
        assert!(is_assign_csv(
            b"# run\nline,given_value,observed_wavenumber_cm1,rank\n1,2,3,\n"
        ));
        assert!(!is_assign_csv(
            b"# demo\nwavelength_nm,uncertainty_nm\n500,0.01\n"
        ));
        assert!(!is_assign_csv(b""));
    }
}
