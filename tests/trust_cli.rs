//! Run as a program: no silent wrong result, no lost file, clear words for odd
//! input (issue 14), and the promises of the README that had no test.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

fn termsight(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("the binary runs")
}

fn stdout(out: &Output) -> String {
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

fn example_lines() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/he-ne-teaching-tube/lines.csv")
}

fn example_model(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("examples/level-models")
        .join(name)
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn s(path: &Path) -> &str {
    path.to_str().unwrap()
}

/// The rows of a CSV document (`#` lines skipped) as maps from column to text.
fn csv_rows(text: &str) -> Vec<std::collections::HashMap<String, String>> {
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .flexible(false)
        .from_reader(text.as_bytes());
    let header = reader.headers().unwrap().clone();
    reader
        .records()
        .map(|r| {
            let r = r.unwrap();
            header
                .iter()
                .map(str::to_string)
                .zip(r.iter().map(str::to_string))
                .collect()
        })
        .collect()
}

fn number(row: &std::collections::HashMap<String, String>, column: &str) -> f64 {
    row[column]
        .parse()
        .unwrap_or_else(|_| panic!("{column}: {:?}", row[column]))
}

/// The example assigned against the tube's own spectra, as CSV in `dir`.
fn assigned_example(dir: &Path) -> PathBuf {
    let path = dir.join("assigned.csv");
    let out = termsight(&[
        "assign",
        s(&example_lines()),
        "--species",
        "He I",
        "--species",
        "Ne I",
        "--species",
        "H I",
        // Ranked by position alone, every H I line of the tube is a blend of its
        // fine-structure components (the intensity-aware ranking declares blends only
        // between components of comparable predicted intensity).
        "--position-only",
        "--format",
        "csv",
        "-o",
        s(&path),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    path
}

// ---- Lost or clobbered files (issue 14, items 7–9) ----
// Common practice, no source: a tool must not destroy its own input, nor keep one
// of two outputs that share a file, and must name the path the user gave.

#[test]
fn an_output_onto_an_input_is_refused_and_the_input_kept() {
    let dir = tempfile::tempdir().unwrap();
    let lines = write(
        dir.path(),
        "lines.csv",
        &std::fs::read_to_string(example_lines()).unwrap(),
    );
    let before = std::fs::read(&lines).unwrap();
    let model = write(
        dir.path(),
        "model.toml",
        &std::fs::read_to_string(example_model("alkaline-earth-4s.toml")).unwrap(),
    );
    let model_before = std::fs::read(&model).unwrap();
    let assigned = assigned_example(dir.path());
    let assigned_before = std::fs::read(&assigned).unwrap();
    // The same file by other spellings too: ./x and a symbolic link.
    let dotted = dir.path().join(".").join("lines.csv");
    let runs: Vec<Vec<&str>> = vec![
        vec!["assign", s(&lines), "-o", s(&lines)],
        vec!["assign", s(&lines), "--species", "He I", "-o", s(&dotted)],
        vec!["optimize", s(&assigned), "-o", s(&assigned)],
        vec!["optimize", s(&assigned), "--lines-out", s(&assigned)],
        vec!["levels", s(&model), "-o", s(&model)],
        vec!["lines", s(&model), "-o", s(&model)],
    ];
    for args in &runs {
        let out = termsight(args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let err = stderr(&out);
        assert!(err.contains("--overwrite-input"), "{args:?}: {err}");
    }
    assert_eq!(std::fs::read(&lines).unwrap(), before);
    assert_eq!(std::fs::read(&model).unwrap(), model_before);
    assert_eq!(std::fs::read(&assigned).unwrap(), assigned_before);
    #[cfg(unix)]
    {
        let link = dir.path().join("link.toml");
        std::os::unix::fs::symlink(&model, &link).unwrap();
        let out = termsight(&["levels", s(&model), "-o", s(&link)]);
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert_eq!(std::fs::read(&model).unwrap(), model_before);
    }
    // Asked for, the input is replaced by the output, whole.
    let out = termsight(&["levels", s(&model), "-o", s(&model), "--overwrite-input"]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(
        std::fs::read_to_string(&model)
            .unwrap()
            .starts_with("Ca I: 14 levels")
    );
}

#[test]
fn fit_refuses_its_model_as_model_out_and_two_outputs_on_one_file() {
    let dir = tempfile::tempdir().unwrap();
    let model = write(
        dir.path(),
        "he.toml",
        &std::fs::read_to_string(example_model("he-1snl-fit.toml")).unwrap(),
    );
    let before = std::fs::read(&model).unwrap();
    let out = termsight(&[
        "fit",
        s(&model),
        "--species",
        "He I",
        "--model-out",
        s(&model),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--model-out"), "{}", stderr(&out));
    assert_eq!(std::fs::read(&model).unwrap(), before);
    let both = dir.path().join("both.txt");
    let out = termsight(&[
        "fit",
        s(&model),
        "--species",
        "He I",
        "-o",
        s(&both),
        "--model-out",
        s(&both),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr(&out).contains("Give each output a file of its own"),
        "{}",
        stderr(&out)
    );
    assert!(!both.exists());
}

#[test]
fn optimize_refuses_two_outputs_on_one_file() {
    let dir = tempfile::tempdir().unwrap();
    let assigned = assigned_example(dir.path());
    let out_path = dir.path().join("x.csv");
    let other_spelling = dir.path().join("sub").join("..").join("x.csv");
    std::fs::create_dir(dir.path().join("sub")).unwrap();
    let out = termsight(&[
        "optimize",
        s(&assigned),
        "-o",
        s(&out_path),
        "--lines-out",
        s(&other_spelling),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--lines-out"), "{}", stderr(&out));
    assert!(!out_path.exists());
}

#[test]
fn a_missing_directory_is_named_as_the_user_gave_it() {
    let out = termsight(&[
        "levels",
        s(&example_model("alkaline-earth-4s.toml")),
        "-o",
        "/nonexistent-dir/sub/levels.txt",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("/nonexistent-dir/sub/levels.txt: "), "{err}");
    assert!(!err.contains(".tmp"), "{err}");
}

// ---- Ignored limits (item 4) ----

#[test]
fn the_evaluation_limit_holds_and_is_said() {
    let model = example_model("he-1snl-fit.toml");
    for limit in [1u64, 3] {
        let text = limit.to_string();
        let out = termsight(&[
            "fit",
            s(&model),
            "--species",
            "He I",
            "--max-evaluations",
            &text,
            "--format",
            "json",
        ]);
        assert!(out.status.success(), "{}", stderr(&out));
        let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
        assert_eq!(json["convergence"], "stopped-at-limit", "limit {limit}");
        assert!(json["evaluations"].as_u64().unwrap() <= limit, "{json}");
        assert!(
            stderr(&out).contains("stopped at the evaluation limit"),
            "{}",
            stderr(&out)
        );
        let out = termsight(&[
            "fit",
            s(&model),
            "--species",
            "He I",
            "--max-evaluations",
            &text,
        ]);
        let report = stdout(&out);
        assert!(
            report.contains("stopped at the evaluation limit"),
            "{report}"
        );
        assert!(!report.contains("Converged"), "{report}");
        // Grammar (common practice, no source): one evaluation, not "1 evaluations".
        if limit == 1 {
            assert!(report.contains("(1 evaluation of the levels"), "{report}");
        }
    }
}

// ---- Dropped without a word (item 6) ----

#[test]
fn optimize_names_the_species_and_levels_lost_to_blends() {
    let dir = tempfile::tempdir().unwrap();
    let assigned = assigned_example(dir.path());
    let out = termsight(&["optimize", s(&assigned)]);
    assert!(out.status.success(), "{}", stderr(&out));
    let text = stdout(&out);
    // Every H I line of the tube is a blend of the fine-structure components
    // (examples/he-ne-teaching-tube/README.md).
    let h = text
        .lines()
        .find(|l| l.starts_with("H I: missing from the results"))
        .unwrap_or_else(|| panic!("{text}"));
    assert!(
        h.contains("--blends widen") && h.contains("2p 2P° 3/2"),
        "{h}"
    );
    // In a file, the terminal still hears of it.
    let levels = dir.path().join("levels.csv");
    let out = termsight(&[
        "optimize",
        s(&assigned),
        "--format",
        "csv",
        "-o",
        s(&levels),
    ]);
    assert!(stderr(&out).contains("H I: missing from the results"));
    assert!(
        std::fs::read_to_string(&levels)
            .unwrap()
            .contains("# H I: missing from the results")
    );
}

#[test]
fn widened_blends_are_kept_with_their_uncertainty_multiplied() {
    let dir = tempfile::tempdir().unwrap();
    let assigned = assigned_example(dir.path());
    let input = csv_rows(&std::fs::read_to_string(&assigned).unwrap());
    let ritz = dir.path().join("ritz.csv");
    let out = termsight(&[
        "optimize",
        s(&assigned),
        "--blends",
        "widen",
        "--blend-factor",
        "3",
        "--lines-out",
        s(&ritz),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(!stdout(&out).contains("missing from the results"));
    let rows = csv_rows(&std::fs::read_to_string(&ritz).unwrap());
    let h: Vec<_> = rows.iter().filter(|r| r["species"] == "H I").collect();
    assert!(!h.is_empty());
    for row in h {
        assert!(row["flags"].contains("widened-blend"), "{row:?}");
        let given = input
            .iter()
            .find(|r| r["line"] == row["line"] && r["rank"] == "1")
            .unwrap();
        // The factor multiplies the standard uncertainty (README, `optimize`).
        let expected = 3.0 * number(given, "observed_uncertainty_cm1");
        let got = number(row, "uncertainty_cm1");
        assert!((got / expected - 1.0).abs() < 1e-2, "{got} vs {expected}");
    }
}

// ---- optimize: outliers and the reference level (README promises) ----

const CLASSIFIED_HEADER: &str = "species,lower_configuration,lower_term,lower_J,lower_energy_cm1,\
upper_configuration,upper_term,upper_J,upper_energy_cm1,observed_wavenumber_cm1,\
observed_uncertainty_cm1\n";

#[test]
fn the_outlier_flag_marks_the_line_far_from_its_ritz_value() {
    // An invented set: five measurements of one line at 1000.00 cm⁻¹ and one at
    // 1000.10, all ±0.01. The least-squares level difference is their weighted
    // mean, 1000 + 0.1/6, with standard error 0.01/√6 (Taylor 1997, An
    // Introduction to Error Analysis, §7.2). Residuals: −0.0167 (1.7σ) for the five
    // and +0.0833 (8.3σ) for the sixth: only it is beyond 3σ.
    let dir = tempfile::tempdir().unwrap();
    let mut text = CLASSIFIED_HEADER.to_string();
    for sigma in [
        "1000.00", "1000.00", "1000.00", "1000.00", "1000.00", "1000.10",
    ] {
        text.push_str(&format!(
            "He I,1s.2s,3S,1,100,1s.2p,3P°,2,1100,{sigma},0.01\n"
        ));
    }
    let input = write(dir.path(), "classified.csv", &text);
    let ritz = dir.path().join("ritz.csv");
    let out = termsight(&["optimize", s(&input), "--lines-out", s(&ritz)]);
    assert!(out.status.success(), "{}", stderr(&out));
    let rows = csv_rows(&std::fs::read_to_string(&ritz).unwrap());
    assert_eq!(rows.len(), 6);
    for (i, row) in rows.iter().enumerate() {
        assert!((number(row, "ritz_wavenumber_cm1") - (1000.0 + 0.1 / 6.0)).abs() < 1e-6);
        let u = number(row, "ritz_uncertainty_cm1");
        assert!((u / (0.01 / 6f64.sqrt()) - 1.0).abs() < 2e-3, "{u}");
        assert_eq!(row["flags"].contains("outlier"), i == 5, "{row:?}");
    }
    // A looser threshold flags nothing.
    let out = termsight(&[
        "optimize",
        s(&input),
        "--outlier-sigma",
        "9",
        "--lines-out",
        s(&ritz),
    ]);
    assert!(out.status.success());
    let rows = csv_rows(&std::fs::read_to_string(&ritz).unwrap());
    assert!(rows.iter().all(|r| !r["flags"].contains("outlier")));
}

#[test]
fn fix_level_moves_the_reference_and_the_uncertainties_with_it() {
    // Invented levels A (100), B (1100), C (3100) joined by A–B ±0.01 and B–C ±0.02.
    // Held at A, C carries both lines: u(C) = √(0.01² + 0.02²); held at B, A and C
    // carry one line each (propagation in quadrature, Taylor 1997, §3.6).
    let dir = tempfile::tempdir().unwrap();
    let text = format!(
        "{CLASSIFIED_HEADER}He I,1s.2s,3S,1,100,1s.2p,3P°,2,1100,1000.0,0.01\n\
         He I,1s.2p,3P°,2,1100,1s.3d,3D,3,3100,2000.0,0.02\n"
    );
    let input = write(dir.path(), "classified.csv", &text);
    let run = |extra: &[&str]| {
        let mut args = vec!["optimize", s(&input), "--format", "csv"];
        args.extend_from_slice(extra);
        let out = termsight(&args);
        assert!(out.status.success(), "{}", stderr(&out));
        csv_rows(&stdout(&out))
    };
    let level = |rows: &[std::collections::HashMap<String, String>], term: &str| {
        rows.iter().find(|r| r["term"] == term).unwrap().clone()
    };
    let default = run(&[]);
    assert!(level(&default, "3S")["flags"].contains("reference"));
    let c = number(&level(&default, "3D"), "uncertainty_cm1");
    assert!(
        (c - (0.01f64.powi(2) + 0.02f64.powi(2)).sqrt()).abs() < 1e-4,
        "{c}"
    );
    let fixed = run(&["--fix-level", "1s.2p 3P° 2"]);
    let b = level(&fixed, "3P°");
    assert!(b["flags"].contains("reference"), "{b:?}");
    assert_eq!(number(&b, "uncertainty_cm1"), 0.0);
    assert!((number(&b, "energy_cm1") - 1100.0).abs() < 1e-9);
    assert!((number(&level(&fixed, "3S"), "uncertainty_cm1") - 0.01).abs() < 1e-5);
    assert!((number(&level(&fixed, "3D"), "uncertainty_cm1") - 0.02).abs() < 1e-5);
    assert!((number(&level(&fixed, "3S"), "energy_cm1") - 100.0).abs() < 1e-9);
    assert!((number(&level(&fixed, "3D"), "energy_cm1") - 3100.0).abs() < 1e-9);
    let out = termsight(&["optimize", s(&input), "--fix-level", "1s.4f 3F° 3"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("1s.4f 3F° 3"), "{}", stderr(&out));
}

// ---- assign: the rule penalty, the medium and the air formula ----

#[test]
fn the_rule_penalty_ranks_the_allowed_line_first() {
    // An invented table: 1s² ¹S₀ at 0, 1s2p ¹P°₁ at 1000.00 and ³P°₁ at 1000.20 cm⁻¹.
    // A line at 1000.15 ± 0.1 is 1.5σ from the allowed line and 0.5σ from the
    // intercombination line; with the penalty P = 2 the latter counts as
    // √(0.5² + 2²) = 2.06σ and comes second (README, "How a match is made"); with
    // P = 0 it comes first.
    let dir = tempfile::tempdir().unwrap();
    let levels = write(
        dir.path(),
        "levels.csv",
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s2,1S,0,0,0,invented\n\
         He I,1s.2p,1P°,1,1000.00,0,invented\n\
         He I,1s.2p,3P°,1,1000.20,0,invented\n",
    );
    let lines = write(
        dir.path(),
        "lines.csv",
        "wavenumber_cm1,uncertainty_cm1\n1000.15,0.1\n",
    );
    let first = |penalty: &str| {
        let out = termsight(&[
            "assign",
            s(&lines),
            "--levels",
            s(&levels),
            "--rule-penalty",
            penalty,
            "--format",
            "csv",
        ]);
        assert!(out.status.success(), "{}", stderr(&out));
        let rows = csv_rows(&stdout(&out));
        assert_eq!(rows.len(), 2);
        rows.into_iter().find(|r| r["rank"] == "1").unwrap()
    };
    assert_eq!(first("2")["upper_term"], "1P°");
    let unpenalised = first("0");
    assert_eq!(unpenalised["upper_term"], "3P°");
    assert!(unpenalised["flags"].contains("intercombination"));
}

#[test]
fn medium_vacuum_and_the_ciddor_formula_reach_the_numbers() {
    let dir = tempfile::tempdir().unwrap();
    let lines = write(
        dir.path(),
        "one.csv",
        "wavelength_nm,uncertainty_nm\n500.0,0.003\n",
    );
    // In vacuum, σ = 10⁷/λ[nm] exactly.
    let out = termsight(&[
        "assign",
        s(&lines),
        "--species",
        "He I",
        "--medium",
        "vacuum",
        "--format",
        "csv",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let rows = csv_rows(&stdout(&out));
    assert_eq!(rows[0]["given_medium"], "vacuum");
    assert_eq!(number(&rows[0], "observed_wavenumber_cm1"), 20000.0);
    // In air by Ciddor (1996, Appl. Opt. 35, 1566, eq. 1, 450 ppm CO₂):
    // 10⁸(n − 1) = 5792105/(238.0185 − s²) + 167917/(57.362 − s²), s the vacuum
    // wavenumber in µm⁻¹; solved for λ_vac = n·λ_air by iteration in Python:
    // σ = 19994.422153337 cm⁻¹ for λ_air = 500 nm.
    let out = termsight(&[
        "assign",
        s(&lines),
        "--species",
        "He I",
        "--air-formula",
        "ciddor",
        "--format",
        "json",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(json["input"]["air_formula"]["name"], "ciddor");
    assert!(
        json["input"]["air_formula"]["citation"]
            .as_str()
            .unwrap()
            .starts_with("Ciddor (1996")
    );
    let sigma = json["lines"][0]["observed_wavenumber_cm1"]
        .as_f64()
        .unwrap();
    assert!((sigma - 19994.422153337).abs() < 2e-8, "{sigma}");
    // Birch & Downs gives another number at this precision (8e-6 cm⁻¹ away at
    // 500 nm; the output keeps 10⁻⁸ cm⁻¹): the flag matters.
    let out = termsight(&["assign", s(&lines), "--species", "He I", "--format", "json"]);
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    let default = json["lines"][0]["observed_wavenumber_cm1"]
        .as_f64()
        .unwrap();
    assert!((default - sigma).abs() > 1e-6, "{default} {sigma}");
}

// ---- Clear words for odd input (items 10 and 11) ----

#[test]
fn odd_line_lists_are_refused_naming_the_right_column() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        // A 10⁶ nm uncertainty on a 587 nm line once gave 16516 alternatives.
        (
            "wavelength_nm,uncertainty_nm\n587.5637,1000000\n",
            ":2: column 'uncertainty_nm'",
            "not smaller than the line's own wavenumber",
        ),
        (
            "wavenumber_cm1,uncertainty_cm1\n17000,17000\n",
            ":2: column 'uncertainty_cm1'",
            "not smaller than the line's own wavenumber",
        ),
        // 1e300 nm once blamed the uncertainty column.
        (
            "wavelength_nm,uncertainty_nm\n1e300,0.003\n",
            ":2: column 'wavelength_nm'",
            "too extreme",
        ),
    ];
    for (i, (text, place, what)) in cases.iter().enumerate() {
        let path = write(dir.path(), &format!("bad{i}.csv"), text);
        let out = termsight(&["assign", s(&path), "--species", "He I"]);
        assert_eq!(out.status.code(), Some(2), "{text}");
        let err = stderr(&out);
        assert!(
            err.contains(&format!("bad{i}.csv{place}")) && err.contains(what),
            "{err}"
        );
    }
}

#[test]
fn a_term_the_configuration_cannot_form_is_warned_about() {
    // s p forms only ¹P° and ³P° (Condon & Shortley 1935, §8¹): 1s.2p ¹D° is no level.
    let dir = tempfile::tempdir().unwrap();
    let levels = write(
        dir.path(),
        "levels.csv",
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s2,1S,0,0,0,x\n\
         He I,1s.2p,1D°,2,171134.9,0.01,x\n\
         He I,1s.2p,1P°,1,171135.9,0.01,x\n",
    );
    let lines = write(
        dir.path(),
        "l.csv",
        "wavenumber_cm1,uncertainty_cm1\n171135.9,0.1\n",
    );
    let out = termsight(&["assign", s(&lines), "--levels", s(&levels)]);
    assert!(out.status.success(), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(
        err.contains("levels.csv:3: column 'term': configuration 1s.2p cannot form the term 1D°"),
        "{err}"
    );
    assert!(!err.contains("levels.csv:4:"), "{err}");
    // And in the output's notes.
    assert!(stdout(&out).contains("1 warnings on"), "{}", stdout(&out));
}

#[test]
fn absurd_model_values_are_refused_naming_line_and_key() {
    let dir = tempfile::tempdir().unwrap();
    let base = "species = \"Mg I\"\n[[configuration]]\nlabel = \"3s.3p\"\n";
    let cases = [
        // Eav = 1e300 once printed 300 digits and scrambled the level order.
        (
            format!("{base}Eav = 1e300\n\"G1(3s,3p)\" = 6000.0\n\"zeta(3p)\" = 40.0\n"),
            ":4: key 'Eav'",
            "out of range",
        ),
        (
            format!(
                "{base}Eav = 0.0\n\"G1(3s,3p)\" = 6000.0\n\"zeta(3p)\" = {{ tie = \"G1(3s,3p)\", ratio = 0 }}\n"
            ),
            ":6: key 'zeta(3p).ratio'",
            "a ratio of 0",
        ),
    ];
    for (i, (text, place, what)) in cases.iter().enumerate() {
        let path = write(dir.path(), &format!("m{i}.toml"), text);
        let out = termsight(&["levels", s(&path)]);
        assert_eq!(out.status.code(), Some(2), "{text}");
        let err = stderr(&out);
        assert!(
            err.contains(&format!("m{i}.toml{place}")) && err.contains(what),
            "{err}"
        );
    }
}

#[test]
fn options_say_what_they_need() {
    // --model-uncertainty is the uncertainty of a model's levels: without --model
    // it means nothing.
    let lines = example_lines();
    let out = termsight(&["assign", s(&lines), "--model-uncertainty", "100"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--model <FILE>"), "{}", stderr(&out));
    // A negative uncertainty is not read as a flag.
    let out = termsight(&["assign", s(&lines), "--uncertainty", "-0.002nm"]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(
        err.contains("greater than zero") && !err.contains("unexpected argument"),
        "{err}"
    );
    // The charge is explained, not an integer range.
    for flag in [vec!["--charge=-1"], vec!["--charge", "-1"]] {
        let mut args = vec!["radial", "--element", "He", "--config", "1s2"];
        args.extend(flag);
        let out = termsight(&args);
        assert_eq!(out.status.code(), Some(2));
        let err = stderr(&out);
        assert!(
            err.contains("0 for a neutral atom") && !err.contains("4294967295"),
            "{err}"
        );
    }
    // fit names both level sources.
    let out = termsight(&["fit", s(&example_model("he-1snl-fit.toml"))]);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(
        err.contains("--levels") && err.contains("--species"),
        "{err}"
    );
}

// ---- fit: the correlation warning and optimize's level table ----

const HE_1S2S: &str = "species = \"He I\"\n\
[[configuration]]\nlabel = \"1s2\"\nEav = 0.0\n\
[[configuration]]\nlabel = \"1s.2s\"\nEav = 161000.0\n\"G0(1s,2s)\" = 3000.0\n";

#[test]
fn correlations_above_the_threshold_are_warned_about() {
    // Invented uncertainties on the NIST ASD 2014 He I energies: ¹S of 1s2s to
    // 0.01 cm⁻¹, ³S to 1 cm⁻¹. With E_av the centre of gravity, E(³S) = E_av − G⁰/2
    // and E(¹S) = E_av + 3G⁰/2 (¹S − ³S = 2G⁰; Cowan 1981, ch. 6, from memory), so
    // with weights w² = 1/(u² + floor²) the normal matrix is
    // [[w₁² + w₃², 1.5w₁² − 0.5w₃²], [·, 2.25w₁² + 0.25w₃²]] and
    // ρ = −b/√(ac) = −0.99991023 (its inverse's correlation, computed in Python).
    let dir = tempfile::tempdir().unwrap();
    let model = write(dir.path(), "he.toml", HE_1S2S);
    let levels = write(
        dir.path(),
        "levels.csv",
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s2,1S,0,0,0.01,x\n\
         He I,1s.2s,3S,1,159855.9743297,1,x\n\
         He I,1s.2s,1S,0,166277.440141,0.01,x\n",
    );
    let out = termsight(&[
        "fit",
        s(&model),
        "--levels",
        s(&levels),
        "--weights",
        "uncertainty",
        "--format",
        "json",
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let (w1, w3): (f64, f64) = (1.0 / (1e-4 + 1e-6), 1.0 / (1.0 + 1e-6));
    let expected = -(1.5 * w1 - 0.5 * w3) / ((w1 + w3) * (2.25 * w1 + 0.25 * w3)).sqrt();
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    let rho = json["correlation"]["matrix"][1][2].as_f64().unwrap();
    assert!((rho - expected).abs() < 1e-9, "{rho} vs {expected}");
    let strong = json["strong_correlations"].as_array().unwrap();
    assert_eq!(strong.len(), 1);
    let err = stderr(&out);
    assert!(
        err.contains("ρ(Eav@1s.2s, G0(1s,2s)@1s.2s) = -0.9999, above 0.95"),
        "{err}"
    );
    // Equal weights: ρ = −1/√5 (same source), below the threshold: no warning.
    let out = termsight(&["fit", s(&model), "--levels", s(&levels)]);
    assert!(out.status.success());
    assert!(stdout(&out).contains("No two free parameters are correlated above"));
}

#[test]
fn fit_reads_the_level_table_that_optimize_writes() {
    let dir = tempfile::tempdir().unwrap();
    let assigned = assigned_example(dir.path());
    let levels = dir.path().join("levels.csv");
    let out = termsight(&[
        "optimize",
        s(&assigned),
        "--format",
        "csv",
        "-o",
        s(&levels),
    ]);
    assert!(out.status.success(), "{}", stderr(&out));
    let table = csv_rows(&std::fs::read_to_string(&levels).unwrap());
    let optimized = |configuration: &str| {
        number(
            table
                .iter()
                .find(|r| r["species"] == "He I" && r["configuration"] == configuration)
                .unwrap(),
            "energy_cm1",
        )
    };
    // The singlet ¹S levels of 1s3s and 1s4s with G⁰ held fixed: E_av follows as
    // E(¹S) − 3G⁰/2 (the centre of gravity above; Cowan 1981, ch. 6, from memory).
    let model = write(
        dir.path(),
        "model.toml",
        "species = \"He I\"\n\
         [[configuration]]\nlabel = \"1s.3s\"\nEav = 184000.0\n\
         \"G0(1s,3s)\" = { value = 500.0, vary = \"fixed\" }\n\
         [[configuration]]\nlabel = \"1s.4s\"\nEav = 190000.0\n\
         \"G0(1s,4s)\" = { value = 200.0, vary = \"fixed\" }\n",
    );
    let out = termsight(&["fit", s(&model), "--levels", s(&levels), "--format", "json"]);
    assert!(out.status.success(), "{}", stderr(&out));
    let json: serde_json::Value = serde_json::from_str(&stdout(&out)).unwrap();
    assert_eq!(json["convergence"], "converged");
    let fitted = |name: &str| {
        json["parameters"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| p["name"] == name)
            .unwrap()["fitted_cm1"]
            .as_f64()
            .unwrap()
    };
    assert!((fitted("Eav@1s.3s") - (optimized("1s.3s") - 750.0)).abs() < 1e-6);
    assert!((fitted("Eav@1s.4s") - (optimized("1s.4s") - 300.0)).abs() < 1e-6);
}

#[test]
fn a_window_wider_than_every_prediction_is_warned_about() {
    // A level table of three invented levels: predictions at 1000 and 1200 cm⁻¹.
    // A line at 1100 ± 50 cm⁻¹ with K = 3 spans 950–1250 cm⁻¹: both are candidates
    // by the uncertainty alone (README, "How a match is made").
    let dir = tempfile::tempdir().unwrap();
    let levels = write(
        dir.path(),
        "levels.csv",
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s2,1S,0,0,0,invented\n\
         He I,1s.2p,1P°,1,1000,0,invented\n\
         He I,1s.3p,1P°,1,1200,0,invented\n",
    );
    let lines = write(
        dir.path(),
        "lines.csv",
        "wavenumber_cm1,uncertainty_cm1\n1100,50\n1100,10\n",
    );
    let out = termsight(&["assign", s(&lines), "--levels", s(&levels)]);
    assert!(out.status.success(), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("lines.csv:2: the uncertainty"), "{err}");
    assert!(err.contains("spans every predicted line"), "{err}");
    assert!(!err.contains("lines.csv:3:"), "{err}");
}
