//! The parametric fit against published level energies and textbook formulas.
//!
//! The He I levels are those of the NIST ASD (version of March 2014) compiled into
//! `reference-levels/HeI.csv` (digit for digit from the export in
//! `../shared/reference-data/HeI-levels.csv`; every He I value there is a
//! calculated one, printed in brackets by the ASD).
//!
//! Conventions used in the derivations below (the level model's; see
//! `src/structure/hamiltonian.rs`): in a 1s nl configuration the exchange integral
//! separates the terms by E(¹L) − E(³L) = 2G^l/(2l+1) (Condon & Shortley 1935, §7⁶),
//! and E_av is the centre of gravity, E_av = [3·t + u]/4 with t and u the ³L and ¹L
//! term energies (Slater 1960, vol. 1, §14-3). Spin–orbit in s l: ³L_J lies at
//! t + (ζ/2)[J(J+1) − L(L+1) − 2]/2, so ³L_{L+1} = t + ζl/2 and ³L_{L−1} = t − ζ(l+1)/2;
//! the two J = L states mix through ⟨³L_L|ζ l·s|¹L_L⟩ = ζ√(l(l+1))/2 (Edmonds 1957,
//! eq. 7.1.6; for l = 1 it is the ζ/√2 of the s.p matrix in
//! ../shared/check-values/intermediate_coupling.csv, sympy), so ¹L_L is the upper
//! eigenvalue of [[t − ζ/2, c], [c, u]], c = ζ√(l(l+1))/2.

use termsight::fit::{
    Convergence, FitError, FitOptions, FitResult, MatchedBy, ParameterKind, UnmatchedReason,
    fit_levels,
};
use termsight::levels::{Level, embedded_table};
use termsight::structure::model::{parse_model, write_model};

/// The compiled He I or Ne I table (NIST ASD 2014).
fn table(species: &str) -> Vec<Level> {
    embedded_table(species.parse().unwrap())
        .unwrap()
        .load()
        .unwrap()
        .levels
}

/// The levels of `all` whose labels (`configuration term J`) are listed.
fn subset(all: &[Level], labels: &[&str]) -> Vec<Level> {
    labels
        .iter()
        .map(|label| {
            let wanted = label.parse().unwrap();
            all.iter()
                .find(|l| l.label == wanted)
                .unwrap_or_else(|| panic!("no level {label}"))
                .clone()
        })
        .collect()
}

fn fit(model: &str, levels: &[Level]) -> Result<FitResult, FitError> {
    let loaded = parse_model(model, "model.toml").unwrap();
    fit_levels(
        &loaded.model,
        &loaded.structure,
        levels,
        &FitOptions::default(),
        |_| {},
    )
}

fn value(result: &FitResult, name: &str) -> f64 {
    parameter(result, name).fitted_cm1
}

fn parameter<'a>(result: &'a FitResult, name: &str) -> &'a termsight::fit::FittedParameter {
    result
        .parameters
        .iter()
        .find(|p| p.name == name)
        .unwrap_or_else(|| panic!("no parameter {name}"))
}

/// 1s², 1s2s, 1s3s, 1s2p, 1s3p, 1s3d, 1s4d, 1s7f with every parameter free, from
/// rough starting values (ζ of the wrong sign).
const HELIUM: &str = r#"species = "He I"
[[configuration]]
label = "1s2"
Eav = 100.0
[[configuration]]
label = "1s.2s"
Eav = 163000.0
"G0(1s,2s)" = 3000.0
[[configuration]]
label = "1s.3s"
Eav = 184000.0
"G0(1s,3s)" = 900.0
[[configuration]]
label = "1s.2p"
Eav = 170000.0
"G1(1s,2p)" = 3000.0
"zeta(2p)" = 1.0
[[configuration]]
label = "1s.3p"
Eav = 185900.0
"G1(1s,3p)" = 900.0
"zeta(3p)" = 0.3
[[configuration]]
label = "1s.3d"
Eav = 186100.0
"G2(1s,3d)" = 10.0
"zeta(3d)" = 0.01
[[configuration]]
label = "1s.4d"
Eav = 191450.0
"G2(1s,4d)" = 5.0
"zeta(4d)" = 0.005
[[configuration]]
label = "1s.7f"
Eav = 196071.0
"G3(1s,7f)" = 0.02
"zeta(7f)" = 0.001
"#;

#[test]
fn helium_exchange_integrals_from_a_determined_fit() {
    // Issue 5, parts 2–3: twenty free parameters, twenty levels. Of each 1s nl
    // (l > 0) term the fit gets ³L_{L+1}, ³L_{L−1} and ¹L_L; ³L_L is left out, as a
    // spectroscopist often lacks a level. With the formulas of the module comment:
    //   ζ = 2[E(³L_{L+1}) − E(³L_{L−1})]/(2l+1),  t = E(³L_{L+1}) − ζl/2,
    //   u = E(¹L) − c²/[E(¹L) − t + ζ/2],  G^l = (2l+1)(u − t)/2.
    // Energies (cm⁻¹, NIST ASD 2014 via reference-levels/HeI.csv):
    // 1s2s: G⁰ = (166277.440141 − 159855.9743297)/2 = 3210.73290565.
    // 1s3s: G⁰ = (184864.82932 − 183236.79170)/2 = 814.01881.
    // 1s2p: ³P₂ 169086.7664725, ³P₀ 169087.8308131, ¹P₁ 171134.896946:
    //   ζ = 2(169086.7664725 − 169087.8308131)/3 = −0.7095604, t = 169087.1212527,
    //   c² = ζ²/2, u = 171134.8968230463, G¹ = 3(u − t)/2 = 3071.66335551945
    //   (2G¹/3 read off ¹P₁ − t alone would give 3071.66353995: mixing moves ¹P₁ by
    //   1.2·10⁻⁴ cm⁻¹).
    // 1s3p: ³P₂ 185564.561920, ³P₀ 185564.854540, ¹P₁ 186209.364940:
    //   ζ = −0.19508, t = 185564.65946, u = 186209.36491048112, G¹ = 967.058175721683.
    // 1s3d: ³D₃ 186101.5461767, ³D₁ 186101.5928903, ¹D₂ 186104.9666893:
    //   ζ = 2(³D₃ − ³D₁)/5 = −0.01868544, t = ³D₃ − ζ = 186101.56486214, c² = 3ζ²/2,
    //   u = 186104.9665349239, G² = 5(u − t)/2 = 8.50418195976118.
    // 1s4d: ³D₃ 191444.4809292, ³D₁ 191444.5006512, ¹D₂ 191446.4557405:
    //   ζ = −0.0078888, t = 191444.488818, u = 191446.45569294483, G² = 4.91718736208658.
    // 1s7f: ³F₄ 196071.177123492, ³F₂ 196071.178729980, ¹F₃ 196071.181064965:
    //   ζ = 2(³F₄ − ³F₂)/7 = −0.000458996571, t = ³F₄ − 3ζ/2 = 196071.17781198686,
    //   c² = 3ζ², u = 196071.18085592324, G³ = 7(u − t)/2 = 0.010653777331795.
    // (Arithmetic with mpmath at 30 digits.) The fit must reproduce the levels, and
    // so these values, to its convergence: 10⁻⁶ cm⁻¹.
    let he = table("He I");
    let levels = subset(
        &he,
        &[
            "1s2 1S 0",
            "1s.2s 3S 1",
            "1s.2s 1S 0",
            "1s.3s 3S 1",
            "1s.3s 1S 0",
            "1s.2p 3P° 2",
            "1s.2p 3P° 0",
            "1s.2p 1P° 1",
            "1s.3p 3P° 2",
            "1s.3p 3P° 0",
            "1s.3p 1P° 1",
            "1s.3d 3D 3",
            "1s.3d 3D 1",
            "1s.3d 1D 2",
            "1s.4d 3D 3",
            "1s.4d 3D 1",
            "1s.4d 1D 2",
            "1s.7f 3F° 4",
            "1s.7f 3F° 2",
            "1s.7f 1F° 3",
        ],
    );
    let result = fit(HELIUM, &levels).unwrap();
    assert_eq!(result.convergence, Convergence::Converged);
    assert_eq!((result.free_parameters, result.levels.len()), (20, 20));
    assert_eq!(result.degrees_of_freedom, 0);
    assert_eq!(result.sigma_cm1, None, "no degrees of freedom, no σ");
    assert!(result.unmatched.is_empty());
    for level in &result.levels {
        assert!(
            level.difference_cm1.abs() < 1e-6,
            "{}: {}",
            level.experimental.label,
            level.difference_cm1
        );
        assert_eq!(level.matched_by, MatchedBy::Composition);
    }
    let expected = [
        ("G0(1s,2s)@1s.2s", 3210.73290565),
        ("G0(1s,3s)@1s.3s", 814.01881),
        ("G1(1s,2p)@1s.2p", 3071.66335551945),
        ("zeta(2p)@1s.2p", -0.7095604),
        ("G1(1s,3p)@1s.3p", 967.058175721683),
        ("zeta(3p)@1s.3p", -0.19508),
        ("G2(1s,3d)@1s.3d", 8.50418195976118),
        ("zeta(3d)@1s.3d", -0.01868544),
        ("G2(1s,4d)@1s.4d", 4.91718736208658),
        ("G3(1s,7f)@1s.7f", 0.010653777331795),
        ("zeta(7f)@1s.7f", -0.000458996571),
        // Centre of gravity: [3·159855.9743297 + 166277.440141]/4 = 161461.340782525.
        ("Eav@1s.2s", 161461.340782525),
        ("Eav@1s2", 0.0),
    ];
    for (name, want) in expected {
        let got = value(&result, name);
        assert!((got - want).abs() < 1e-6, "{name}: {got} vs {want}");
        // Without degrees of freedom there is no standard error to give.
        assert_eq!(parameter(&result, name).standard_error_cm1, None);
    }
    // The left-out 1s2p ³P₁ is predicted as the lower root of the J = 1 matrix:
    // ½(t − ζ/2 + u) − √[(u − t + ζ/2)²/4 + c²] = 169087.4759099463; the ASD has
    // 169086.8428979. A single ζ cannot give helium's 2³P fine structure (J = 2
    // lowest, J = 0 highest, set mostly by the spin–spin interaction, which the
    // model lacks; common practice, no source).
    let loaded = parse_model(HELIUM, "model.toml").unwrap();
    let fitted = result.fitted_model(&loaded.model);
    let structure = fitted.structure().unwrap();
    let computed = structure.levels(&fitted.values_for(&structure)).unwrap();
    let p1 = computed
        .iter()
        .find(|l| {
            l.j.twice == 2
                && structure
                    .state_label(l.block, l.composition[0].state)
                    .to_string()
                    == "1s.2p 3P°"
        })
        .unwrap();
    assert!(
        (p1.energy_cm1 - 169087.4759099463).abs() < 1e-6,
        "{}",
        p1.energy_cm1
    );
}

#[test]
fn the_fitted_model_is_written_back_and_reads_again() {
    // The written model has the fitted values: here 1s2s of He I, whose
    // G⁰ = (166277.440141 − 159855.9743297)/2 by E(¹S) − E(³S) = 2G⁰ (Condon &
    // Shortley 1935, §7⁶). Two levels, two free parameters: a determined fit has no
    // standard errors, so the old uncertainty of G⁰ is removed, not kept.
    let model = "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2s\"\n\
                 Eav = 160000.0\n\"G0(1s,2s)\" = { value = 3000.0, uncertainty = 500.0 }\n";
    let levels = subset(&table("He I"), &["1s.2s 3S 1", "1s.2s 1S 0"]);
    let result = fit(model, &levels).unwrap();
    let loaded = parse_model(model, "model.toml").unwrap();
    let text = write_model(&result.fitted_model(&loaded.model));
    let again = parse_model(&text, "fitted.toml").unwrap();
    let g = again
        .model
        .parameters
        .iter()
        .find(|p| p.id.radial.to_string() == "G0(1s,2s)")
        .unwrap();
    assert!((g.value - 3210.73290565).abs() < 1e-6);
    assert_eq!(g.uncertainty, None);
}

#[test]
fn a_tied_group_moves_as_one() {
    // G⁰(1s,3s) tied to G⁰(1s,2s) with the ratio r = 0.25 (our choice). Four levels
    // (³S₁ and ¹S₀ of each), three free parameters: E_av of each configuration and
    // G = G⁰(1s,2s). With Δ_n = E(¹S) − E(³S) = 2G⁰(1s,ns) (Condon & Shortley 1935,
    // §7⁶) and each E_av free, the residuals are ±(Δ₂/2 − G) and ±(Δ₃/2 − rG), so
    // least squares gives G = (Δ₂/2 + rΔ₃/2)/(1 + r²), s² = 2[(Δ₂/2 − G)² +
    // (Δ₃/2 − rG)²]/ν with ν = 1, and var(G) = s²/[2(1 + r²)] (the G column, after
    // the E_av columns are projected out, has squared length 2 + 2r²; linear least
    // squares, e.g. Bevington & Robinson 2003, §7.2).
    let model = r#"species = "He I"
[[configuration]]
label = "1s.2s"
Eav = 163000.0
"G0(1s,2s)" = 3000.0
[[configuration]]
label = "1s.3s"
Eav = 184000.0
"G0(1s,3s)" = { tie = "G0(1s,2s)", ratio = 0.25 }
"#;
    let he = table("He I");
    let levels = subset(
        &he,
        &["1s.2s 3S 1", "1s.2s 1S 0", "1s.3s 3S 1", "1s.3s 1S 0"],
    );
    let result = fit(model, &levels).unwrap();
    let d2: f64 = 166277.440141 - 159855.9743297;
    let d3: f64 = 184864.82932 - 183236.79170;
    let r: f64 = 0.25;
    let g = (d2 / 2.0 + r * d3 / 2.0) / (1.0 + r * r);
    let s2 = 2.0 * ((d2 / 2.0 - g).powi(2) + (d3 / 2.0 - r * g).powi(2));
    let error = (s2 / (2.0 * (1.0 + r * r))).sqrt();
    assert_eq!((result.free_parameters, result.degrees_of_freedom), (3, 1));
    let leader = parameter(&result, "G0(1s,2s)@1s.2s");
    let tied = parameter(&result, "G0(1s,3s)@1s.3s");
    assert!(
        (leader.fitted_cm1 - g).abs() < 1e-6,
        "{} vs {g}",
        leader.fitted_cm1
    );
    assert!((tied.fitted_cm1 - r * g).abs() < 1e-6);
    assert_eq!(
        tied.kind,
        ParameterKind::Tied {
            to: "G0(1s,2s)@1s.2s".into(),
            ratio: 0.25
        }
    );
    let se = leader.standard_error_cm1.unwrap();
    assert!((se / error - 1.0).abs() < 1e-8, "{se} vs {error}");
    assert!((tied.standard_error_cm1.unwrap() - r * se).abs() < 1e-9);
    // σ = s with equal weights.
    assert!((result.sigma_cm1.unwrap() - s2.sqrt()).abs() < 1e-6);
    // The written model carries the standard errors as uncertainties, the tie kept.
    let loaded = parse_model(model, "model.toml").unwrap();
    let again = parse_model(
        &write_model(&result.fitted_model(&loaded.model)),
        "fitted.toml",
    )
    .unwrap()
    .model;
    let g3 = again
        .parameters
        .iter()
        .find(|p| p.id.radial.to_string() == "G0(1s,3s)")
        .unwrap();
    assert!((g3.value - r * g).abs() < 1e-6);
    assert!((g3.uncertainty.unwrap() - r * se).abs() < 1e-9);
    assert!(
        matches!(g3.vary, termsight::structure::model::Vary::Tied { ratio, .. } if ratio == 0.25)
    );
}

#[test]
fn a_fixed_parameter_stays_and_the_rest_fit_around_it() {
    // 1s2p with ζ(2p) fixed at 0 (no fine structure) and all four levels: E_av and
    // G¹ free. Each ³P level is E_av − G¹/6 and ¹P₁ is E_av + G¹/2 (2G¹/3 apart about
    // the centre of gravity, see the module comment), so least squares puts
    // E_av − G¹/6 at the mean m of the three ³P levels and E_av + G¹/2 on ¹P₁:
    // G¹ = 3[E(¹P₁) − m]/2. The two columns (1,1,1,1) and (−⅙,−⅙,−⅙,½) are
    // orthogonal, so var(G¹) = s²/(3·(1/36) + 1/4) = 3s², with
    // s² = Σ_J [E(³P_J) − m]²/2 (ν = 4 − 2); the correlation is 0.
    let model = r#"species = "He I"
[[configuration]]
label = "1s.2p"
Eav = 170000.0
"G1(1s,2p)" = 3000.0
"zeta(2p)" = { value = 0.0, vary = "fixed" }
"#;
    let he = table("He I");
    let levels = subset(
        &he,
        &["1s.2p 3P° 2", "1s.2p 3P° 1", "1s.2p 3P° 0", "1s.2p 1P° 1"],
    );
    let result = fit(model, &levels).unwrap();
    let triplet = [169086.7664725, 169086.8428979, 169087.8308131];
    let m = triplet.iter().sum::<f64>() / 3.0;
    let g = 1.5 * (171134.896946 - m);
    let s2 = triplet.iter().map(|e| (e - m).powi(2)).sum::<f64>() / 2.0;
    let zeta = parameter(&result, "zeta(2p)@1s.2p");
    assert_eq!(
        (zeta.fitted_cm1, zeta.kind.clone()),
        (0.0, ParameterKind::Fixed)
    );
    assert_eq!(zeta.standard_error_cm1, None);
    let g1 = parameter(&result, "G1(1s,2p)@1s.2p");
    assert!((g1.fitted_cm1 - g).abs() < 1e-6, "{} vs {g}", g1.fitted_cm1);
    assert!((g1.standard_error_cm1.unwrap() / (3.0 * s2).sqrt() - 1.0).abs() < 1e-8);
    assert_eq!(result.degrees_of_freedom, 2);
    assert!(result.correlation.matrix[0][1].abs() < 1e-9);
    assert!(result.strong_correlations().is_empty());
}

#[test]
fn triplet_levels_alone_cannot_separate_eav_and_g() {
    // Issue 5, part 3: with ζ fixed every ³P level of 1s2p is E_av − G¹/6 (module
    // comment), so the three ³P levels fix that combination only. The message must
    // name both parameters and the direction ΔE_av = ΔG¹/6 that changes nothing.
    let model = r#"species = "He I"
[[configuration]]
label = "1s.2p"
Eav = 170000.0
"G1(1s,2p)" = 3000.0
"zeta(2p)" = { value = 0.0, vary = "fixed" }
"#;
    let levels = subset(
        &table("He I"),
        &["1s.2p 3P° 2", "1s.2p 3P° 1", "1s.2p 3P° 0"],
    );
    let error = fit(model, &levels).unwrap_err();
    let FitError::Undetermined { combinations } = &error else {
        panic!("{error}");
    };
    let combination = &combinations[0];
    let share = |name: &str| combination.iter().find(|(n, _)| n == name).unwrap().1;
    assert!((share("Eav@1s.2p") / share("G1(1s,2p)@1s.2p") - 1.0 / 6.0).abs() < 1e-9);
    let text = error.to_string();
    assert!(
        text.contains("Eav@1s.2p") && text.contains("G1(1s,2p)@1s.2p") && !text.contains("NaN"),
        "{text}"
    );
}

#[test]
fn too_few_levels_and_parameters_without_levels_are_named() {
    // 1s2p with three free parameters and two levels: not enough (a count, no source
    // needed). And a configuration with no level in the table (1s6f: the ASD 2014
    // export has no 1s6f level) leaves its parameters without effect.
    let model = r#"species = "He I"
[[configuration]]
label = "1s.2p"
Eav = 170000.0
"G1(1s,2p)" = 3000.0
"zeta(2p)" = 1.0
"#;
    let he = table("He I");
    let levels = subset(&he, &["1s.2p 3P° 2", "1s.2p 1P° 1"]);
    let text = fit(model, &levels).unwrap_err().to_string();
    assert!(
        text.contains("3 free parameters but only 2 matched levels")
            && text.contains(
                "1s.2p has 3 free parameters (Eav@1s.2p, G1(1s,2p)@1s.2p, zeta(2p)@1s.2p)"
            ),
        "{text}"
    );
    let with_6f = format!(
        "{model}[[configuration]]\nlabel = \"1s.6f\"\nEav = 195200.0\n\"G3(1s,6f)\" = 0.01\n\
         \"zeta(6f)\" = {{ value = 0.0, vary = \"fixed\" }}\n"
    );
    let error = fit(&with_6f, &he).unwrap_err();
    assert_eq!(
        error,
        FitError::NoEffect {
            parameters: vec!["Eav@1s.6f".into(), "G3(1s,6f)@1s.6f".into()]
        }
    );
}

#[test]
fn neon_pair_coupled_levels_match_by_energy_order() {
    // Ne I 2p⁵3s (NIST ASD 2014, in pair coupling): four levels, matched by energy
    // order within each J. E_av, G¹(2p,3s), ζ(2p) free: one degree of freedom. The
    // fitted ζ(2p) must be close to that of the Ne⁺ 2p⁵ core, whose ²P splitting
    // 780.4 cm⁻¹ is 3ζ/2 (value from memory): ζ ≈ 520 cm⁻¹. The other levels of the
    // table (2p⁵3p, …) are not in the model: reported, not errors.
    let model = r#"species = "Ne I"
[[configuration]]
label = "2p6"
Eav = 0.0
[[configuration]]
label = "2p5.3s"
Eav = 135000.0
"G1(2p,3s)" = 1000.0
"zeta(2p)" = 400.0
"#;
    let ne = table("Ne I");
    let result = fit(model, &ne).unwrap();
    assert_eq!(result.levels.len(), 5);
    assert_eq!(result.degrees_of_freedom, 1);
    let pair: Vec<_> = result
        .levels
        .iter()
        .filter(|l| {
            l.experimental
                .label
                .configuration
                .to_string()
                .contains("3s")
        })
        .collect();
    assert_eq!(pair.len(), 4);
    assert!(pair.iter().all(|l| l.matched_by == MatchedBy::EnergyOrder));
    let zeta = value(&result, "zeta(2p)@2p5.3s");
    assert!((zeta / 520.3 - 1.0).abs() < 0.02, "ζ(2p) = {zeta}");
    assert_eq!(result.unmatched.len(), ne.len() - 5);
    assert!(
        result
            .unmatched
            .iter()
            .all(|u| u.reason == UnmatchedReason::ConfigurationNotInModel)
    );
    // The two J = 1 levels keep their energy order: 2[3/2]°1 is the lower.
    let j1: Vec<_> = pair
        .iter()
        .filter(|l| l.experimental.label.j.twice == 2)
        .collect();
    assert_eq!(j1.len(), 2);
    let (a, b) = (j1[0], j1[1]);
    assert_eq!(
        a.experimental.energy_cm1 < b.experimental.energy_cm1,
        a.calculated_cm1 < b.calculated_cm1
    );
}
