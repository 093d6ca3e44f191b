//! `termsight fit` end to end: the example model against the compiled He I table,
//! the files it writes, and its error messages.

use std::path::Path;
use std::process::{Command, Output};

fn termsight(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .output()
        .unwrap()
}

fn stdout(out: &Output) -> String {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout.clone()).unwrap()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

const EXAMPLE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/examples/level-models/he-1snl-fit.toml"
);

/// 1 hartree in cm⁻¹ (CODATA 2018).
const HARTREE_CM1: f64 = 219474.6313632;

#[test]
fn example_fit_reports_parameters_levels_and_the_simple_picture() {
    let out = termsight(&["fit", EXAMPLE, "--species", "He I", "--format", "json"]);
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    // 12 configurations: 1 + 4·2 + 3·3 + 1 (1s4p: E_av only) + 3·3 = 28 free
    // parameters; levels: 1 + 4·2 + 3·4 + 1 + 3·4 = 34 (the compiled table has only
    // ¹P₁ of 1s4p); ν = 6.
    assert_eq!(json["free_parameters"], 28);
    assert_eq!(json["matched_levels"], 34);
    assert_eq!(json["degrees_of_freedom"], 6);
    assert_eq!(json["convergence"], "converged");
    assert!(json["sigma_cm1"].as_f64().unwrap() > 0.0);
    let matrix = json["correlation"]["matrix"].as_array().unwrap();
    assert_eq!(matrix.len(), 28);
    // The shape of any correlation matrix: symmetric, |ρ| ≤ 1 off the diagonal
    // (Cauchy–Schwarz; common practice, no source).
    for (i, row) in matrix.iter().enumerate() {
        let row = row.as_array().unwrap();
        assert_eq!(row.len(), 28);
        for (j, value) in row.iter().enumerate() {
            let rho = value.as_f64().unwrap();
            let mirror = matrix[j][i].as_f64().unwrap();
            assert!(
                (rho - mirror).abs() < 1e-12,
                "ρ[{i}][{j}] = {rho}, ρ[{j}][{i}] = {mirror}"
            );
            if i != j {
                assert!(rho.abs() <= 1.0 + 1e-12, "ρ[{i}][{j}] = {rho}");
            }
        }
    }
    // Values known from outside: the two levels of 1s2s depend on E_av and G⁰ of
    // 1s2s only, and nothing else depends on those two. With E_av the centre of
    // gravity (weights 2J + 1) and ¹S − ³S = 2G⁰, E(³S) = E_av − G⁰/2 and E(¹S) =
    // E_av + 3G⁰/2 (Cowan 1981, The Theory of Atomic Structure and Spectra, ch. 6,
    // from memory; the centre of gravity follows from the weights alone). With equal
    // weights JᵀJ = [[2, 1], [1, 5/2]], so
    // ρ(E_av, G⁰) = −1/√(2·5/2) = −1/√5, and both are uncorrelated with every other
    // parameter.
    let names: Vec<&str> = json["correlation"]["parameters"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    let at = |name: &str| names.iter().position(|n| *n == name).unwrap();
    let (eav, g0) = (at("Eav@1s.2s"), at("G0(1s,2s)@1s.2s"));
    let rho = matrix[eav][g0].as_f64().unwrap();
    assert!(
        (rho + 1.0 / 5f64.sqrt()).abs() < 1e-9,
        "ρ(E_av, G⁰) of 1s2s = {rho}"
    );
    for other in (0..names.len()).filter(|&o| o != eav && o != g0) {
        for p in [eav, g0] {
            let rho = matrix[p][other].as_f64().unwrap();
            assert!(
                rho.abs() < 1e-6,
                "ρ({}, {}) = {rho}",
                names[p],
                names[other]
            );
        }
    }
    // The 101 − 34 other He I levels (n > 5, 1s4f) are reported, not fitted.
    assert_eq!(json["unmatched_levels"].as_array().unwrap().len(), 67);
    // 1s2s is alone in its two levels and two parameters, so G⁰(1s,2s) =
    // [E(¹S) − E(³S)]/2 (Condon & Shortley 1935, §7⁶; NIST ASD 2014 energies).
    let parameters = json["parameters"].as_array().unwrap();
    let g0 = parameters
        .iter()
        .find(|p| p["name"] == "G0(1s,2s)@1s.2s")
        .unwrap();
    let expected = (166277.440141 - 159855.9743297) / 2.0;
    assert!((g0["fitted_cm1"].as_f64().unwrap() - expected).abs() < 1e-6);
    assert!(g0["standard_error_cm1"].as_f64().unwrap() > 0.0);
    // Beside it the first-order value: G⁰(1s,2s) = K(1s2s) = 16Z/729 hartree with
    // Z = 2 (Bethe & Salpeter 1957, §§24–26; tests/data/check-values, sympy).
    let hydrogenic = g0["hydrogenic_cm1"].as_f64().unwrap();
    assert!((hydrogenic / (32.0 / 729.0 * HARTREE_CM1) - 1.0).abs() < 1e-9);
    let picture = &json["simple_picture"];
    assert_eq!(picture["nuclear_charge"], 2);
    let p2 = picture["one_s_nl"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["configuration"] == "1s.2p")
        .unwrap();
    // J(1s2p) = 59Z/243, K(1s2p) = 112Z/6561 hartree (same sources).
    assert!(
        (p2["direct_j_cm1"].as_f64().unwrap() / (118.0 / 243.0 * HARTREE_CM1) - 1.0).abs() < 1e-9
    );
    assert!(
        (p2["exchange_k_cm1"].as_f64().unwrap() / (224.0 / 6561.0 * HARTREE_CM1) - 1.0).abs()
            < 1e-9
    );
    // The tied 1s4p exchange integral is 0.42 × the 1s3p one, its error likewise.
    let value = |name: &str, key: &str| {
        parameters.iter().find(|p| p["name"] == name).unwrap()[key]
            .as_f64()
            .unwrap()
    };
    assert!(
        (value("G1(1s,4p)@1s.4p", "fitted_cm1") - 0.42 * value("G1(1s,3p)@1s.3p", "fitted_cm1"))
            .abs()
            < 1e-9
    );
    assert!(
        (value("G1(1s,4p)@1s.4p", "standard_error_cm1")
            - 0.42 * value("G1(1s,3p)@1s.3p", "standard_error_cm1"))
        .abs()
            < 1e-12
    );

    // The terminal table says the same in fewer digits, within 120 columns.
    let table = stdout(&termsight(&["fit", EXAMPLE, "--species", "He I"]));
    assert!(table.contains("6 degrees of freedom"), "{table}");
    assert!(table.contains("hydrogenic") && table.contains("First-order picture"));
    assert!(table.contains("1s.2s 3S 1") && table.contains("configurations not in the model"));
    assert!(table.lines().all(|l| l.chars().count() <= 120), "{table}");
}

#[test]
fn the_fitted_model_is_written_and_can_be_fitted_again() {
    let dir = tempfile::tempdir().unwrap();
    let model_out = dir.path().join("fitted.toml");
    let report = dir.path().join("report.json");
    let out = termsight(&[
        "fit",
        EXAMPLE,
        "--species",
        "He I",
        "--format",
        "json",
        "--output",
        report.to_str().unwrap(),
        "--model-out",
        model_out.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(out.stdout.is_empty());
    let text = std::fs::read_to_string(&model_out).unwrap();
    assert!(text.starts_with("# Fitted by termsight fit"), "{text}");
    assert!(text.contains("uncertainty = "), "{text}");
    assert!(text.contains("tie = \"G1(1s,3p)@1s.3p\""), "{text}");
    // Fitting the fitted model again starts at the minimum: nothing moves.
    let again: serde_json::Value = serde_json::from_str(&stdout(&termsight(&[
        "fit",
        model_out.to_str().unwrap(),
        "--species",
        "He I",
        "--format",
        "json",
    ])))
    .unwrap();
    let first: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&report).unwrap()).unwrap();
    let sigma = |j: &serde_json::Value| j["sigma_cm1"].as_f64().unwrap();
    assert!((sigma(&again) - sigma(&first)).abs() < 1e-9);
}

/// Write a file into `dir` and return its path as text.
fn write(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

const HEADER: &str = "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n";

#[test]
fn an_ill_posed_level_set_is_refused_with_the_parameters_named() {
    // Only ³P levels of 1s2p with ζ fixed: each is E_av − G¹/6 (E_av the centre of
    // gravity; Condon & Shortley 1935, §7⁶), so E_av and G¹ cannot be told apart.
    let dir = tempfile::tempdir().unwrap();
    let model = write(
        dir.path(),
        "m.toml",
        "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2p\"\nEav = 170000.0\n\
         \"G1(1s,2p)\" = 3000.0\n\"zeta(2p)\" = { value = 0.0, vary = \"fixed\" }\n",
    );
    let levels = write(
        dir.path(),
        "l.csv",
        &format!(
            "{HEADER}He I,1s.2p,3P*,2,169086.7664725,0.0000001,ASD\n\
             He I,1s.2p,3P*,1,169086.8428979,0.0000001,ASD\n\
             He I,1s.2p,3P*,0,169087.8308131,0.0000001,ASD\n"
        ),
    );
    let model_out = dir.path().join("out.toml");
    let out = termsight(&[
        "fit",
        &model,
        "--levels",
        &levels,
        "--model-out",
        model_out.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    let message = stderr(&out);
    assert!(
        message.contains("ill-posed")
            && message.contains("Eav@1s.2p")
            && message.contains("G1(1s,2p)@1s.2p")
            && !message.contains("NaN"),
        "{message}"
    );
    assert!(!model_out.exists(), "nothing is written for a refused fit");
}

#[test]
fn input_errors_name_the_file_line_and_field() {
    let dir = tempfile::tempdir().unwrap();
    let levels = write(
        dir.path(),
        "bad.csv",
        &format!("{HEADER}He I,1s.2s,3S,1,159855.97,0.01,x\nHe I,1s.2s,1S,0,lots,0.01,x\n"),
    );
    let out = termsight(&["fit", EXAMPLE, "--levels", &levels]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("bad.csv:3: column 'energy_cm1'"),
        "{}",
        stderr(&out)
    );
    // The compiled table must be the model's species.
    let out = termsight(&["fit", EXAMPLE, "--species", "Ne I"]);
    assert!(
        stderr(&out).contains("the model is of He I"),
        "{}",
        stderr(&out)
    );
    // One of --levels and --species is needed.
    let out = termsight(&["fit", EXAMPLE]);
    assert_eq!(out.status.code(), Some(2));
    // A level table of another species only.
    let other = write(
        dir.path(),
        "ne.csv",
        &format!("{HEADER}Ne I,2s2.2p6,1S,0,0,0,x\n"),
    );
    let out = termsight(&["fit", EXAMPLE, "--levels", &other]);
    assert!(
        stderr(&out).contains("no level of He I (it has Ne I)"),
        "{}",
        stderr(&out)
    );
    // Weighting settings out of range.
    let out = termsight(&[
        "fit",
        EXAMPLE,
        "--species",
        "He I",
        "--weights",
        "uncertainty",
        "--uncertainty-floor",
        "0",
    ]);
    assert!(
        stderr(&out).contains("--uncertainty-floor"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn uncertainty_weights_report_chi_square() {
    let out = termsight(&[
        "fit",
        EXAMPLE,
        "--species",
        "He I",
        "--weights",
        "uncertainty",
        "--uncertainty-floor",
        "0.01",
        "--format",
        "json",
    ]);
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(json["weighting"]["kind"], "uncertainty");
    assert!(json["reduced_chi_square"].as_f64().unwrap() > 0.0);
    // Every He I uncertainty is far below the floor, so the weights are all
    // 1/√(u² + 0.01²) ≈ 100 (reference-levels/SOURCES.md: He I to 10⁻⁵–10⁻⁹ cm⁻¹).
    for level in json["levels"].as_array().unwrap() {
        assert!((level["weight"].as_f64().unwrap() - 100.0).abs() < 1e-3);
    }
}

// Malformed-input check (common practice, no source): a finite but absurd starting
// value (1e308) once made the residuals overflow; it is refused as the model is
// read, naming the line and key, instead of printing the minimiser's state.
#[test]
fn an_overflowing_starting_value_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(EXAMPLE).unwrap();
    let text = text.replacen("Eav = 193800.0", "Eav = 1e308", 1);
    assert!(text.contains("1e308"));
    let model = write(dir.path(), "huge.toml", &text);
    let out = termsight(&["fit", &model, "--species", "He I", "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("huge.toml:"), "{err}");
    assert!(
        err.contains("key 'Eav'") && err.contains("out of range"),
        "{err}"
    );
    assert!(!err.contains("Numerical("), "{err}");
}

// Malformed-input check (common practice, no source): an uncertainty floor whose
// square underflows (1e-300) gave a level of zero uncertainty an infinite weight and
// the fit never ended; one whose square overflows (1e300) gave every level zero
// weight. Both are refused naming the flag.
#[test]
fn an_uncertainty_floor_out_of_range_is_refused() {
    for floor in ["1e-300", "1e300"] {
        let out = termsight(&[
            "fit",
            EXAMPLE,
            "--species",
            "He I",
            "--weights",
            "uncertainty",
            "--uncertainty-floor",
            floor,
            "--quiet",
        ]);
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert!(
            stderr(&out).contains("--uncertainty-floor") && stderr(&out).contains("1e150"),
            "{}",
            stderr(&out)
        );
    }
}
