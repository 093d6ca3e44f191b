//! The level sets named on the command line: compiled spectra (`--species`) and
//! level tables (`--levels`), as `assign` and `find-levels` read them.

use std::path::PathBuf;

use super::CliError;
use super::input::read_levels_file;
use crate::levels::{EMBEDDED_TABLES, EmbeddedTable, LevelTable, embedded_stages, embedded_table};
use crate::notation::Species;

/// The level sets asked for.
#[derive(Debug)]
pub struct LevelSets {
    /// The spectra named with --species, each once, in order.
    pub wanted: Vec<Species>,
    /// The compiled tables to use: those named, less those a table of the user's
    /// replaces.
    pub compiled: Vec<&'static EmbeddedTable>,
    /// The tables given with --levels, in order.
    pub tables: Vec<LevelTable>,
}

/// The compiled tables named with --species (all of them when neither --species,
/// --levels nor another source of levels, `others`, is given) and every level
/// table given with --levels; a table of a compiled species replaces the compiled
/// one.
pub fn level_sets(
    level_files: &[PathBuf],
    species_names: &[String],
    others: bool,
) -> Result<LevelSets, CliError> {
    let mut wanted: Vec<Species> = Vec::new();
    for name in species_names {
        for species in requested_species(name)? {
            // The same species named twice is asked for once (not "given twice").
            if !wanted.contains(&species) {
                wanted.push(species);
            }
        }
    }
    let tables = level_files
        .iter()
        .map(|path| read_levels_file(path))
        .collect::<Result<Vec<_>, _>>()?;
    let in_tables = |species: &Species| tables.iter().any(|t| t.species().contains(species));
    let compiled: Vec<&EmbeddedTable> = if wanted.is_empty() {
        if tables.is_empty() && !others {
            EMBEDDED_TABLES.iter().collect()
        } else {
            Vec::new()
        }
    } else {
        let mut chosen = Vec::new();
        for species in &wanted {
            if in_tables(species) {
                continue; // the user's table replaces the compiled one
            }
            chosen.push(embedded_table(*species).ok_or_else(|| {
                CliError::Message(format!(
                    "--species: no compiled table of {species}{}; compiled: {} (give your \
                     own with --levels FILE)",
                    if tables.is_empty() {
                        ""
                    } else {
                        " and no level of it in the tables given with --levels"
                    },
                    EMBEDDED_TABLES.map(|t| t.species).join(", ")
                ))
            })?);
        }
        chosen
    };
    Ok(LevelSets {
        wanted,
        compiled,
        tables,
    })
}

/// The spectra named by one --species value: a spectrum (`Fe II`, `HeI`), or an
/// element symbol alone for every compiled stage of it (`Ar`).
pub fn requested_species(name: &str) -> Result<Vec<Species>, CliError> {
    let symbol = name.trim();
    if let Some(z) = crate::notation::element::atomic_number(symbol) {
        let stages = embedded_stages(z);
        if stages.is_empty() {
            return Err(CliError::Message(format!(
                "--species: no compiled spectrum of {symbol}; compiled: {} (give your own \
                 with --levels FILE, naming the stage as in \"{symbol} I\")",
                EMBEDDED_TABLES.map(|t| t.species).join(", ")
            )));
        }
        return Ok(stages.iter().map(|t| t.spectrum()).collect());
    }
    name.parse::<Species>()
        .map(|s| vec![s])
        .map_err(|e| CliError::Message(format!("--species: {e}")))
}
