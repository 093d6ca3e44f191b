//! `termsight lines` and `termsight assign --model` end to end, on the example
//! model and on broken ones.

use std::process::{Command, Output, Stdio};

fn termsight(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("the binary runs")
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
    assert_eq!(out.status.code(), Some(2), "expected a failure");
    String::from_utf8_lossy(&out.stderr).into_owned()
}

const CA: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/examples/level-models/alkaline-earth-4s.toml"
);

/// The CSV rows (after the `#` lines) as maps from column to text.
fn csv_rows(text: &str) -> Vec<std::collections::HashMap<String, String>> {
    let body: String = text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .map(|l| format!("{l}\n"))
        .collect();
    let mut reader = csv::Reader::from_reader(body.as_bytes());
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_string)
        .collect();
    reader
        .records()
        .map(|r| {
            let r = r.unwrap();
            header
                .iter()
                .cloned()
                .zip(r.iter().map(str::to_string))
                .collect()
        })
        .collect()
}

fn number(row: &std::collections::HashMap<String, String>, column: &str) -> f64 {
    row[column].parse().unwrap()
}

#[test]
fn example_model_lines_as_csv() {
    let text = stdout(&termsight(&["lines", CA, "--format", "csv"]));
    assert!(
        text.starts_with("# Ca I: E1 lines of the level model"),
        "{text}"
    );
    assert!(
        text.contains("Birch & Downs (1994"),
        "the air formula is named"
    );
    let rows = csv_rows(&text);
    assert_eq!(rows.len(), 27);
    for row in &rows {
        let sigma = number(row, "wavenumber_cm1");
        let lambda_vac_angstrom = 1e8 / sigma;
        let s = number(row, "strength_au");
        let gf = number(row, "gf");
        // gf = 303.756 S/λ[Å] and A = 2.0261e18 S/(g λ³[Å]) with vacuum λ (Wiese &
        // Fuhr 2009, J. Phys. Chem. Ref. Data 38, 565, eqs. 4–5).
        assert!((gf / (303.756 * s / lambda_vac_angstrom) - 1.0).abs() < 1e-5);
        let j: f64 = {
            let t = &row["upper_J"];
            match t.split_once('/') {
                Some((p, _)) => p.parse::<f64>().unwrap() / 2.0,
                None => t.parse().unwrap(),
            }
        };
        let a = number(row, "a_per_s");
        let expected_a = 2.0261e18 * s / ((2.0 * j + 1.0) * lambda_vac_angstrom.powi(3));
        assert!((a / expected_a - 1.0).abs() < 1e-4, "{a} {expected_a}");
        // Air at and above 200 nm (vacuum wavelength), common practice, no source.
        assert_eq!(row["medium"], "air");
        assert!(number(row, "wavelength_nm") < 1e7 / sigma);
        assert!(number(row, "upper_energy_cm1") > number(row, "lower_energy_cm1"));
    }
    let find = |lower: &str, upper: &str| {
        rows.iter()
            .find(|r| {
                format!(
                    "{} {} {}",
                    r["lower_configuration"], r["lower_term"], r["lower_J"]
                ) == lower
                    && format!(
                        "{} {} {}",
                        r["upper_configuration"], r["upper_term"], r["upper_J"]
                    ) == upper
            })
            .unwrap_or_else(|| panic!("no line {lower} – {upper}"))
    };
    // The resonance line is LS-allowed and strong; the intercombination line
    // 4s² ¹S₀ – 4s4p ³P°₁ is flagged and weak (its strength comes from ζ(4p) alone).
    let resonance = find("4s2 1S 0", "4s.4p 1P° 1");
    assert_eq!(resonance["flags"], "LS-allowed");
    let intercombination = find("4s2 1S 0", "4s.4p 3P° 1");
    assert_eq!(intercombination["flags"], "intercombination");
    assert!(number(intercombination, "gf") < 1e-3 * number(resonance, "gf"));
    // No 0–0 line, no |ΔJ| ≥ 2 line (Condon & Shortley 1935, ch. 9), and each
    // line joins opposite parities (Laporte's rule: odd terms carry °).
    let twice_j = |text: &str| -> i64 {
        match text.split_once('/') {
            Some((p, _)) => p.parse().unwrap(),
            None => 2 * text.parse::<i64>().unwrap(),
        }
    };
    for r in &rows {
        let (lower, upper) = (twice_j(&r["lower_J"]), twice_j(&r["upper_J"]));
        assert!((lower - upper).abs() <= 2, "ΔJ > 1: {r:?}");
        assert!(!(lower == 0 && upper == 0), "0–0: {r:?}");
        assert_ne!(
            r["lower_term"].ends_with('°'),
            r["upper_term"].ends_with('°'),
            "same parity: {r:?}"
        );
    }
    // The model has J = 2 levels (4s4p ³P°₂, 4s3d ³D₂, 4p² ¹D₂) and J = 0 ones
    // (4s² ¹S₀, 4p² ¹S₀): pairs a ΔJ = 2 filter must drop exist, so the check above
    // can fail.
    assert!(
        rows.iter()
            .any(|r| r["lower_J"] == "2" || r["upper_J"] == "2")
    );
    assert!(
        rows.iter()
            .any(|r| r["lower_J"] == "0" || r["upper_J"] == "0")
    );
}

#[test]
fn filters_select_by_wavelength_and_gf() {
    let all = csv_rows(&stdout(&termsight(&["lines", CA, "--format", "csv"])));
    let text = stdout(&termsight(&[
        "lines", CA, "--format", "csv", "--from", "400", "--to", "700", "--min-gf", "0.001",
    ]));
    assert!(
        text.contains("λ ≥ 400 nm, λ ≤ 700 nm, gf ≥ 0.001"),
        "{text}"
    );
    let some = csv_rows(&text);
    let expected = all
        .iter()
        .filter(|r| {
            let l = number(r, "wavelength_nm");
            (400.0..=700.0).contains(&l) && number(r, "gf") >= 0.001
        })
        .count();
    assert!(expected > 0 && expected < all.len());
    assert_eq!(some.len(), expected);
    // In vacuum every wavelength is 10⁷/σ.
    let vacuum = csv_rows(&stdout(&termsight(&[
        "lines", CA, "--format", "csv", "--vacuum",
    ])));
    for row in &vacuum {
        assert_eq!(row["medium"], "vacuum");
        let l = number(row, "wavelength_nm");
        assert!((l - 1e7 / number(row, "wavenumber_cm1")).abs() < 1e-9 * l);
    }
}

#[test]
fn table_and_json() {
    let table = stdout(&termsight(&["lines", CA]));
    assert!(table.contains("4s2 1S 0") && table.contains("LS-allowed"));
    assert!(table.contains("P(4s,4p) = -4.9 bohr"), "{table}");
    let json: serde_json::Value =
        serde_json::from_str(&stdout(&termsight(&["lines", CA, "--format", "json"]))).unwrap();
    assert_eq!(json["species"], "Ca I");
    let rows = json["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 27);
    assert!(rows[0]["lower"].as_str().unwrap().contains(' '));
    assert!(rows[0]["gf"].as_f64().unwrap() > 0.0);
    assert_eq!(json["dipole_integrals"][0]["name"], "P(3d,4p)");
    let help = stdout(&termsight(&["lines", "--help"]));
    for flag in [
        "--from",
        "--to",
        "--min-gf",
        "--vacuum",
        "--air-formula",
        "--format",
    ] {
        assert!(help.contains(flag), "{flag}");
    }
}

#[test]
fn broken_models_and_flags_give_clear_errors() {
    let dir = tempfile::tempdir().unwrap();
    let example = std::fs::read_to_string(CA).unwrap();
    // Without its [dipole] table the model cannot give line strengths.
    let cut = example.split("[dipole]").next().unwrap().to_string();
    let path = dir.path().join("no-dipole.toml");
    std::fs::write(&path, &cut).unwrap();
    let e = stderr(&termsight(&["lines", path.to_str().unwrap()]));
    assert!(
        e.contains("no-dipole.toml") && e.contains("P(3d,4p)"),
        "{e}"
    );
    // One parity only.
    let even = "species = \"Ca I\"\n[[configuration]]\nlabel = \"4s2\"\nEav = 0.0\n";
    let path = dir.path().join("even.toml");
    std::fs::write(&path, even).unwrap();
    let e = stderr(&termsight(&["lines", path.to_str().unwrap()]));
    assert!(
        e.contains("every configuration of the model is even"),
        "{e}"
    );
    // A bad dipole entry names its line.
    let bad = example.replace("\"P(3d,4p)\" = 2.4", "\"P(3d,4p)\" = \"big\"");
    let path = dir.path().join("bad.toml");
    std::fs::write(&path, bad).unwrap();
    let e = stderr(&termsight(&["lines", path.to_str().unwrap()]));
    assert!(
        e.contains("bad.toml:") && e.contains("dipole.P(3d,4p)"),
        "{e}"
    );
    let e = stderr(&termsight(&["lines", CA, "--from", "700", "--to", "400"]));
    assert!(e.contains("--from 700 is longer than --to 400"), "{e}");
}

#[test]
fn assign_matches_observed_lines_against_the_model() {
    // Three "observed" lines made from the model's own predictions, moved by a few
    // cm⁻¹ (a demonstration scenario of our own).
    let rows = csv_rows(&stdout(&termsight(&[
        "lines", CA, "--format", "csv", "--vacuum",
    ])));
    let label = |r: &std::collections::HashMap<String, String>, side: &str| {
        format!(
            "{} {} {}",
            r[&format!("{side}_configuration")],
            r[&format!("{side}_term")],
            r[&format!("{side}_J")]
        )
    };
    let pick = |lower: &str, upper: &str| {
        rows.iter()
            .find(|r| label(r, "lower") == lower && label(r, "upper") == upper)
            .unwrap()
    };
    let chosen = [
        pick("4s2 1S 0", "4s.4p 1P° 1"),
        pick("4s2 1S 0", "4s.4p 3P° 1"),
        pick("4s.4p 1P° 1", "4p2 1D 2"),
    ];
    let mut list = String::from("wavenumber_cm1,uncertainty_cm1\n");
    for (row, shift) in chosen.iter().zip([3.0, -4.0, 2.5]) {
        list.push_str(&format!("{},0.05\n", number(row, "wavenumber_cm1") + shift));
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("observed.csv");
    std::fs::write(&path, list).unwrap();
    let text = stdout(&termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--model",
        CA,
        "--format",
        "csv",
    ]));
    assert!(text.contains("model uncertainty 200 cm⁻¹"), "{text}");
    let assigned = csv_rows(&text);
    for (row, expected) in assigned
        .iter()
        .filter(|r| r["rank"] == "1")
        .zip(chosen.iter())
    {
        assert_eq!(label(row, "lower"), label(expected, "lower"));
        assert_eq!(label(row, "upper"), label(expected, "upper"));
        // The assign CSV gives gf to three significant digits.
        let gf = number(row, "predicted_strength");
        assert!((gf / number(expected, "gf") - 1.0).abs() < 5e-3);
    }
    assert_eq!(assigned.iter().filter(|r| r["rank"] == "1").count(), 3);
    // The intercombination line keeps its flag.
    assert!(
        assigned
            .iter()
            .any(|r| r["flags"].contains("intercombination"))
    );
    // Alongside a compiled table, and with the uncertainty from the flag.
    let text = stdout(&termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--model",
        CA,
        "--model-uncertainty",
        "50",
        "--species",
        "He I",
    ]));
    assert!(text.contains("Predictions, He I") && text.contains("model uncertainty 50 cm⁻¹"));
    assert!(text.contains("gf"), "{text}");
    // A model without model_uncertainty_cm1 needs the flag.
    let cut = std::fs::read_to_string(CA)
        .unwrap()
        .replace("model_uncertainty_cm1 = 200.0", "");
    let model = dir.path().join("model.toml");
    std::fs::write(&model, cut).unwrap();
    let e = stderr(&termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--model",
        model.to_str().unwrap(),
    ]));
    assert!(e.contains("--model-uncertainty"), "{e}");
    let e = stderr(&termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--model",
        CA,
        "--model-uncertainty=-3",
    ]));
    assert!(e.contains("--model-uncertainty"), "{e}");
}
