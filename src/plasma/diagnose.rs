//! Everything for a set of assigned lines, per element: a Boltzmann plot of each
//! stage, a Saha–Boltzmann plot of each pair of successive stages, the electron
//! density from each measured Balmer width, and the McWhirter check.

use std::collections::BTreeMap;

use serde::Serialize;

use super::lte::{DensitySource, LteCheck, lte_check};
use super::partition::SpeciesLevels;
use super::saha::{
    BoltzmannFit, LineData, Measured, PlotError, SahaBoltzmannFit, SahaMode, StagePair,
    boltzmann_fit, saha_boltzmann_fit,
};
use super::stark::{StarkDensity, WidthMeasurement, stark_density};
use crate::notation::Species;

/// A result, or the reason there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case", tag = "status")]
pub enum Outcome<T> {
    /// The result.
    Done {
        /// It.
        result: T,
    },
    /// Refused, with the reason.
    Refused {
        /// Why.
        reason: String,
    },
}

impl<T> Outcome<T> {
    /// The result, if any.
    pub fn result(&self) -> Option<&T> {
        match self {
            Outcome::Done { result } => Some(result),
            Outcome::Refused { .. } => None,
        }
    }

    fn from<E: std::fmt::Display>(result: Result<T, E>) -> Self {
        match result {
            Ok(result) => Outcome::Done { result },
            Err(e) => Outcome::Refused {
                reason: e.to_string(),
            },
        }
    }
}

/// What the diagnosis is told.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlasmaOptions {
    /// What the Saha–Boltzmann fits determine.
    pub mode: SahaMode,
    /// Instrumental FWHM, nm, for the Stark widths.
    pub instrument_fwhm_nm: Option<f64>,
    /// Temperature for the Doppler width of hydrogen, K; default: the given T, else
    /// the first Saha–Boltzmann T, else the first Boltzmann T.
    pub doppler_temperature_k: Option<f64>,
}

/// A Boltzmann plot of one stage, or why there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StageResult {
    /// The spectrum.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub species: Species,
    /// Lines of it.
    pub lines: usize,
    /// The fit.
    pub boltzmann: Outcome<BoltzmannFit>,
}

/// A Saha–Boltzmann plot of two stages, or why there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PairResult {
    /// The lower stage.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub neutral: Species,
    /// The next stage.
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub ion: Species,
    /// The fit.
    pub saha_boltzmann: Outcome<SahaBoltzmannFit>,
}

/// The results of one element.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ElementResult {
    /// Element symbol.
    pub element: &'static str,
    /// Atomic number.
    pub atomic_number: u32,
    /// One per stage with lines, lowest first.
    pub stages: Vec<StageResult>,
    /// One per pair of successive stages (or one refusal when there is one stage).
    pub pairs: Vec<PairResult>,
    /// The McWhirter check at the element's temperature, when there is one.
    pub lte: Option<LteCheck>,
}

/// The Stark density of one width, or why there is none.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WidthResult {
    /// The measurement.
    pub measurement: WidthMeasurement,
    /// The density.
    pub density: Outcome<StarkDensity>,
}

/// The whole diagnosis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diagnosis {
    /// Per element, lightest first.
    pub elements: Vec<ElementResult>,
    /// Per measured Balmer width, in input order.
    pub widths: Vec<WidthResult>,
    /// Weighted mean of the Stark densities, cm⁻³, when there are any.
    pub stark_density_cm3: Option<Measured>,
}

/// Run every fit on `lines` (rank-1 assignments with intensity and gA) and
/// `widths` (measured Balmer widths).
pub fn diagnose(
    lines: &[LineData],
    widths: &[WidthMeasurement],
    options: &PlasmaOptions,
) -> Diagnosis {
    let mut by_element: BTreeMap<u32, BTreeMap<u32, Vec<LineData>>> = BTreeMap::new();
    for line in lines {
        by_element
            .entry(line.species.atomic_number)
            .or_default()
            .entry(line.species.charge)
            .or_default()
            .push(line.clone());
    }
    let mut elements: Vec<ElementResult> = by_element
        .into_iter()
        .map(|(z, stages)| element(z, &stages, options))
        .collect();

    let doppler_t = options
        .doppler_temperature_k
        .or(match options.mode {
            SahaMode::GivenTemperature { temperature_k, .. } => Some(temperature_k),
            _ => None,
        })
        .or_else(|| first_saha(&elements).map(|f| f.temperature_k.value))
        .or_else(|| first_boltzmann(&elements).map(|f| f.temperature_k.value));
    let widths: Vec<WidthResult> = widths
        .iter()
        .map(|&measurement| {
            let density = match (options.instrument_fwhm_nm, doppler_t) {
                (None, _) => Outcome::Refused {
                    reason: "no instrumental width: give --instrument-fwhm-nm (0 for none)".into(),
                },
                (_, None) => Outcome::Refused {
                    reason: "no temperature for the Doppler width: no Boltzmann or Saha–Boltzmann \
                             temperature was found; give --doppler-temperature-k"
                        .into(),
                },
                (Some(instrument), Some(t)) => {
                    Outcome::from(stark_density(measurement, instrument, t))
                }
            };
            WidthResult {
                measurement,
                density,
            }
        })
        .collect();
    let stark_density_cm3 = weighted_mean(
        widths
            .iter()
            .filter_map(|w| w.density.result())
            .map(|d| (d.density_cm3, d.density_sigma_cm3)),
    );
    // LTE checks that had no density of their own use the Stark density, then a
    // given one.
    let fallback = stark_density_cm3
        .map(|m| (m.value, m.sigma, DensitySource::Stark))
        .or(match options.mode {
            SahaMode::GivenDensity {
                density_cm3,
                sigma_cm3,
            } => Some((density_cm3, sigma_cm3, DensitySource::Given)),
            _ => None,
        });
    for element in &mut elements {
        if let Some(check) = &mut element.lte
            && check.density_cm3.is_none()
            && let Some(density) = fallback
        {
            *check = lte_check(
                check.temperature_k,
                check.gap_species,
                check.gap_cm1,
                Some(density),
            );
        }
    }
    Diagnosis {
        elements,
        widths,
        stark_density_cm3,
    }
}

fn first_saha(elements: &[ElementResult]) -> Option<&SahaBoltzmannFit> {
    elements
        .iter()
        .flat_map(|e| &e.pairs)
        .find_map(|p| p.saha_boltzmann.result())
}

fn first_boltzmann(elements: &[ElementResult]) -> Option<&BoltzmannFit> {
    elements
        .iter()
        .flat_map(|e| &e.stages)
        .find_map(|s| s.boltzmann.result())
}

/// Inverse-variance weighted mean (plain mean when a σ is 0).
fn weighted_mean(values: impl Iterator<Item = (f64, f64)>) -> Option<Measured> {
    let values: Vec<(f64, f64)> = values.collect();
    if values.is_empty() {
        return None;
    }
    if values.iter().any(|(_, s)| s.is_nan() || *s <= 0.0) {
        let n = values.len() as f64;
        let mean = values.iter().map(|(v, _)| v).sum::<f64>() / n;
        return Some(Measured {
            value: mean,
            sigma: 0.0,
        });
    }
    let w: f64 = values.iter().map(|(_, s)| 1.0 / (s * s)).sum();
    let mean = values.iter().map(|(v, s)| v / (s * s)).sum::<f64>() / w;
    Some(Measured {
        value: mean,
        sigma: w.sqrt().recip(),
    })
}

fn element(
    atomic_number: u32,
    stages: &BTreeMap<u32, Vec<LineData>>,
    options: &PlasmaOptions,
) -> ElementResult {
    let species = |charge: u32| Species {
        atomic_number,
        charge,
    };
    let stage_results: Vec<StageResult> = stages
        .iter()
        .map(|(&charge, lines)| StageResult {
            species: species(charge),
            lines: lines.len(),
            boltzmann: Outcome::from(boltzmann_fit(species(charge), lines)),
        })
        .collect();
    let mut levels: BTreeMap<u32, Result<SpeciesLevels, String>> = BTreeMap::new();
    for &charge in stages.keys() {
        levels.insert(
            charge,
            SpeciesLevels::compiled(species(charge)).map_err(|e| e.to_string()),
        );
    }
    let mut pairs = Vec::new();
    for (&charge, neutral_lines) in stages {
        let Some(ion_lines) = stages.get(&(charge + 1)) else {
            continue;
        };
        let outcome = match (levels.get(&charge), levels.get(&(charge + 1))) {
            (Some(Ok(neutral)), Some(Ok(ion))) => Outcome::from(saha_boltzmann_fit(
                StagePair {
                    neutral,
                    ion,
                    neutral_lines,
                    ion_lines,
                },
                options.mode,
            )),
            (Some(Err(e)), _) | (_, Some(Err(e))) => Outcome::Refused { reason: e.clone() },
            _ => Outcome::Refused {
                reason: "no level table".into(),
            },
        };
        pairs.push(PairResult {
            neutral: species(charge),
            ion: species(charge + 1),
            saha_boltzmann: outcome,
        });
    }
    if pairs.is_empty()
        && let Some((&charge, _)) = stages.iter().next()
    {
        pairs.push(PairResult {
            neutral: species(charge),
            ion: species(charge + 1),
            saha_boltzmann: Outcome::from(Err::<SahaBoltzmannFit, _>(PlotError::OneStage {
                species: species(charge),
                next: species(charge + 1),
            })),
        });
    }
    let lte = lte_for(&stage_results, &pairs, stages, &levels);
    ElementResult {
        element: species(0).symbol(),
        atomic_number,
        stages: stage_results,
        pairs,
        lte,
    }
}

/// The McWhirter check: T and n_e of the first Saha–Boltzmann fit (else the first
/// Boltzmann T, without a density), and the largest gap among the levels up to the
/// highest upper level used, over the stages used.
fn lte_for(
    stages: &[StageResult],
    pairs: &[PairResult],
    lines: &BTreeMap<u32, Vec<LineData>>,
    levels: &BTreeMap<u32, Result<SpeciesLevels, String>>,
) -> Option<LteCheck> {
    let saha = pairs.iter().find_map(|p| p.saha_boltzmann.result());
    type Density = Option<(f64, f64, DensitySource)>;
    let (temperature_k, density, used): (f64, Density, Vec<u32>) = match saha {
        Some(fit) => (
            fit.temperature_k.value,
            Some((
                fit.density_cm3.value,
                fit.density_cm3.sigma,
                match fit.mode {
                    SahaMode::GivenDensity { .. } => DensitySource::Given,
                    _ => DensitySource::SahaBoltzmann,
                },
            )),
            vec![fit.neutral.charge, fit.ion.charge],
        ),
        None => {
            let stage = stages.iter().find(|s| s.boltzmann.result().is_some())?;
            let fit = stage.boltzmann.result()?;
            (fit.temperature_k.value, None, vec![stage.species.charge])
        }
    };
    let gap = used
        .iter()
        .filter_map(|charge| {
            let table = levels.get(charge)?.as_ref().ok()?;
            let top = lines
                .get(charge)?
                .iter()
                .map(|l| l.upper_energy_cm1)
                .fold(0.0, f64::max);
            table.largest_gap(top).map(|g| (table.species, g))
        })
        .max_by(|a, b| (a.1.1 - a.1.0).total_cmp(&(b.1.1 - b.1.0)))?;
    Some(lte_check(temperature_k, gap.0, gap.1, density))
}
