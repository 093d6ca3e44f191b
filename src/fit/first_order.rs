//! The simple picture of a two-electron ion, beside the fitted values.
//!
//! In first-order perturbation theory with both electrons in hydrogenic orbitals
//! of the bare nuclear charge Z, the 1s nl levels of a helium-like ion are
//!
//! ```text
//! E(1s nl ¹·³L) = −Z²/2 − Z²/(2n²) + J ± K  (hartree),
//! J = F⁰(1s, nl),  K = G^l(1s, nl)/(2l + 1),
//! ```
//!
//! singlet with +K, triplet with −K, so E(¹L) − E(³L) = 2K = 2G^l/(2l+1)
//! (Bethe & Salpeter 1957, §§24–26; Condon & Shortley 1935, §7⁶ for the G^l
//! coefficient). For 1s2s, J = 17Z/81 and K = 16Z/729 hartree; for 1s2p, J = 59Z/243
//! and K = 112Z/6561 hartree. The fitted G^l of a real ion are far smaller: the
//! outer electron sees a nucleus screened by the 1s electron, and correlation
//! changes the rest. Showing both lets the user see how far.
//!
//! The integrals are computed for any n and l (and any F^k, G^k parameter of the
//! model) from the closed-form hydrogenic orbitals of [`crate::radial::hydrogenic`]
//! by the Y^k integrals of [`crate::radial::slater`], which agree with sympy's exact
//! integrals to 10⁻¹⁰ (radial module tests).

use serde::Serialize;

use crate::radial::RadialError;
use crate::radial::grid::{GridSpec, RadialGrid};
use crate::radial::hydrogenic::hydrogenic_orbital;
use crate::radial::slater::{fk_integral, gk_integral};
use crate::structure::model::LevelModel;
use crate::structure::{Orbital, ParameterId, Radial, Scope};
use crate::units::constants::HARTREE_CM1;

/// A Slater integral of the model computed with bare-charge hydrogenic orbitals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HydrogenicIntegral {
    /// The model parameter (an F^k or G^k).
    pub parameter: ParameterId,
    /// Its hydrogenic value, cm⁻¹.
    pub value_cm1: f64,
}

/// The first-order picture of one 1s nl configuration.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OneSNl {
    /// Model index of the configuration.
    pub configuration: usize,
    /// The outer orbital nl.
    pub orbital: Orbital,
    /// Direct integral J = F⁰(1s, nl), cm⁻¹.
    pub direct_cm1: f64,
    /// Exchange integral K = G^l(1s, nl)/(2l+1), cm⁻¹.
    pub exchange_cm1: f64,
    /// The model's G^l(1s, nl) parameter of this configuration, when it has one.
    pub exchange_parameter: Option<ParameterId>,
}

/// Hydrogenic estimates for a two-electron model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SimplePicture {
    /// The bare nuclear charge Z of the species.
    pub nuclear_charge: u32,
    /// Every F^k and G^k parameter of the model, hydrogenic.
    pub integrals: Vec<HydrogenicIntegral>,
    /// Every 1s nl configuration of the model.
    pub one_s_nl: Vec<OneSNl>,
}

/// A grid wide enough for hydrogenic orbitals up to principal number `n_max` of
/// charge `z`: they decay as e^(−Zr/n), so r_max = n(60 + 6n)/Z leaves a tail below
/// 10⁻²⁰.
fn grid_for(z: f64, n_max: u32) -> Result<RadialGrid, RadialError> {
    let n = n_max.max(1) as f64;
    RadialGrid::new(
        z,
        GridSpec {
            r_max_bohr: n * (60.0 + 6.0 * n) / z,
            ..GridSpec::default()
        },
    )
}

/// F^k(a, b) or G^k(a, b) of hydrogenic orbitals of charge `z`, in cm⁻¹ (None for
/// other parameters).
pub fn hydrogenic_slater_cm1(radial: &Radial, z: f64) -> Result<Option<f64>, RadialError> {
    let (k, a, b, exchange) = match *radial {
        Radial::Direct { k, a, b } => (k, a, b, false),
        Radial::Exchange { k, a, b } => (k, a, b, true),
        _ => return Ok(None),
    };
    let grid = grid_for(z, a.n.max(b.n))?;
    let pa = hydrogenic_orbital(&grid, a.n, a.l, z)?;
    let pb = hydrogenic_orbital(&grid, b.n, b.l, z)?;
    let hartree = if exchange {
        gk_integral(&grid, k, &pa, &pb)
    } else {
        fk_integral(&grid, k, &pa, &pb)
    };
    Ok(Some(hartree * HARTREE_CM1))
}

/// The simple picture of `model` when its species has two electrons (`None`
/// otherwise): the hydrogenic value of every F^k, G^k parameter and, for every
/// 1s nl configuration, J and K.
pub fn simple_picture(model: &LevelModel) -> Result<Option<SimplePicture>, RadialError> {
    if model.species.electron_count() != 2 {
        return Ok(None);
    }
    let z = model.species.atomic_number;
    let zf = z as f64;
    let mut integrals = Vec::new();
    for parameter in &model.parameters {
        if let Some(value_cm1) = hydrogenic_slater_cm1(&parameter.id.radial, zf)? {
            integrals.push(HydrogenicIntegral {
                parameter: parameter.id,
                value_cm1,
            });
        }
    }
    let one_s = Orbital { n: 1, l: 0 };
    let mut one_s_nl = Vec::new();
    for (c, configuration) in model.configurations.iter().enumerate() {
        let shells: Vec<_> = configuration.subshells().collect();
        let [first, second] = shells.as_slice() else {
            continue;
        };
        let (inner, outer) = if (first.n, first.l) <= (second.n, second.l) {
            (first, second)
        } else {
            (second, first)
        };
        if (inner.n, inner.l, inner.occupancy) != (1, 0, 1) || outer.occupancy != 1 {
            continue;
        }
        let orbital = Orbital {
            n: outer.n,
            l: outer.l,
        };
        let (a, b) = (one_s.min(orbital), one_s.max(orbital));
        let direct = hydrogenic_slater_cm1(&Radial::Direct { k: 0, a, b }, zf)?.unwrap_or(0.0);
        let exchange_radial = Radial::Exchange { k: orbital.l, a, b };
        let g = hydrogenic_slater_cm1(&exchange_radial, zf)?.unwrap_or(0.0);
        let exchange_parameter = model
            .parameters
            .iter()
            .find(|p| p.id.scope == Scope::Configuration(c) && p.id.radial == exchange_radial)
            .map(|p| p.id);
        one_s_nl.push(OneSNl {
            configuration: c,
            orbital,
            direct_cm1: direct,
            exchange_cm1: g / (2 * orbital.l + 1) as f64,
            exchange_parameter,
        });
    }
    Ok(Some(SimplePicture {
        nuclear_charge: z,
        integrals,
        one_s_nl,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::structure::model::parse_model;

    #[test]
    fn textbook_helium_integrals() {
        // J(1s2s) = 17Z/81, K(1s2s) = 16Z/729, J(1s2p) = 59Z/243, K(1s2p) = 112Z/6561
        // hartree (Bethe & Salpeter 1957, §§24–26; sympy values in
        // tests/data/check-values/hydrogenic_slater.csv), for Z = 2; 1 hartree =
        // 219474.6313632 cm⁻¹ (CODATA 2018).
        let text = "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2s\"\nEav = 1.0\n\
                    \"G0(1s,2s)\" = 1.0\n[[configuration]]\nlabel = \"1s.2p\"\nEav = 1.0\n\
                    \"G1(1s,2p)\" = 1.0\n\"zeta(2p)\" = 1.0\n";
        let loaded = parse_model(text, "he.toml").unwrap();
        let picture = simple_picture(&loaded.model).unwrap().unwrap();
        assert_eq!(picture.nuclear_charge, 2);
        let h = HARTREE_CM1;
        let expected = [(17.0 / 81.0, 16.0 / 729.0), (59.0 / 243.0, 112.0 / 6561.0)];
        for (row, (j, k)) in picture.one_s_nl.iter().zip(expected) {
            assert!((row.direct_cm1 / (2.0 * j * h) - 1.0).abs() < 1e-10);
            assert!((row.exchange_cm1 / (2.0 * k * h) - 1.0).abs() < 1e-10);
            assert!(row.exchange_parameter.is_some());
        }
        // G¹(1s,2p) itself is 3K.
        let g1 = picture
            .integrals
            .iter()
            .find(|i| i.parameter.radial.to_string() == "G1(1s,2p)")
            .unwrap();
        assert!((g1.value_cm1 / (2.0 * 112.0 / 2187.0 * h) - 1.0).abs() < 1e-10);
    }

    #[test]
    fn every_tabulated_hydrogenic_integral_for_helium() {
        // tests/data/check-values/hydrogenic_slater.csv: exact sympy integrals,
        // coefficient × Z hartree; here Z = 2, through the parameter names.
        let text = include_str!("../../tests/data/check-values/hydrogenic_slater.csv");
        let mut checked = 0;
        for line in text.lines().skip(2) {
            let f: Vec<&str> = line.split(',').collect();
            let name = format!("{}{}({},{})", &f[0][..1], f[1], f[2], f[3]);
            let Ok(radial) = name.parse::<Radial>() else {
                continue; // F^0 and G^0 of one orbital with itself are not parameter names
            };
            let got = hydrogenic_slater_cm1(&radial, 2.0).unwrap().unwrap();
            let expected = 2.0 * f[5].parse::<f64>().unwrap() * HARTREE_CM1;
            assert!(
                (got / expected - 1.0).abs() < 1e-10,
                "{name}: {got} vs {expected}"
            );
            checked += 1;
        }
        assert!(checked >= 14, "{checked}");
    }

    #[test]
    fn only_two_electron_species_get_the_picture() {
        let text = "species = \"Li I\"\n[[configuration]]\nlabel = \"1s2.2s\"\nEav = 0.0\n";
        let loaded = parse_model(text, "li.toml").unwrap();
        assert_eq!(simple_picture(&loaded.model).unwrap(), None);
    }
}
