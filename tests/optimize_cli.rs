//! `termsight optimize` run as a program: the example's assignments through to a
//! level table that `termsight assign --levels` reads back, and bad input.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use termsight::levels::{EMBEDDED_TABLES, read_level_table};

fn example() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/he-ne-teaching-tube/lines.csv")
}

fn termsight(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .stdin(Stdio::null())
        .output()
        .expect("the binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// The example assigned to CSV in `dir`, against the tube's own spectra (He I, Ne I
/// and the H I contaminant): against all 29 compiled spectra nearly every line of this
/// 0.003 nm list has several candidates, and the optimisation leaves blends out.
fn assigned(dir: &Path) -> PathBuf {
    let path = dir.join("assigned.csv");
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--species",
        "He I",
        "--species",
        "Ne I",
        "--species",
        "H I",
        "--format",
        "csv",
        "-o",
        path.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    path
}

#[test]
fn optimised_levels_are_a_level_table_that_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let input = assigned(dir.path());
    let levels = dir.path().join("levels.csv");
    let lines = dir.path().join("ritz.csv");
    let out = termsight(&[
        "optimize",
        input.to_str().unwrap(),
        "--format",
        "csv",
        "-o",
        levels.to_str().unwrap(),
        "--lines-out",
        lines.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let table = read_level_table(std::fs::read(&levels).unwrap().as_slice(), "levels.csv").unwrap();
    assert!(table.levels.len() > 10);
    // Every level is one of the compiled (NIST ASD 2014) levels, moved by less than
    // 0.5 cm⁻¹: the example was made from those levels with noise of a few
    // thousandths of a nm (examples/he-ne-teaching-tube/README.md).
    for level in &table.levels {
        assert!(level.source.contains("optimised from"), "{}", level.source);
        let compiled = EMBEDDED_TABLES
            .iter()
            .find(|t| t.species == level.species.to_string())
            .unwrap()
            .load()
            .unwrap();
        let published = compiled.find(level.species, &level.label).unwrap();
        assert!(
            (level.energy_cm1 - published.energy_cm1).abs() < 0.5,
            "{} {}: {} vs {}",
            level.species,
            level.label,
            level.energy_cm1,
            published.energy_cm1
        );
    }
    let ritz = std::fs::read_to_string(&lines).unwrap();
    assert!(
        ritz.lines()
            .any(|l| l.starts_with("species,line,lower_configuration"))
    );
    assert!(
        ritz.contains(",air,"),
        "Ritz wavelengths above 200 nm are in air"
    );
    // The level table feeds the matcher.
    let again = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--levels",
        levels.to_str().unwrap(),
    ]);
    assert!(again.status.success(), "{}", text(&again.stderr));
}

#[test]
fn the_terminal_output_names_systems_references_and_flags() {
    let dir = tempfile::tempdir().unwrap();
    let input = assigned(dir.path());
    let out = termsight(&["optimize", input.to_str().unwrap(), "--show-lines"]);
    let stdout = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(
        stdout.contains("He I levels") && stdout.contains("Ne I levels"),
        "{stdout}"
    );
    assert!(
        stdout.contains("reference") && stdout.contains("single-line"),
        "{stdout}"
    );
    assert!(stdout.contains("χ²"), "{stdout}");
    let json = termsight(&["optimize", input.to_str().unwrap(), "--format", "json"]);
    let value: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    assert!(value["species"][0]["levels"].as_array().unwrap().len() > 3);
}

#[test]
fn bad_input_gives_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let cases: [(&str, &[&str]); 4] = [
        ("", &["empty"]),
        (
            "species,lower_term\nHe I,1S\n",
            &["no column 'lower_configuration'"],
        ),
        (
            "species,lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1\n\
             He I,1s.2p,1P*,1,1s.3d,1D,2,abc,0.03\n",
            &[
                ":2: column 'observed_wavenumber_cm1'",
                "'abc' is not a number",
            ],
        ),
        (
            "species,lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1\n\
             He I,1s.2p,1P*,1,1s.3d,1D,7,14970,0.03\n",
            &[":2: column 'upper_J'"],
        ),
    ];
    for (content, expected) in cases {
        let path = dir.path().join("bad.csv");
        std::fs::write(&path, content).unwrap();
        let out = termsight(&["optimize", path.to_str().unwrap()]);
        let stderr = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{stderr}");
        assert!(!stderr.contains("panicked"), "{stderr}");
        assert!(stderr.contains(path.to_str().unwrap()), "{stderr}");
        for part in expected {
            assert!(stderr.contains(part), "expected '{part}' in: {stderr}");
        }
    }
    let out = termsight(&["optimize", "/nonexistent/assigned.csv"]);
    assert_eq!(out.status.code(), Some(2));
    let input = assigned(dir.path());
    let out = termsight(&[
        "optimize",
        input.to_str().unwrap(),
        "--fix-level",
        "1s.9z 1S 0",
    ]);
    assert!(
        text(&out.stderr).contains("--fix-level"),
        "{}",
        text(&out.stderr)
    );
    let out = termsight(&[
        "optimize",
        input.to_str().unwrap(),
        "--fix-level",
        "1s.9s 1S 0",
    ]);
    assert!(
        text(&out.stderr).contains("not a level of any accepted line"),
        "{}",
        text(&out.stderr)
    );
}

// Malformed-input check (common practice, no source): a file whose only accepted
// row is a blend leaves nothing to optimise; the error counts the rows in words,
// not as a debug dump of the selection.
#[test]
fn nothing_left_to_optimise_is_said_in_words() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("blend-only.csv");
    std::fs::write(
        &path,
        "species,lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1,rank,flags\n\
         He I,1s.2s,3S,1,1s.3p,3P*,0,25708.84,0.2,1,blend\n",
    )
    .unwrap();
    let out = termsight(&["optimize", path.to_str().unwrap()]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("blend-only.csv"), "{stderr}");
    assert!(
        stderr.contains("1 classified rows and 0 unassigned")
            && stderr.contains("1 accepted blends left out"),
        "{stderr}"
    );
    assert!(!stderr.contains("Selection {"), "{stderr}");
}

// Malformed-input check (common practice, no source): an uncertainty so small or
// so large that its weight 1/u² overflows or vanishes is refused at its row and
// column, not reported later as a failed factorisation of the normal equations.
#[test]
fn an_extreme_uncertainty_names_its_row() {
    let dir = tempfile::tempdir().unwrap();
    for (i, u) in ["1e-300", "1e300", "5e-324"].iter().enumerate() {
        let path = dir.path().join(format!("extreme{i}.csv"));
        std::fs::write(
            &path,
            format!(
                "species,lower_configuration,lower_term,lower_J,upper_configuration,upper_term,upper_J,observed_wavenumber_cm1,observed_uncertainty_cm1\n\
                 He I,1s.2s,3S,1,1s.3p,3P*,2,25708.59,0.2\n\
                 He I,1s.2p,3P*,2,1s.3d,3D,3,17148.96,{u}\n"
            ),
        )
        .unwrap();
        let out = termsight(&["optimize", path.to_str().unwrap()]);
        let stderr = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains(&format!(
                "extreme{i}.csv:3: column 'observed_uncertainty_cm1'"
            )),
            "{stderr}"
        );
        assert!(!stderr.contains("could not be factored"), "{stderr}");
    }
}

// Malformed-input check (common practice, no source): a blend factor so large that
// a widened uncertainty's weight vanishes is refused at the blend's row, not as
// "line 0" of the internal problem.
#[test]
fn a_blend_factor_too_large_names_the_blend() {
    let dir = tempfile::tempdir().unwrap();
    let input = assigned(dir.path());
    let out = termsight(&[
        "optimize",
        input.to_str().unwrap(),
        "--blends",
        "widen",
        "--blend-factor",
        "1e300",
    ]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&format!("{}:", input.to_str().unwrap()))
            && stderr.contains(": column 'observed_uncertainty_cm1'")
            && stderr.contains("--blend-factor"),
        "{stderr}"
    );
    assert!(!stderr.contains("line 0"), "{stderr}");
}
