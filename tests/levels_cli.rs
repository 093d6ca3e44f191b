//! `termsight levels` end to end, on the example models and on broken ones.

use std::process::Command;

fn termsight(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .output()
        .unwrap()
}

const HE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/examples/level-models/he-like-1snl.toml"
);
const CA: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/examples/level-models/alkaline-earth-4s.toml"
);

#[test]
fn he_like_example_prints_the_exchange_splitting() {
    let out = termsight(&["levels", HE, "--format", "csv"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let rows: Vec<Vec<&str>> = text
        .lines()
        .skip(2)
        .map(|l| l.split(',').collect())
        .collect();
    // 1s² + 1s2s, 1s3s, 1s4s, 1s5s (2 levels each) + 10 configurations 1s nl, l > 0
    // (4 levels each): 1 + 8 + 40 = 49 (common practice, no source).
    assert_eq!(rows.len(), 49);
    let energy = |term: &str| -> f64 {
        rows.iter().find(|r| r[5] == term).unwrap()[1]
            .parse()
            .unwrap()
    };
    // E(1s2s ¹S) − E(1s2s ³S) = 2G⁰(1s,2s) = 6400 cm⁻¹ with G⁰ = 3200 in the file
    // (Condon & Shortley 1935, §7⁶).
    assert!((energy("1s.2s 1S") - energy("1s.2s 3S") - 6400.0).abs() < 1e-5);
    // ³S₁ has g = g_s = 2.00231930 (Landé formula, CODATA 2018 g_s).
    let g: f64 = rows.iter().find(|r| r[5] == "1s.2s 3S").unwrap()[8]
        .parse()
        .unwrap();
    assert!((g - 2.00231930).abs() < 1e-8);
}

#[test]
fn json_and_output_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ca.json");
    let out = termsight(&[
        "levels",
        CA,
        "--format",
        "json",
        "-o",
        path.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    let levels = json["levels"].as_array().unwrap();
    // 4s² (1) + 4s4p (4) + 4s3d (4) + 4p² (5) = 14 levels (common practice, no source).
    assert_eq!(levels.len(), 14);
    // Sorted by energy.
    let energies: Vec<f64> = levels
        .iter()
        .map(|l| l["energy_cm1"].as_f64().unwrap())
        .collect();
    assert!(energies.windows(2).all(|w| w[0] <= w[1]));
    assert_eq!(levels[0]["leading_term"], "4s2 1S");
}

#[test]
fn broken_models_name_file_line_and_key() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        (
            "species = \"He I\"\n[[configuration]]\nlabel = \"1s3\"\nEav = 0.0\n",
            ":3: key 'label'",
            "3 electrons in a 1s subshell",
        ),
        (
            "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2p\"\nEav = 1.0\n\"G1(1s,2p)\" = 3.0\n",
            ":3: key 'zeta(2p)'",
            "missing",
        ),
        (
            "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2p\"\nEav = 1.0\n\"G1(1s,2p)\" = \"x\"\n\"zeta(2p)\" = 1.0\n",
            ":5: key 'G1(1s,2p)'",
            "not a number",
        ),
        (
            "species = \"He I\"\n[[configuration]]\nlabel = \"1s.2p\"\nEav = 1.0\n\"G1(1s,2p)\" = 3.0\n\"zeta(2p)\" = 1.0\n\"F2(2p)\" = 5.0\n",
            ":7: key 'F2(2p)'",
            "not a parameter",
        ),
    ];
    for (i, (text, place, what)) in cases.iter().enumerate() {
        let path = dir.path().join(format!("bad{i}.toml"));
        std::fs::write(&path, text).unwrap();
        let out = termsight(&["levels", path.to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(2));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.contains(&format!("bad{i}.toml{place}")) && err.contains(what),
            "{err}"
        );
        assert!(out.stdout.is_empty());
    }
    let out = termsight(&["levels", "/nonexistent/model.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("/nonexistent/model.toml"));
}

// Malformed-input check (common practice, no source): a model file with a byte
// that is not UTF-8 is refused naming the file and the line of that byte.
#[test]
fn a_model_that_is_not_utf8_names_the_line() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("latin1.toml");
    let mut text = std::fs::read(HE).unwrap();
    let at = text.windows(3).position(|w| w == b"Eav").unwrap();
    let line = 1 + text[..at].iter().filter(|&&b| b == b'\n').count();
    text.insert(at, 0xff);
    std::fs::write(&path, &text).unwrap();
    let out = termsight(&["levels", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(&format!("latin1.toml:{line}: ")) && err.contains("not valid UTF-8"),
        "{err}"
    );
    assert!(out.stdout.is_empty());
}

#[test]
fn a_model_far_too_large_is_refused_at_once_with_its_size() {
    // 6h¹¹ has C(22, 11) = 705 432 Slater determinants (common practice, no
    // source); the README documents the limit of 10 000 per open subshell.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("huge.toml");
    std::fs::write(
        &path,
        "species = \"Ar I\"\n\n[[configuration]]\nlabel = \"6h11\"\nEav = 0.0\n",
    )
    .unwrap();
    let out = termsight(&["levels", path.to_str().unwrap()]);
    assert!(!out.status.success());
    let text = String::from_utf8_lossy(&out.stderr);
    assert!(text.contains("huge.toml:4"), "{text}");
    assert!(text.contains("705432"), "{text}");
    assert!(text.contains("10000"), "{text}");
    assert!(text.contains("leave the configuration out"), "{text}");
    assert!(!text.contains("panicked"), "{text}");
}

// Regression (issue 14, item 3): `levels` and `lines` once put the same level of
// the Ca-like example at 15130.186 and 16584.97 cm⁻¹ (lines counted from the lowest
// level). One scale everywhere, said in each output, and the level numbers of
// `lines` join its rows to `levels`.
#[test]
fn levels_and_lines_share_one_energy_scale_and_the_level_numbers() {
    let out = termsight(&["levels", CA, "--format", "json"]);
    assert!(out.status.success());
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(
        json["description"]
            .as_str()
            .unwrap()
            .contains("model's own scale")
    );
    let levels = json["levels"].as_array().unwrap();
    let energy_of = |number: u64| {
        levels.iter().find(|l| l["level"] == number).unwrap()["energy_cm1"]
            .as_f64()
            .unwrap()
    };
    // The lowest level of the example lies below its 4s² E_av = 0 (configuration
    // interaction with 4p² pushes it down): on the model's scale it is negative.
    assert!(energy_of(1) < 0.0);
    let out = termsight(&["lines", CA, "--format", "csv"]);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("model's own scale"), "{text}");
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let header = reader.headers().unwrap().clone();
    let column = |name: &str| header.iter().position(|h| h == name).unwrap();
    let mut rows = 0;
    for row in reader.records() {
        let row = row.unwrap();
        for side in ["lower", "upper"] {
            let number: u64 = row[column(&format!("{side}_level"))].parse().unwrap();
            let energy: f64 = row[column(&format!("{side}_energy_cm1"))].parse().unwrap();
            // `levels` rounds to 10⁻⁶ cm⁻¹.
            assert!((energy - energy_of(number)).abs() < 1e-5, "{side} {number}");
        }
        rows += 1;
    }
    assert!(rows > 0);
}
