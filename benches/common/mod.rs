//! Helpers shared by the benchmarks.

use termsight::structure::{LevelStructure, Radial};

/// Invented values of realistic size (cm⁻¹) for every parameter.
pub fn values(structure: &LevelStructure) -> Vec<f64> {
    structure
        .parameters()
        .iter()
        .enumerate()
        .map(|(i, p)| match p.radial {
            Radial::Average => 20000.0 * i as f64,
            Radial::Direct { k, .. } => 90000.0 / k as f64,
            Radial::Exchange { .. } => 8000.0,
            Radial::SpinOrbit { .. } => 450.0,
            Radial::Interaction { .. } => 12000.0,
        })
        .collect()
}
