//! units::air against the sympy/mpmath check table, and air↔vacuum round trips.
//!
//! Source of every value: tests/data/check-values/air_vacuum.csv, a copy of
//! shared/check-values/air_vacuum.csv, made by gen_check_values.py with mpmath at 40
//! digits from the published formulas: Edlén (1966, Metrologia 2, 71), Ciddor (1996,
//! Appl. Opt. 35, 1566, eq. 1) and Birch & Downs (1994, Metrologia 31, 315), the last in
//! the form given by Morton (2000, ApJS 130, 403). The table gives 17 significant
//! digits, so the tolerances below are set by double precision, not by the table.

use approx::assert_relative_eq;
use proptest::prelude::*;
use termsight::units::air::{air_to_vacuum_nm, vacuum_to_air_nm};
use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};

use crate::util::Table;

const TABLE: &str = "check-values/air_vacuum.csv";

/// The table's column suffix for each formula.
fn suffix(formula: AirFormula) -> &'static str {
    match formula {
        AirFormula::BirchDowns1994 => "birch_downs1994",
        AirFormula::Edlen1966 => "edlen1966",
        AirFormula::Ciddor1996 => "ciddor1996",
    }
}

/// (n − 1) is a sum of three terms of one sign, each good to an ulp: relative 1e-14
/// leaves room for the division by (b − s²).
const REFRACTIVITY_TOLERANCE: f64 = 1e-14;

/// λ_air = λ_vac/n: the relative error of n − 1 is scaled down by n − 1 ≈ 3e-4, so
/// the wavelength is good to a few ulp.
const WAVELENGTH_TOLERANCE: f64 = 2e-15;

#[test]
fn the_table_has_fifty_rows_from_200_to_2000_nm() {
    // check-values/README.md: 50 rows, λ_vac = 200 + 1800·i/49 nm.
    let table = Table::read(TABLE);
    assert_eq!(table.rows.len(), 50);
    let first = table.number(&table.rows[0], "lambda_vac_nm");
    let last = table.number(&table.rows[49], "lambda_vac_nm");
    assert_eq!((first, last), (200.0, 2000.0));
}

#[test]
fn wavenumber_column_is_the_inverse_vacuum_wavelength() {
    let table = Table::read(TABLE);
    for row in &table.rows {
        let lambda_vac = table.number(row, "lambda_vac_nm");
        let sigma_um = table.number(row, "sigma_vac_um-1");
        assert_relative_eq!(1000.0 / lambda_vac, sigma_um, max_relative = 1e-15);
        // And through the units API, in cm⁻¹ (1 µm⁻¹ = 10⁴ cm⁻¹).
        let vacuum = Wavelength {
            value: lambda_vac,
            unit: LengthUnit::Nanometre,
            medium: Medium::Vacuum,
        };
        let sigma_cm1 = vacuum.to_wavenumber_cm1(AirFormula::default()).unwrap();
        assert_relative_eq!(sigma_cm1, sigma_um * 1e4, max_relative = 1e-15);
    }
}

#[test]
fn refractivity_of_every_formula_matches_every_row() {
    let table = Table::read(TABLE);
    for formula in AirFormula::ALL {
        let column = format!("n_minus_1_{}", suffix(formula));
        for row in &table.rows {
            let lambda_vac = table.number(row, "lambda_vac_nm");
            assert_relative_eq!(
                formula.refractivity(lambda_vac),
                table.number(row, &column),
                max_relative = REFRACTIVITY_TOLERANCE
            );
        }
    }
}

#[test]
fn vacuum_to_air_matches_every_row_of_every_formula() {
    let table = Table::read(TABLE);
    for formula in AirFormula::ALL {
        let column = format!("lambda_air_nm_{}", suffix(formula));
        for row in &table.rows {
            let lambda_vac = table.number(row, "lambda_vac_nm");
            let air = vacuum_to_air_nm(lambda_vac, formula).unwrap();
            assert_relative_eq!(
                air,
                table.number(row, &column),
                max_relative = WAVELENGTH_TOLERANCE
            );
        }
    }
}

#[test]
fn air_to_vacuum_recovers_every_row_of_every_formula() {
    let table = Table::read(TABLE);
    for formula in AirFormula::ALL {
        let column = format!("lambda_air_nm_{}", suffix(formula));
        for row in &table.rows {
            let lambda_air = table.number(row, &column);
            let vacuum = air_to_vacuum_nm(lambda_air, formula).unwrap();
            assert_relative_eq!(
                vacuum,
                table.number(row, "lambda_vac_nm"),
                max_relative = WAVELENGTH_TOLERANCE
            );
            // The same through the units API, given in Å: σ = 1/λ_vac.
            let given = Wavelength {
                value: lambda_air * 10.0,
                unit: LengthUnit::Angstrom,
                medium: Medium::Air,
            };
            let sigma = given.to_wavenumber_cm1(formula).unwrap();
            assert_relative_eq!(
                sigma,
                table.number(row, "sigma_vac_um-1") * 1e4,
                max_relative = WAVELENGTH_TOLERANCE
            );
        }
    }
}

#[test]
fn the_default_formula_is_birch_and_downs_as_given_by_morton() {
    // DESIGN.md and src/units/air.rs: the default is Birch & Downs (1994) in Morton's
    // (2000) form; its columns in the table are the `birch_downs1994` ones.
    assert_eq!(AirFormula::default(), AirFormula::BirchDowns1994);
    let table = Table::read(TABLE);
    for row in &table.rows {
        let lambda_vac = table.number(row, "lambda_vac_nm");
        let air = Wavelength::from_wavenumber_cm1(
            1e7 / lambda_vac,
            LengthUnit::Nanometre,
            Medium::Air,
            AirFormula::default(),
        )
        .unwrap();
        assert_relative_eq!(
            air.value,
            table.number(row, "lambda_air_nm_birch_downs1994"),
            max_relative = 4.0 * WAVELENGTH_TOLERANCE
        );
    }
}

proptest! {
    // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
    #![proptest_config(ProptestConfig { cases: 512, rng_seed: proptest::test_runner::RngSeed::Fixed(18), ..ProptestConfig::default() })]

    #[test]
    fn air_to_vacuum_to_air_is_the_identity(
        // Logarithmically spread over 200 nm – 20 µm.
        log_lambda in (200.0f64).ln()..(20_000.0f64).ln(),
        formula in prop::sample::select(AirFormula::ALL.to_vec()),
    ) {
        let lambda_air = log_lambda.exp();
        let vacuum = air_to_vacuum_nm(lambda_air, formula).unwrap();
        let back = vacuum_to_air_nm(vacuum, formula).unwrap();
        // 1e-9 relative is 0.00002 cm⁻¹ at 500 nm, far below any measured uncertainty;
        // the iteration itself stops at a relative change of 1e-15.
        prop_assert!(((back - lambda_air) / lambda_air).abs() < 1e-9);
        prop_assert!(vacuum > lambda_air);
    }

    #[test]
    fn vacuum_to_air_to_vacuum_is_the_identity(
        log_lambda in (200.0f64).ln()..(20_000.0f64).ln(),
        formula in prop::sample::select(AirFormula::ALL.to_vec()),
    ) {
        let lambda_vac = log_lambda.exp();
        let air = vacuum_to_air_nm(lambda_vac, formula).unwrap();
        let back = air_to_vacuum_nm(air, formula).unwrap();
        prop_assert!(((back - lambda_vac) / lambda_vac).abs() < 1e-9);
    }
}
