//! The model file of an ion: a TOML document with the species, the
//! configurations with their parameter values (cm⁻¹), and the configuration
//! interactions.
//!
//! ```toml
//! # Energies in cm⁻¹.
//! species = "Mg I"
//!
//! [[configuration]]
//! label = "3s2"
//! Eav = 0.0
//!
//! [[configuration]]
//! label = "3s.3p"
//! Eav = 30000.0
//! "G1(3s,3p)" = { value = 12000.0, uncertainty = 150.0 }
//! "zeta(3p)" = { value = 40.0, vary = "fixed" }
//!
//! [[configuration]]
//! label = "3p2"
//! Eav = 60000.0
//! "F2(3p)" = 30000.0
//! "zeta(3p)" = { tie = "zeta(3p)@3s.3p", ratio = 1.1 }
//!
//! [[interaction]]
//! between = ["3s2", "3p2"]
//! "R1(3s3s,3p3p)" = 15000.0
//!
//! # Radial dipole integrals ⟨a|r|b⟩ in bohr, for the predicted lines.
//! [dipole]
//! "P(3s,3p)" = -2.6
//! ```
//!
//! - `species` (required): the spectrum, `Mg I`.
//! - `model_uncertainty_cm1` (optional, 0 to 1e150): the standard uncertainty of the
//!   model's level energies, cm⁻¹, for matching its predicted lines against
//!   observed ones (`termsight assign --model`).
//! - `[[configuration]]`, one per configuration: `label` (a configuration as
//!   `notation` reads it; the same closed core in every one, or none), then one
//!   entry per parameter of that configuration, named as in
//!   [`super::Radial`]: `Eav`, `F2(3p)` (or `F2(3p,3p)`), `F2(3p,4p)`, `G1(3s,3p)`,
//!   `zeta(3p)`. Every parameter the configuration needs must be there, and no other.
//! - `[[interaction]]` (optional), one per pair of configurations of the same
//!   parity that mix: `between = [label, label]` and their R^k integrals,
//!   `R1(3s3s,3p3p)`. Pairs without an interaction table do not mix.
//! - `[dipole]` (optional): radial dipole integrals P(a,b) = ⟨a|r|b⟩ in bohr
//!   ([`DipoleIntegral`]), `"P(3s,3p)" = -2.6`, one per pair of orbitals that an
//!   E1 line moves an electron between (`termsight lines` says which it needs).
//!   Signs follow radial functions positive near the nucleus; only relative signs
//!   matter, and only where configuration mixing makes two integrals add.
//!   A key `"P(3s,3p)@3s.3p~3p2" = -3.28` gives the integral for the lines between
//!   those two configurations only ([`PairDipole`]; orbitals computed for each
//!   configuration differ a little); the plain key is the value for every other
//!   pair, and may be left out when every pair that needs it has its own.
//! - A parameter is a number, or a table with `value`, `vary` (`"free"`, the
//!   default, or `"fixed"`), `uncertainty` (≥ 0, optional), or `tie` (the name of
//!   another parameter) with `ratio` (default 1): a tied parameter equals ratio ×
//!   the other and needs no `value` (if one is given it must agree).
//!   A tie names the parameter as `name@scope` (`zeta(3p)@3s.3p`,
//!   `R1(3s3s,3p3p)@3s2~3p2`), or by its short name alone, which means another
//!   parameter: the one of that name in the same table, else the only other one of
//!   that name in the model.
//!
//! Every error names the file, line and key.

use std::collections::{BTreeMap, HashMap};
use std::fmt::Write as _;
use std::io::BufRead;

use toml::Spanned;
use toml::de::{DeTable, DeValue};

use super::orbital::Orbital;
use super::parameter::{DipoleIntegral, ParameterId, Radial, Scope, scope_name};
use super::{BuildProgress, LevelStructure, StructureError};
use crate::location::Location;
use crate::notation::{Configuration, Species};

/// How a parameter moves in a fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Vary {
    /// Adjusted by the fit.
    Free,
    /// Held at its value.
    Fixed,
    /// Always `ratio` × the value of parameter `to`.
    Tied {
        /// The parameter it follows.
        to: ParameterId,
        /// The ratio.
        ratio: f64,
    },
}

/// One parameter of a model, with its value and how it varies.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelParameter {
    /// Which parameter.
    pub id: ParameterId,
    /// Its value in cm⁻¹ (for a tied parameter: ratio × the other's value).
    pub value: f64,
    /// Free, fixed or tied.
    pub vary: Vary,
    /// Its standard uncertainty in cm⁻¹, when known (a fit writes it).
    pub uncertainty: Option<f64>,
}

/// A radial dipole integral for the lines between two configurations only, in
/// place of the model's value for that orbital pair.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairDipole {
    /// The integral.
    pub integral: DipoleIntegral,
    /// The two configurations (model indices, first < second).
    pub configurations: (usize, usize),
    /// ⟨a|r|b⟩, bohr.
    pub value: f64,
}

/// The level model of one ion.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelModel {
    /// The spectrum.
    pub species: Species,
    /// The configurations, in file order.
    pub configurations: Vec<Configuration>,
    /// Pairs of configurations (indices) that mix.
    pub interactions: Vec<(usize, usize)>,
    /// Every parameter, in the order of [`LevelStructure::parameters`].
    pub parameters: Vec<ModelParameter>,
    /// Radial dipole integrals, bohr, in [`DipoleIntegral`] order (for line
    /// strengths; empty when the file has no `[dipole]` table).
    pub dipole: Vec<(DipoleIntegral, f64)>,
    /// Radial dipole integrals for the lines between two configurations only
    /// (`"P(3s,3p)@3s.3p~3p2"` in the `[dipole]` table), in key order.
    pub pair_dipole: Vec<PairDipole>,
    /// Standard uncertainty of the model's level energies, cm⁻¹, when the file
    /// gives one (`model_uncertainty_cm1`).
    pub model_uncertainty_cm1: Option<f64>,
}

impl LevelModel {
    /// Build the model's level structure.
    pub fn structure(&self) -> Result<LevelStructure, StructureError> {
        LevelStructure::build(&self.configurations, &self.interactions)
    }

    /// Parameter values in the order of `structure`'s parameters (0 for any the
    /// model lacks).
    pub fn values_for(&self, structure: &LevelStructure) -> Vec<f64> {
        let by_id: HashMap<ParameterId, f64> =
            self.parameters.iter().map(|p| (p.id, p.value)).collect();
        structure
            .parameters()
            .iter()
            .map(|id| by_id.get(id).copied().unwrap_or(0.0))
            .collect()
    }

    /// The full name of a parameter (`zeta(3p)@3s.3p`).
    pub fn full_name(&self, id: &ParameterId) -> String {
        id.full_name(&self.configurations)
    }
}

/// A model file that cannot be used. Displays as `file:line: key 'name': problem`.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ModelError {
    /// The file could not be read.
    #[error("{source_name}: {error}")]
    Read {
        /// The file.
        source_name: String,
        /// What went wrong.
        error: std::io::Error,
    },
    /// Anything wrong with the content, at a place in the file.
    #[error("{location}: {problem}")]
    Invalid {
        /// File, line and key.
        location: Location,
        /// What is wrong and what was expected.
        problem: String,
    },
}

/// Position → line converter for one document.
struct Lines<'a> {
    source: &'a str,
    starts: Vec<usize>,
}

impl<'a> Lines<'a> {
    fn new(source: &'a str, text: &str) -> Lines<'a> {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        Lines { source, starts }
    }

    /// 1-based line of a byte offset.
    fn line(&self, offset: usize) -> usize {
        self.starts.partition_point(|&s| s <= offset)
    }

    fn error(&self, offset: usize, key: &str, problem: impl Into<String>) -> ModelError {
        let mut location = Location::line(self.source, self.line(offset));
        if !key.is_empty() {
            location = location.key(key);
        }
        ModelError::Invalid {
            location,
            problem: problem.into(),
        }
    }
}

/// The model as read, with the structure built from it (needed to know which
/// parameters the configurations take).
#[derive(Debug, Clone)]
pub struct LoadedModel {
    /// The model.
    pub model: LevelModel,
    /// Its level structure.
    pub structure: LevelStructure,
}

/// A parameter entry as written.
struct Entry {
    key: String,
    key_offset: usize,
    scope: Scope,
    value: Option<f64>,
    vary: Option<String>,
    tie: Option<(String, usize)>,
    ratio: f64,
    uncertainty: Option<f64>,
}

/// The largest parameter value or uncertainty a model may give, cm⁻¹ (about
/// 1.2 MeV): ten times the binding energy of a 1s electron in the heaviest ions,
/// beyond any atomic parameter, and small enough that energies keep digits below
/// 1 cm⁻¹ (a value such as 1e300 would swallow every other and print 300 digits).
pub const MAX_PARAMETER_CM1: f64 = 1e10;

/// `value` when it is at most [`MAX_PARAMETER_CM1`] in size, else the error for
/// `field` at `offset`.
fn bounded(lines: &Lines<'_>, offset: usize, field: &str, value: f64) -> Result<f64, ModelError> {
    if value.abs() > MAX_PARAMETER_CM1 {
        return Err(lines.error(
            offset,
            field,
            format!(
                "{value:e} cm⁻¹ is out of range: an atomic parameter is at most \
                 {MAX_PARAMETER_CM1:e} cm⁻¹ in size (check the unit: cm⁻¹, not Hz or eV)"
            ),
        ));
    }
    Ok(value)
}

fn number(value: &DeValue<'_>) -> Option<f64> {
    let parsed = match value {
        DeValue::Integer(i) => i64::from_str_radix(i.as_str(), i.radix())
            .ok()
            .map(|v| v as f64),
        DeValue::Float(f) => f.as_str().replace('_', "").parse::<f64>().ok(),
        _ => None,
    };
    parsed.filter(|v| v.is_finite())
}

/// Read a model from `reader`; `source` names it in errors.
pub fn read_model(reader: impl BufRead, source: &str) -> Result<LoadedModel, ModelError> {
    read_model_with_progress(reader, source, |_| {})
}

/// [`read_model`], calling `progress` as the level structure is built (see
/// [`LevelStructure::build_with_progress`]).
pub fn read_model_with_progress(
    mut reader: impl BufRead,
    source: &str,
    progress: impl FnMut(BuildProgress),
) -> Result<LoadedModel, ModelError> {
    let mut bytes = Vec::new();
    reader
        .read_to_end(&mut bytes)
        .map_err(|error| ModelError::Read {
            source_name: source.to_string(),
            error,
        })?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let valid = e.utf8_error().valid_up_to();
        let prefix = String::from_utf8_lossy(&e.as_bytes()[..valid]);
        Lines::new(source, &prefix).error(
            valid,
            "",
            "the text is not valid UTF-8 (save the model as UTF-8)",
        )
    })?;
    parse_model_with_progress(&text, source, progress)
}

/// Read a model from its text; `source` names it in errors.
pub fn parse_model(text: &str, source: &str) -> Result<LoadedModel, ModelError> {
    parse_model_with_progress(text, source, |_| {})
}

/// [`parse_model`], calling `progress` as the level structure is built.
pub fn parse_model_with_progress(
    text: &str,
    source: &str,
    progress: impl FnMut(BuildProgress),
) -> Result<LoadedModel, ModelError> {
    let lines = Lines::new(source, text);
    let document = DeTable::parse(text).map_err(|e| {
        let offset = e.span().map_or(0, |s| s.start);
        lines.error(offset, "", format!("not valid TOML: {}", e.message()))
    })?;
    let document = document.get_ref();
    let mut species = None;
    let mut model_uncertainty_cm1 = None;
    let mut dipole_table = None;
    let mut config_tables = Vec::new();
    let mut interaction_tables = Vec::new();
    for (key, value) in document.iter() {
        let at = key.span().start;
        match key.get_ref().as_ref() {
            "species" => {
                let text = value.get_ref().as_str().ok_or_else(|| {
                    lines.error(at, "species", "expected a string such as \"Mg I\"")
                })?;
                species = Some(
                    text.parse::<Species>()
                        .map_err(|e| lines.error(at, "species", e.to_string()))?,
                );
            }
            "model_uncertainty_cm1" => {
                // The bound keeps u² and its sums with line uncertainties finite.
                let u = number(value.get_ref())
                    .filter(|u| (0.0..=1e150).contains(u))
                    .ok_or_else(|| {
                        lines.error(
                            at,
                            "model_uncertainty_cm1",
                            "expected a number of cm⁻¹ from 0 to 1e150, the standard \
                             uncertainty of the model's level energies",
                        )
                    })?;
                model_uncertainty_cm1 = Some(u);
            }
            "dipole" => {
                let DeValue::Table(table) = value.get_ref() else {
                    return Err(lines.error(
                        at,
                        "dipole",
                        "expected a [dipole] table of integrals such as \"P(3s,3p)\" = -2.6",
                    ));
                };
                dipole_table = Some(table);
            }
            "configuration" | "interaction" => {
                let name = key.get_ref().as_ref();
                let DeValue::Array(array) = value.get_ref() else {
                    return Err(lines.error(at, name, format!("expected [[{name}]] tables")));
                };
                for item in array.iter() {
                    let DeValue::Table(table) = item.get_ref() else {
                        return Err(lines.error(
                            item.span().start,
                            name,
                            format!("expected [[{name}]] tables"),
                        ));
                    };
                    if name == "configuration" {
                        config_tables.push((item.span().start, table));
                    } else {
                        interaction_tables.push((item.span().start, table));
                    }
                }
            }
            other => {
                return Err(lines.error(
                    at,
                    other,
                    "unknown key; a model has species, model_uncertainty_cm1, \
                     [[configuration]], [[interaction]] and [dipole]",
                ));
            }
        }
    }
    let species = species.ok_or_else(|| {
        lines.error(
            0,
            "species",
            "missing: name the spectrum, e.g. species = \"Mg I\"",
        )
    })?;
    if config_tables.is_empty() {
        return Err(lines.error(
            0,
            "configuration",
            "the model has no [[configuration]] tables",
        ));
    }

    // Configurations and their parameter entries.
    let mut configurations = Vec::new();
    let mut label_offsets = Vec::new();
    let mut entries: Vec<Entry> = Vec::new();
    for (index, (start, table)) in config_tables.iter().enumerate() {
        let (label, offset) = string_key(&lines, table, "label", *start)?;
        let configuration: Configuration =
            label.parse().map_err(|e: crate::notation::NotationError| {
                lines.error(offset, "label", e.to_string())
            })?;
        let configuration = configuration.without_intermediates();
        if configuration.electron_count() > species.electron_count() {
            return Err(lines.error(
                offset,
                "label",
                format!(
                    "{configuration} has {} electrons, more than the {} of {species}",
                    configuration.electron_count(),
                    species.electron_count()
                ),
            ));
        }
        configurations.push(configuration);
        label_offsets.push(offset);
        read_entries(
            &lines,
            table,
            Scope::Configuration(index),
            &["label"],
            &mut entries,
        )?;
    }
    // Interactions.
    let mut interactions = Vec::new();
    let mut between_offsets = Vec::new();
    for (start, table) in &interaction_tables {
        let Some((key, value)) = table.iter().find(|(k, _)| k.get_ref() == "between") else {
            return Err(lines.error(
                *start,
                "between",
                "missing: name the two configurations, between = [\"3s2\", \"3p2\"]",
            ));
        };
        let at = key.span().start;
        let names: Vec<&str> = match value.get_ref() {
            DeValue::Array(a) => a.iter().filter_map(|v| v.get_ref().as_str()).collect(),
            _ => Vec::new(),
        };
        if names.len() != 2 {
            return Err(lines.error(
                at,
                "between",
                "expected two configuration labels, [\"3s2\", \"3p2\"]",
            ));
        }
        let mut pair = [0usize; 2];
        for (slot, name) in pair.iter_mut().zip(&names) {
            let wanted: Configuration =
                name.parse().map_err(|e: crate::notation::NotationError| {
                    lines.error(at, "between", e.to_string())
                })?;
            let mut wanted_shells: Vec<_> = wanted.subshells().copied().collect();
            wanted_shells.sort();
            *slot = configurations
                .iter()
                .position(|c| {
                    let mut shells: Vec<_> = c.subshells().copied().collect();
                    shells.sort();
                    shells == wanted_shells
                })
                .ok_or_else(|| {
                    lines.error(
                        at,
                        "between",
                        format!("{name} is not one of the model's configurations"),
                    )
                })?;
        }
        if pair[0] == pair[1] {
            return Err(lines.error(at, "between", "a configuration cannot interact with itself"));
        }
        let (a, b) = (pair[0].min(pair[1]), pair[0].max(pair[1]));
        if interactions.contains(&(a, b)) {
            return Err(lines.error(
                at,
                "between",
                "this pair already has an [[interaction]] table",
            ));
        }
        interactions.push((a, b));
        between_offsets.push(at);
        read_entries(
            &lines,
            table,
            Scope::Interaction(a, b),
            &["between"],
            &mut entries,
        )?;
    }

    // Build the structure to learn which parameters are needed.
    let structure = LevelStructure::build_with_progress(&configurations, &interactions, progress)
        .map_err(|e| match &e {
        StructureError::ElectronCount { configuration, .. }
        | StructureError::SubshellTooLarge { configuration, .. }
        | StructureError::Duplicate { configuration } => {
            let i = configurations
                .iter()
                .rposition(|c| c.to_string() == *configuration)
                .unwrap_or(0);
            lines.error(label_offsets[i], "label", e.to_string())
        }
        StructureError::OppositeParity { .. } => lines.error(
            between_offsets.first().copied().unwrap_or(0),
            "between",
            e.to_string(),
        ),
        _ => lines.error(label_offsets[0], "label", e.to_string()),
    })?;
    let needed = structure.parameters();
    let names_in = |scope: Scope| -> String {
        needed
            .iter()
            .filter(|p| p.scope == scope)
            .map(|p| p.radial.to_string())
            .collect::<Vec<_>>()
            .join(", ")
    };
    let scope_label = |scope: Scope| match scope {
        Scope::Configuration(_) => format!("configuration {}", scope_name(scope, &configurations)),
        Scope::Interaction(..) => format!("interaction {}", scope_name(scope, &configurations)),
    };

    // Match entries to parameters.
    let mut given: BTreeMap<ParameterId, usize> = BTreeMap::new();
    for (e, entry) in entries.iter().enumerate() {
        let radial: Radial = entry
            .key
            .parse()
            .map_err(|m: String| lines.error(entry.key_offset, &entry.key, m))?;
        let mut id = ParameterId {
            scope: entry.scope,
            radial,
        };
        if needed.binary_search(&id).is_err()
            && let Some(same) = needed
                .iter()
                .find(|p| p.scope == entry.scope && p.radial.same_integral(&radial))
        {
            // Another spelling of the same R^k integral.
            id = *same;
        }
        if needed.binary_search(&id).is_err() {
            let list = names_in(entry.scope);
            let hint = if list.is_empty() {
                "it takes no parameters (these configurations do not interact through the open subshells)".to_string()
            } else {
                format!("it takes {list}")
            };
            return Err(lines.error(
                entry.key_offset,
                &entry.key,
                format!("not a parameter of {}; {hint}", scope_label(entry.scope)),
            ));
        }
        if given.insert(id, e).is_some() {
            return Err(lines.error(
                entry.key_offset,
                &entry.key,
                "this parameter is given twice",
            ));
        }
    }
    for id in needed {
        if !given.contains_key(id) {
            let offset = match id.scope {
                Scope::Configuration(c) => label_offsets[c],
                Scope::Interaction(a, b) => {
                    let i = interactions.iter().position(|&p| p == (a, b)).unwrap_or(0);
                    between_offsets[i]
                }
            };
            return Err(lines.error(
                offset,
                &id.radial.to_string(),
                format!(
                    "missing: {} needs a value for every parameter: {}",
                    scope_label(id.scope),
                    names_in(id.scope)
                ),
            ));
        }
    }

    // Values, ties.
    let mut parameters = Vec::new();
    for id in needed {
        let entry = &entries[given[id]];
        let vary = match (&entry.tie, entry.vary.as_deref()) {
            (Some((name, at)), None) => {
                let target = resolve_tie(name, *id, &configurations, needed)
                    .map_err(|m| lines.error(*at, &entry.key, m))?;
                if target == *id {
                    return Err(lines.error(
                        *at,
                        &entry.key,
                        "a parameter cannot be tied to itself",
                    ));
                }
                Vary::Tied {
                    to: target,
                    ratio: entry.ratio,
                }
            }
            (Some((_, at)), Some(_)) => {
                return Err(lines.error(*at, &entry.key, "give either tie or vary, not both"));
            }
            (None, None) | (None, Some("free")) => Vary::Free,
            (None, Some("fixed")) => Vary::Fixed,
            (None, Some(other)) => {
                return Err(lines.error(
                    entry.key_offset,
                    &entry.key,
                    format!("vary = \"{other}\" is not understood; use \"free\" or \"fixed\" (or tie = \"…\")"),
                ));
            }
        };
        if !matches!(vary, Vary::Tied { .. }) && entry.value.is_none() {
            return Err(lines.error(entry.key_offset, &entry.key, "the table has no value"));
        }
        parameters.push(ModelParameter {
            id: *id,
            value: entry.value.unwrap_or(f64::NAN),
            vary,
            uncertainty: entry.uncertainty,
        });
    }
    let snapshot = parameters.clone();
    for parameter in parameters.iter_mut() {
        if let Vary::Tied { to, ratio } = parameter.vary {
            let entry = &entries[given[&parameter.id]];
            let at = entry.tie.as_ref().map_or(entry.key_offset, |t| t.1);
            let target = snapshot.iter().find(|q| q.id == to).ok_or_else(|| {
                lines.error(at, &entry.key, "the tie names no parameter of the model")
            })?;
            if matches!(target.vary, Vary::Tied { .. }) {
                return Err(lines.error(
                    at,
                    &entry.key,
                    format!(
                        "{} is itself tied; tie to a free or fixed parameter",
                        to.full_name(&configurations)
                    ),
                ));
            }
            let tied_value = ratio * target.value;
            if let Some(given_value) = entry.value
                && (given_value - tied_value).abs() > 1e-9 * tied_value.abs().max(1.0)
            {
                return Err(lines.error(
                    entry.key_offset,
                    &entry.key,
                    format!(
                        "value {given_value} disagrees with the tie: {ratio} × {} = {tied_value}",
                        target.value
                    ),
                ));
            }
            parameter.value = tied_value;
        }
    }
    let (dipole, pair_dipole) = match dipole_table {
        Some(table) => read_dipole(&lines, table, &configurations)?,
        None => (Vec::new(), Vec::new()),
    };
    Ok(LoadedModel {
        model: LevelModel {
            species,
            configurations,
            interactions,
            parameters,
            dipole,
            pair_dipole,
            model_uncertainty_cm1,
        },
        structure,
    })
}

/// The configuration pair of a `[dipole]` key's `@a~b` part: model indices, first
/// < second, of opposite parity (an E1 line joins them).
fn dipole_pair(text: &str, configurations: &[Configuration]) -> Result<(usize, usize), String> {
    let usage = "write the pair as `@first~second`, two configurations of the model, e.g. \"P(3s,3p)@3s2~3s.3p\"";
    let (first, second) = text.split_once('~').ok_or_else(|| usage.to_string())?;
    let find = |label: &str| -> Result<usize, String> {
        let parsed: Configuration = label
            .trim()
            .parse()
            .map_err(|e| format!("'{}': {e}", label.trim()))?;
        configurations
            .iter()
            .position(|c| *c == parsed)
            .ok_or_else(|| format!("'{}' is not a configuration of the model", label.trim()))
    };
    let (a, b) = (find(first)?, find(second)?);
    if configurations[a].parity() == configurations[b].parity() {
        return Err(format!(
            "{} and {} have the same parity: no E1 line joins them",
            configurations[a], configurations[b]
        ));
    }
    Ok((a.min(b), a.max(b)))
}

/// The values of a `[dipole]` table: per orbital pair, and per configuration pair.
type DipoleTable = (Vec<(DipoleIntegral, f64)>, Vec<PairDipole>);

/// The `[dipole]` table: `"P(a,b)" = bohr`, each integral once, each orbital one
/// of the model's; and `"P(a,b)@c1~c2" = bohr` for one configuration pair.
fn read_dipole(
    lines: &Lines<'_>,
    table: &DeTable<'_>,
    configurations: &[Configuration],
) -> Result<DipoleTable, ModelError> {
    let mut out: Vec<(DipoleIntegral, f64)> = Vec::new();
    let mut pairs: Vec<PairDipole> = Vec::new();
    for (key, value) in table.iter() {
        let name = key.get_ref().as_ref();
        let at = key.span().start;
        let field = format!("dipole.{name}");
        let (integral_text, pair) = match name.split_once('@') {
            Some((integral, pair)) => (
                integral,
                Some(dipole_pair(pair, configurations).map_err(|m| lines.error(at, &field, m))?),
            ),
            None => (name, None),
        };
        let integral: DipoleIntegral = integral_text
            .parse()
            .map_err(|m: String| lines.error(at, &field, m))?;
        for orbital in [integral.a, integral.b] {
            let known = configurations
                .iter()
                .any(|c| c.subshells().any(|s| Orbital { n: s.n, l: s.l } == orbital));
            if !known {
                return Err(lines.error(
                    at,
                    &field,
                    format!("no configuration of the model has a {orbital} orbital"),
                ));
            }
        }
        let v = number(value.get_ref())
            .ok_or_else(|| lines.error(at, &field, "not a number; give ⟨a|r|b⟩ in bohr"))?;
        if let Some(pair) = pair {
            if pairs
                .iter()
                .any(|p| p.integral == integral && p.configurations == pair)
            {
                return Err(lines.error(
                    at,
                    &field,
                    format!("{integral} for this pair of configurations is given twice"),
                ));
            }
            pairs.push(PairDipole {
                integral,
                configurations: pair,
                value: v,
            });
            continue;
        }
        if out.iter().any(|(i, _)| *i == integral) {
            return Err(lines.error(at, &field, format!("{integral} is given twice")));
        }
        out.push((integral, v));
    }
    out.sort_by_key(|a| a.0);
    pairs.sort_by_key(|p| (p.integral, p.configurations));
    Ok((out, pairs))
}

/// A required string key of a table: its value and the offset of the key.
fn string_key<'a>(
    lines: &Lines<'_>,
    table: &'a DeTable<'_>,
    name: &str,
    table_start: usize,
) -> Result<(&'a str, usize), ModelError> {
    let (key, value) = table
        .iter()
        .find(|(k, _)| k.get_ref() == name)
        .ok_or_else(|| lines.error(table_start, name, "missing"))?;
    let at = key.span().start;
    let text = value
        .get_ref()
        .as_str()
        .ok_or_else(|| lines.error(at, name, "expected a string"))?;
    Ok((text, at))
}

/// The parameter entries of a table (every key but `skip`).
fn read_entries(
    lines: &Lines<'_>,
    table: &DeTable<'_>,
    scope: Scope,
    skip: &[&str],
    out: &mut Vec<Entry>,
) -> Result<(), ModelError> {
    for (key, value) in table.iter() {
        let name = key.get_ref().as_ref();
        if skip.contains(&name) {
            continue;
        }
        let at = key.span().start;
        let mut entry = Entry {
            key: name.to_string(),
            key_offset: at,
            scope,
            value: None,
            vary: None,
            tie: None,
            ratio: 1.0,
            uncertainty: None,
        };
        match value.get_ref() {
            DeValue::Table(inner) => {
                for (k, v) in inner.iter() {
                    let field = format!("{name}.{}", k.get_ref());
                    let here = k.span().start;
                    let num = |v: &Spanned<DeValue<'_>>| {
                        number(v.get_ref()).ok_or_else(|| lines.error(here, &field, "not a number"))
                    };
                    match k.get_ref().as_ref() {
                        "value" => entry.value = Some(bounded(lines, here, &field, num(v)?)?),
                        "ratio" => {
                            let ratio = num(v)?;
                            if ratio == 0.0 {
                                return Err(lines.error(
                                    here,
                                    &field,
                                    format!(
                                        "a ratio of 0 would hold {name} at 0 whatever the \
                                         other parameter does; to keep it at 0 write \
                                         {{ value = 0, vary = \"fixed\" }}"
                                    ),
                                ));
                            }
                            entry.ratio = bounded(lines, here, &field, ratio)?;
                        }
                        "uncertainty" => {
                            let u = bounded(lines, here, &field, num(v)?)?;
                            if u < 0.0 {
                                return Err(lines.error(
                                    here,
                                    &field,
                                    "an uncertainty cannot be negative",
                                ));
                            }
                            entry.uncertainty = Some(u);
                        }
                        "vary" => {
                            entry.vary = Some(
                                v.get_ref()
                                    .as_str()
                                    .ok_or_else(|| {
                                        lines.error(here, &field, "expected \"free\" or \"fixed\"")
                                    })?
                                    .to_string(),
                            )
                        }
                        "tie" => {
                            entry.tie = Some((
                                v.get_ref()
                                    .as_str()
                                    .ok_or_else(|| {
                                        lines.error(
                                            here,
                                            &field,
                                            "expected a parameter name such as \"zeta(3p)@3s.3p\"",
                                        )
                                    })?
                                    .to_string(),
                                here,
                            ))
                        }
                        _ => {
                            return Err(lines.error(
                                here,
                                &field,
                                "unknown key; a parameter table has value, vary, tie, ratio and uncertainty",
                            ));
                        }
                    }
                }
            }
            other => {
                let value = number(other).ok_or_else(|| {
                    lines.error(
                        at,
                        name,
                        "not a number; give a value in cm⁻¹ or a table { value = … }",
                    )
                })?;
                entry.value = Some(bounded(lines, at, name, value)?);
            }
        }
        out.push(entry);
    }
    Ok(())
}

/// The parameter that the tie of parameter `own` names: `name@scope`, or a short
/// name. A short name means another parameter (a parameter is never tied to
/// itself): the one of that name in `own`'s table, else the only one of that name
/// in the model (so `"zeta(3p)" = { tie = "zeta(3p)" }` in the table of 3p2 names
/// the ζ(3p) of the one other configuration with a 3p electron).
fn resolve_tie(
    text: &str,
    own: ParameterId,
    configurations: &[Configuration],
    needed: &[ParameterId],
) -> Result<ParameterId, String> {
    let (name, scope_text) = match text.split_once('@') {
        Some((n, s)) => (n, Some(s.trim())),
        None => (text, None),
    };
    let radial: Radial = name.parse()?;
    let candidates: Vec<&ParameterId> = needed
        .iter()
        .filter(|p| p.radial.same_integral(&radial))
        .filter(|p| scope_text.is_some() || **p != own)
        .collect();
    let found = match scope_text {
        Some(s) => candidates
            .iter()
            .find(|p| scope_name(p.scope, configurations) == s)
            .copied(),
        None => candidates
            .iter()
            .find(|p| p.scope == own.scope)
            .copied()
            .or(if candidates.len() == 1 {
                Some(candidates[0])
            } else {
                None
            }),
    };
    found.copied().ok_or_else(|| {
        let names: Vec<String> = candidates
            .iter()
            .map(|p| p.full_name(configurations))
            .collect();
        if names.is_empty() && scope_text.is_none() && own.radial.same_integral(&radial) {
            format!(
                "the tie '{text}' names only this parameter itself; no other configuration \
                 has {radial}"
            )
        } else if names.is_empty() {
            format!("the tie '{text}' names no parameter of the model")
        } else {
            format!(
                "the tie '{text}' is not one parameter; write one of: {}",
                names.join(", ")
            )
        }
    })
}

/// Write a model in the file format read by [`read_model`].
pub fn write_model(model: &LevelModel) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "species = \"{}\"", model.species);
    if let Some(u) = model.model_uncertainty_cm1 {
        let _ = writeln!(out, "model_uncertainty_cm1 = {}", float(u));
    }
    let write_parameter = |out: &mut String, p: &ModelParameter| {
        let name = p.id.radial.to_string();
        let key = if name == "Eav" {
            name
        } else {
            format!("\"{name}\"")
        };
        let mut fields = Vec::new();
        match p.vary {
            Vary::Tied { to, ratio } => {
                fields.push(format!("tie = \"{}\"", to.full_name(&model.configurations)));
                fields.push(format!("ratio = {}", float(ratio)));
                fields.push(format!("value = {}", float(p.value)));
            }
            Vary::Fixed => {
                fields.push(format!("value = {}", float(p.value)));
                fields.push("vary = \"fixed\"".to_string());
            }
            Vary::Free => fields.push(format!("value = {}", float(p.value))),
        }
        if let Some(u) = p.uncertainty {
            fields.push(format!("uncertainty = {}", float(u)));
        }
        if fields.len() == 1 && matches!(p.vary, Vary::Free) {
            let _ = writeln!(out, "{key} = {}", float(p.value));
        } else {
            let _ = writeln!(out, "{key} = {{ {} }}", fields.join(", "));
        }
    };
    for (c, configuration) in model.configurations.iter().enumerate() {
        let _ = writeln!(out, "\n[[configuration]]\nlabel = \"{configuration}\"");
        for p in model
            .parameters
            .iter()
            .filter(|p| p.id.scope == Scope::Configuration(c))
        {
            write_parameter(&mut out, p);
        }
    }
    for &(a, b) in &model.interactions {
        let _ = writeln!(
            out,
            "\n[[interaction]]\nbetween = [\"{}\", \"{}\"]",
            model.configurations[a], model.configurations[b]
        );
        for p in model
            .parameters
            .iter()
            .filter(|p| p.id.scope == Scope::Interaction(a, b))
        {
            write_parameter(&mut out, p);
        }
    }
    if !model.dipole.is_empty() || !model.pair_dipole.is_empty() {
        let _ = writeln!(out, "\n[dipole]");
        for (integral, value) in &model.dipole {
            let _ = writeln!(out, "\"{integral}\" = {}", float(*value));
        }
        for p in &model.pair_dipole {
            let (a, b) = p.configurations;
            let _ = writeln!(
                out,
                "\"{}@{}\" = {}",
                p.integral,
                scope_name(Scope::Interaction(a, b), &model.configurations),
                float(p.value)
            );
        }
    }
    out
}

/// A float as TOML: always with a decimal point or exponent.
fn float(value: f64) -> String {
    let text = format!("{value:?}");
    if text.contains(['.', 'e', 'E']) || !value.is_finite() {
        text
    } else {
        format!("{text}.0")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const MG: &str = r#"# test model
species = "Mg I"

[[configuration]]
label = "3s2"
Eav = 0.0

[[configuration]]
label = "3s.3p"
Eav = 30000.0
"G1(3s,3p)" = { value = 12000.0, uncertainty = 150.0 }
"zeta(3p)" = { value = 40.0, vary = "fixed" }

[[configuration]]
label = "3p2"
Eav = 60000
"F2(3p,3p)" = 30000.0
"zeta(3p)" = { tie = "zeta(3p)@3s.3p", ratio = 1.1 }

[[interaction]]
between = ["3s2", "3p2"]
"R1(3s3s,3p3p)" = 15000.0
"#;

    #[test]
    fn reads_dipole_integrals_and_the_model_uncertainty() {
        let text = MG.replace(
            "species = \"Mg I\"\n",
            "species = \"Mg I\"\nmodel_uncertainty_cm1 = 120\n",
        ) + "\n[dipole]\n\"P(3p,3s)\" = -2.6\n";
        let model = parse_model(&text, "mg.toml").unwrap().model;
        assert_eq!(model.model_uncertainty_cm1, Some(120.0));
        assert_eq!(model.dipole.len(), 1);
        assert_eq!(model.dipole[0].0.to_string(), "P(3s,3p)");
        assert_eq!(model.dipole[0].1, -2.6);
        let again = parse_model(&write_model(&model), "again.toml").unwrap();
        assert_eq!(again.model, model);
        let dipole = |line: &str| error(&(MG.to_string() + "\n[dipole]\n" + line + "\n"));
        let e = dipole("\"P(3s,3d)\" = 1.0");
        assert!(e.starts_with("m.toml:25: key 'dipole.P(3s,3d)'"), "{e}");
        let e = dipole("\"P(3s,4p)\" = 1.0");
        assert!(
            e.contains("no configuration of the model has a 4p orbital"),
            "{e}"
        );
        let e = dipole("\"P(3s,3p)\" = \"long\"");
        assert!(e.contains("not a number"), "{e}");
        // Per configuration pair (the syntax of the module documentation).
        let e = dipole("\"P(3s,3p)@3s2~3p2\" = 1.0");
        assert!(e.contains("same parity"), "{e}");
        let e = dipole("\"P(3s,3p)@3s2~4s.4p\" = 1.0");
        assert!(
            e.contains("'4s.4p' is not a configuration of the model"),
            "{e}"
        );
        let e = dipole("\"P(3s,3p)@3s2\" = 1.0");
        assert!(e.starts_with("m.toml:25: key 'dipole.P(3s,3p)@3s2'"), "{e}");
        let text =
            MG.to_string() + "\n[dipole]\n\"P(3s,3p)\" = -3.5\n\"P(3s,3p)@3p2~3s.3p\" = -3.25\n";
        let model = parse_model(&text, "mg.toml").unwrap().model;
        assert_eq!(model.pair_dipole.len(), 1);
        let pair = model.pair_dipole[0];
        assert_eq!(pair.value, -3.25);
        let label = |i: usize| model.configurations[i].to_string();
        assert_eq!(
            (label(pair.configurations.0), label(pair.configurations.1)),
            ("3s.3p".into(), "3p2".into())
        );
        let again = parse_model(&write_model(&model), "again.toml").unwrap();
        assert_eq!(again.model, model);
        let e = dipole("\"P(3s,3p)\" = 1.0\n\"P(3p,3s)\" = 1.0");
        assert!(
            // Either spelling's line: the table's keys are read in sorted order.
            (e.starts_with("m.toml:25:") || e.starts_with("m.toml:26:"))
                && e.contains("given twice"),
            "{e}"
        );
        let e = error(&MG.replace(
            "species = \"Mg I\"\n",
            "species = \"Mg I\"\nmodel_uncertainty_cm1 = -1\n",
        ));
        assert!(
            e.starts_with("m.toml:3: key 'model_uncertainty_cm1'"),
            "{e}"
        );
        // Malformed input: an uncertainty whose square overflows (common practice,
        // no source).
        let e = error(&MG.replace(
            "species = \"Mg I\"\n",
            "species = \"Mg I\"\nmodel_uncertainty_cm1 = 1e300\n",
        ));
        assert!(
            e.starts_with("m.toml:3: key 'model_uncertainty_cm1'") && e.contains("1e150"),
            "{e}"
        );
    }

    #[test]
    fn a_short_name_tie_names_another_parameter_never_itself() {
        // Regression: `"zeta(3p)" = { tie = "zeta(3p)" }` in the table of 3p2 was
        // resolved to the parameter itself (the short name looked first in its own
        // table) and refused as "tied to itself". A short name now means the one
        // other parameter of that name; ζ(3p)@3p2 = 1.1 × 40 = 44 cm⁻¹.
        let text = MG.replace("\"zeta(3p)@3s.3p\"", "\"zeta(3p)\"");
        let model = parse_model(&text, "m.toml").unwrap().model;
        let zeta = model
            .parameters
            .iter()
            .find(|p| model.full_name(&p.id) == "zeta(3p)@3p2")
            .unwrap();
        let Vary::Tied { to, ratio } = zeta.vary else {
            panic!("not tied: {:?}", zeta.vary);
        };
        assert_eq!(model.full_name(&to), "zeta(3p)@3s.3p");
        assert_eq!(ratio, 1.1);
        assert!((zeta.value - 44.0).abs() < 1e-12);
        // A short name of another parameter of the same table is that one: F4(3d)
        // = 0.63 F2(3d) within 3d2.
        let d2 = "species = \"Ti III\"\n[[configuration]]\nlabel = \"3d2\"\nEav = 0\n\
                  \"F2(3d)\" = 50000.0\n\"F4(3d)\" = { tie = \"F2(3d)\", ratio = 0.63 }\n\
                  \"zeta(3d)\" = 120.0\n";
        let model = parse_model(d2, "d2.toml").unwrap().model;
        let f4 = model
            .parameters
            .iter()
            .find(|p| model.full_name(&p.id) == "F4(3d)@3d2")
            .unwrap();
        assert!((f4.value - 31500.0).abs() < 1e-9);
        // A short name that only this parameter has is refused, saying so.
        let e = error(&MG.replace(
            "\"G1(3s,3p)\" = { value = 12000.0, uncertainty = 150.0 }",
            "\"G1(3s,3p)\" = { tie = \"G1(3s,3p)\" }",
        ));
        assert!(
            e.starts_with("m.toml:11: key 'G1(3s,3p)'") && e.contains("only this parameter itself"),
            "{e}"
        );
        // Two others of that name: the short name is ambiguous; the message lists
        // the full names to write.
        let three = MG.replace("\"zeta(3p)@3s.3p\"", "\"zeta(3p)\"")
            + "\n[[configuration]]\nlabel = \"3s.4p\"\nEav = 50000.0\n\
               \"G1(3s,4p)\" = 900.0\n\"zeta(4p)\" = 10.0\n\n[[configuration]]\n\
               label = \"3p.4s\"\nEav = 70000.0\n\"G1(3p,4s)\" = 900.0\n\"zeta(3p)\" = 45.0\n";
        let e = error(&three);
        assert!(
            e.contains("not one parameter")
                && e.contains("zeta(3p)@3s.3p")
                && e.contains("zeta(3p)@3p.4s"),
            "{e}"
        );
        // The full name, with the scope after @, is never ambiguous.
        let fixed = three.replacen("{ tie = \"zeta(3p)\"", "{ tie = \"zeta(3p)@3p.4s\"", 1);
        let model = parse_model(&fixed, "m.toml").unwrap().model;
        let zeta = model
            .parameters
            .iter()
            .find(|p| model.full_name(&p.id) == "zeta(3p)@3p2")
            .unwrap();
        assert!((zeta.value - 1.1 * 45.0).abs() < 1e-9);
    }

    #[test]
    fn the_model_of_the_readme_reads_with_every_tie_form() {
        // The README documents the format with this example; it must stay true.
        // Each tied value is ratio × the value of the parameter named (arithmetic
        // of the README's numbers).
        let readme = include_str!("../../README.md");
        let start = readme.find("```toml\n").expect("README has a TOML model") + 8;
        let length = readme[start..].find("```").expect("the TOML block ends");
        let loaded = parse_model(&readme[start..start + length], "README.md").unwrap();
        let model = &loaded.model;
        let value = |name: &str| {
            model
                .parameters
                .iter()
                .find(|p| model.full_name(&p.id) == name)
                .unwrap_or_else(|| panic!("{name} not in the model"))
                .value
        };
        assert!((value("zeta(3p)@3p2") - 1.1 * 40.0).abs() < 1e-9);
        assert!((value("F4(3d)@3d2") - 0.63 * 20000.0).abs() < 1e-9);
        assert!((value("G1(3s,4p)@3s.4p") - 0.3 * 12000.0).abs() < 1e-9);
        assert!((value("zeta(4p)@3s.4p") - 0.3 * 40.0).abs() < 1e-9);
        assert!((value("R2(3s3s,3d3d)@3s2~3d2") - 0.5 * 15000.0).abs() < 1e-9);
        assert_eq!(model.model_uncertainty_cm1, Some(300.0));
        assert_eq!(model.dipole.len(), 2);
    }

    fn error(text: &str) -> String {
        parse_model(text, "m.toml").unwrap_err().to_string()
    }

    #[test]
    fn reads_the_documented_example() {
        let loaded = parse_model(MG, "mg.toml").unwrap();
        let model = &loaded.model;
        assert_eq!(model.configurations.len(), 3);
        assert_eq!(model.interactions, vec![(0, 2)]);
        assert_eq!(model.parameters.len(), loaded.structure.parameters().len());
        let zeta = model
            .parameters
            .iter()
            .find(|p| model.full_name(&p.id) == "zeta(3p)@3p2")
            .unwrap();
        assert!((zeta.value - 44.0).abs() < 1e-12);
        assert!(matches!(zeta.vary, Vary::Tied { ratio, .. } if ratio == 1.1));
        let g = model
            .parameters
            .iter()
            .find(|p| model.full_name(&p.id) == "G1(3s,3p)@3s.3p")
            .unwrap();
        assert_eq!(g.uncertainty, Some(150.0));
        // Writing and reading back gives the same model.
        let again = parse_model(&write_model(model), "again.toml").unwrap();
        assert_eq!(&again.model, model);
    }

    #[test]
    fn errors_name_file_line_and_key() {
        let e = error(&MG.replace("\"zeta(3p)\" = { value = 40.0, vary = \"fixed\" }\n", ""));
        assert!(e.starts_with("m.toml:9: key 'zeta(3p)': missing"), "{e}");
        let e = error(&MG.replace("Eav = 60000", "Eav = \"lots\""));
        assert!(e.starts_with("m.toml:16: key 'Eav': not a number"), "{e}");
        let e = error(&MG.replace("\"F2(3p,3p)\"", "\"F4(3p)\""));
        assert!(
            e.starts_with("m.toml:17: key 'F4(3p)': not a parameter of configuration 3p2"),
            "{e}"
        );
        assert!(e.contains("F2(3p)"), "{e}");
        let e = error(&MG.replace("label = \"3p2\"", "label = \"3s3\""));
        assert!(
            e.starts_with("m.toml:15: key 'label'") && e.contains("3 electrons in a 3s subshell"),
            "{e}"
        );
        let e = error(&MG.replace("label = \"3s.3p\"", "label = \"3s.3p2\""));
        assert!(
            e.starts_with("m.toml:9: key 'label'") && e.contains("3 electrons"),
            "{e}"
        );
        let e = error(&MG.replace("vary = \"fixed\"", "vary = \"loose\""));
        assert!(e.starts_with("m.toml:12: key 'zeta(3p)'"), "{e}");
        let e = error(&MG.replace("zeta(3p)@3s.3p", "zeta(3p)@3s.4p"));
        assert!(e.starts_with("m.toml:18: key 'zeta(3p)'"), "{e}");
        let e = error(&MG.replace("\"R1(3s3s,3p3p)\"", "\"R1(3s3s,3p4p)\""));
        assert!(e.starts_with("m.toml:22: key 'R1(3s3s,3p4p)'"), "{e}");
        let e = error(&MG.replace(
            "between = [\"3s2\", \"3p2\"]",
            "between = [\"3s2\", \"3s.3p\"]",
        ));
        assert!(e.contains("opposite parity"), "{e}");
        let e = error("species = \"Mg I\"\n[[configuration]]\nlabel = \"3s2\"\nEav = [1\n");
        assert!(e.starts_with("m.toml:4"), "{e}");
        let e = error("species = \"Mg I\"\n");
        assert!(e.contains("no [[configuration]]"), "{e}");
        let e = error(&MG.replace("ratio = 1.1", "ratio = 1.1, value = 3.0"));
        assert!(e.contains("disagrees with the tie"), "{e}");
    }
}
