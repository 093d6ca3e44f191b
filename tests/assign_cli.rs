//! `termsight assign` run as a program: the shipped example, the outputs, and bad
//! input (each must give a clear error naming the file, never a panic).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use rand::{RngCore, SeedableRng, rngs::StdRng};
use termsight::assign::read_assignments;

/// The shipped example line list.
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

/// Run `assign` on a file holding `content`; return (exit code, stderr).
fn assign_content(content: &[u8]) -> (Option<i32>, String, PathBuf, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(&path, content).unwrap();
    let out = termsight(&["assign", path.to_str().unwrap()]);
    (out.status.code(), text(&out.stderr), path, dir)
}

/// The error of a bad input: exit code 2, one message naming the file, no panic.
fn assert_clear_error(content: &[u8], expected: &[&str]) {
    let (code, stderr, path, _dir) = assign_content(content);
    assert_eq!(code, Some(2), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(stderr.starts_with("termsight: error: "), "{stderr}");
    assert!(stderr.contains(path.to_str().unwrap()), "{stderr}");
    for part in expected {
        assert!(stderr.contains(part), "expected '{part}' in: {stderr}");
    }
}

#[test]
fn the_readme_command_assigns_the_shipped_example() {
    let out = termsight(&["assign", example().to_str().unwrap()]);
    let stdout = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    // The description names the medium, the air formula and the rules per species.
    assert!(stdout.contains("air wavelengths (nm)"), "{stdout}");
    assert!(stdout.contains("Birch & Downs"), "{stdout}");
    for species in ["H I", "He I", "Ne I", "Ar I", "Cd I", "Hg I"] {
        assert!(
            stdout.contains(&format!("Predictions, {species}:")),
            "{species}"
        );
    }
    assert!(stdout.contains("parity and J rules only"), "{stdout}");
    assert!(stdout.contains("unassigned"), "{stdout}");
    for line in stdout.lines() {
        assert!(
            line.chars().count() <= 120,
            "wider than 120 columns: {line}"
        );
    }
}

#[test]
fn csv_output_is_written_whole_and_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let out_path = dir.path().join("assigned.csv");
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--species",
        "He I",
        "--species",
        "Ne I",
        "--format",
        "csv",
        "--output",
        out_path.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(out.stdout.is_empty());
    let file = std::fs::File::open(&out_path).unwrap();
    let back = read_assignments(std::io::BufReader::new(file), "assigned.csv").unwrap();
    // Every line of the example is there once at rank 1 or as unassigned. The example
    // (examples/he-ne-teaching-tube/README.md) holds 15 He I, 30 Ne I, 4 H I lines
    // and 4 spurious peaks; without H I in the selection the H I lines and the
    // spurious peaks can only be unassigned or chance matches.
    let firsts: Vec<_> = back
        .records
        .iter()
        .filter(|r| r.rank.is_none_or(|rank| rank == 1))
        .collect();
    assert_eq!(firsts.len(), 53);
    let species: Vec<String> = back
        .records
        .iter()
        .filter_map(|r| r.candidate.as_ref().map(|c| c.species.to_string()))
        .collect();
    assert!(species.iter().all(|s| s == "He I" || s == "Ne I"));
    assert!(species.iter().filter(|s| *s == "He I").count() >= 15);
    assert!(species.iter().filter(|s| *s == "Ne I").count() >= 30);
    // Only the output file in the directory: no temporary file left behind.
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn json_output_parses() {
    let out = termsight(&["assign", example().to_str().unwrap(), "--format", "json"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(json["lines"].as_array().unwrap().len(), 53);
    assert_eq!(json["input"]["air_formula"]["name"], "birch-downs");
}

#[test]
fn reads_standard_input_and_a_level_table_of_ones_own() {
    let dir = tempfile::tempdir().unwrap();
    let levels = dir.path().join("levels.csv");
    // He I 1s2p 1P°1 and 1s3d 1D2 (NIST ASD 2014): the line at 667.8 nm in air.
    std::fs::write(
        &levels,
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s.2p,1P*,1,171134.896946,0.000001,ASD 2014\n\
         He I,1s.3d,1D,2,186104.9666893,0.0000001,ASD 2014\n",
    )
    .unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args([
            "assign",
            "-",
            "--levels",
            levels.to_str().unwrap(),
            "--format",
            "csv",
        ])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(b"wavelength_nm,uncertainty_nm\n667.8152,0.001\n")
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(out.status.success(), "{}", text(&out.stderr));
    let back = read_assignments(out.stdout.as_slice(), "<stdout>").unwrap();
    assert_eq!(back.records.len(), 1);
    let c = back.records[0].candidate.as_ref().unwrap();
    assert_eq!(c.lower.to_string(), "1s.2p 1P° 1");
    assert_eq!(c.upper.to_string(), "1s.3d 1D 2");
}

#[test]
fn bad_level_tables_name_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let levels = dir.path().join("levels.csv");
    std::fs::write(
        &levels,
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s.2p,1P*,1,lots,0.000001,x\n",
    )
    .unwrap();
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--levels",
        levels.to_str().unwrap(),
    ]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        stderr.contains(&format!("{}:2: column 'energy_cm1'", levels.display())),
        "{stderr}"
    );
}

#[test]
fn bad_settings_name_the_flag() {
    let out = termsight(&["assign", example().to_str().unwrap(), "--within", "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("--within"),
        "{}",
        text(&out.stderr)
    );
    // Xe III is not among the compiled spectra (reference-levels/SOURCES.md).
    let out = termsight(&["assign", example().to_str().unwrap(), "--species", "Xe III"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no compiled table of Xe III"));
}

#[test]
fn help_reads_well() {
    let out = termsight(&["assign", "--help"]);
    let help = text(&out.stdout);
    assert!(out.status.success());
    for flag in [
        "--species",
        "--levels",
        "--within",
        "--all",
        "--format",
        "--output",
        "--medium",
        "--uncertainty",
        "--air-formula",
        "--skip-bad",
        "Examples:",
    ] {
        assert!(help.contains(flag), "{flag} missing from:\n{help}");
    }
}

#[test]
fn empty_file() {
    assert_clear_error(b"", &["empty"]);
}

#[test]
fn header_only() {
    assert_clear_error(b"wavelength_nm,uncertainty_nm\n", &["no lines"]);
}

#[test]
fn text_wavelength() {
    assert_clear_error(
        b"wavelength_nm,uncertainty_nm\n587.56,0.001\nfive hundred,0.001\n",
        &[":3:", "wavelength_nm"],
    );
}

#[test]
fn negative_and_zero_wavelengths() {
    assert_clear_error(
        b"wavelength_nm,uncertainty_nm\n-587.56,0.001\n",
        &[":2:", "wavelength_nm"],
    );
    assert_clear_error(
        b"wavelength_nm,uncertainty_nm\n0,0.001\n",
        &[":2:", "wavelength_nm"],
    );
}

#[test]
fn nan_wavelength() {
    assert_clear_error(
        b"wavelength_nm,uncertainty_nm\nNaN,0.001\n",
        &[":2:", "wavelength_nm"],
    );
}

#[test]
fn missing_column() {
    // A row shorter than the header.
    assert_clear_error(b"wavelength_nm,uncertainty_nm\n587.56\n", &[":2:"]);
    // No position column at all.
    assert_clear_error(b"intensity,uncertainty_nm\n100,0.001\n", &[":1:"]);
}

#[test]
fn a_hundred_megabytes_of_garbage() {
    // Seeded pseudo-random bytes.
    let mut garbage = vec![0u8; 100 << 20];
    StdRng::seed_from_u64(0x5EED).fill_bytes(&mut garbage);
    assert_clear_error(&garbage, &[]);
}

#[test]
fn a_failed_run_leaves_an_existing_output_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let out_path = dir.path().join("assigned.csv");
    std::fs::write(&out_path, "earlier results\n").unwrap();
    let bad = dir.path().join("bad.csv");
    std::fs::write(&bad, "wavelength_nm,uncertainty_nm\nx,1\n").unwrap();
    let out = termsight(&[
        "assign",
        bad.to_str().unwrap(),
        "--output",
        out_path.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        std::fs::read_to_string(&out_path).unwrap(),
        "earlier results\n"
    );
}

#[test]
fn an_unwritable_output_names_the_path() {
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--output",
        "/nonexistent-directory/assigned.csv",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("/nonexistent-directory/assigned.csv"));
}

#[test]
fn a_missing_input_names_the_path() {
    let path = Path::new("/nonexistent-directory/lines.csv");
    let out = termsight(&["assign", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("/nonexistent-directory/lines.csv"));
}

#[test]
fn every_candidate_fits_120_columns() {
    let out = termsight(&["assign", example().to_str().unwrap(), "--all"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    for line in stdout.lines() {
        assert!(
            line.chars().count() <= 120,
            "wider than 120 columns: {line}"
        );
    }
    // More rows than without --all: the alternatives are listed with their rank.
    assert!(stdout.contains("#2"), "{stdout}");
}

#[test]
fn an_assumed_medium_is_said() {
    // No medium column and no --medium: air is assumed above 200 nm (the usual
    // convention), and the output says so.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(&path, "wavelength_nm,uncertainty_nm\n587.5621,0.001\n").unwrap();
    let out = termsight(&["assign", path.to_str().unwrap(), "--species", "He I"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    assert!(stdout.contains("air was assumed"), "{stdout}");
    let out = termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--species",
        "He I",
        "--medium",
        "air",
        "--air-formula",
        "edlen",
    ]);
    let stdout = text(&out.stdout);
    assert!(!stdout.contains("air was assumed"), "{stdout}");
    assert!(stdout.contains("Edlen (1966"), "{stdout}");
}

#[test]
fn skipped_rows_are_reported_and_the_rest_assigned() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(
        &path,
        "wavelength_nm,uncertainty_nm\n587.5621,0.001\nbad,0.001\n667.8152,0.001\n",
    )
    .unwrap();
    let out = termsight(&[
        "assign",
        path.to_str().unwrap(),
        "--species",
        "He I",
        "--skip-bad",
        "--format",
        "csv",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains(&format!("skipped {}:3", path.display())),
        "{stderr}"
    );
    let back = read_assignments(out.stdout.as_slice(), "<stdout>").unwrap();
    let lines: Vec<usize> = back
        .records
        .iter()
        .filter(|r| r.rank == Some(1))
        .map(|r| r.line)
        .collect();
    // Rows 1 and 3 of the input; row 2 was skipped.
    assert_eq!(lines, vec![1, 3]);
    assert!(text(&out.stdout).contains("1 bad row skipped"));
}

// Malformed-input check (common practice, no source): an uncertainty so large that
// its square overflows (1e300 cm-1 in the line list, 1e308 cm-1 in a level table)
// is refused at its row and column instead of printing NaN as the chance probability
// (the chance module's own test covers an overflowing --model-uncertainty).
#[test]
fn an_overflowing_uncertainty_prints_no_nan() {
    assert_clear_error(
        b"wavenumber_cm1,uncertainty_cm1\n17000,1e300\n",
        &[":2: column 'uncertainty_cm1'", "'1e300' is too extreme"],
    );
    let dir = tempfile::tempdir().unwrap();

    let levels = dir.path().join("huge-level-u.csv");
    std::fs::write(
        &levels,
        "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
         He I,1s.2p,3P°,2,169086.7664725,0.000001,x\n\
         He I,1s.3d,3D,3,186101.5468,1e308,x\n",
    )
    .unwrap();
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--levels",
        levels.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("huge-level-u.csv:3: column 'uncertainty_cm1'"),
        "{}",
        text(&out.stderr)
    );
}

// Malformed-input check (common practice, no source): naming the same species twice
// with --species asks for it once; it was refused with "its origin is given twice;
// each species may come from one level table or model only", though no table or
// model was given.
#[test]
fn the_same_species_named_twice_is_matched_once() {
    let example = example();
    let once = termsight(&["assign", example.to_str().unwrap(), "--species", "He I"]);
    let twice = termsight(&[
        "assign",
        example.to_str().unwrap(),
        "--species",
        "He I",
        "--species",
        "He I",
    ]);
    assert!(twice.status.success(), "{}", text(&twice.stderr));
    assert_eq!(text(&once.stdout), text(&twice.stdout));
}

// Malformed-input check (common practice, no source): a model uncertainty whose
// square overflows is refused, naming the flag, instead of printing inf.
#[test]
fn an_overflowing_model_uncertainty_is_refused() {
    let model = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/level-models/alkaline-earth-4s.toml"
    );
    let out = termsight(&[
        "assign",
        example().to_str().unwrap(),
        "--model",
        model,
        "--model-uncertainty=1e300",
    ]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("--model-uncertainty: give a number of cm⁻¹ from 0 to 1e150"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn the_intensity_uncertainty_column_is_read_and_checked() {
    // Regression: a header `uncertainty_intensity` was taken for a position
    // uncertainty of unknown unit, so the documented column could not be used.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("lines.csv");
    std::fs::write(
        &path,
        "wavelength_nm,uncertainty_nm,intensity,uncertainty_intensity\n\
         587.5637,0.003,1010,50\n667.8151,0.003,300,30\n",
    )
    .unwrap();
    let out = termsight(&["assign", path.to_str().unwrap(), "--species", "He I"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    std::fs::write(
        &path,
        "wavelength_nm,uncertainty_nm,intensity,uncertainty_intensity\n\
         587.5637,0.003,1010,50\n667.8151,0.003,300,x\n",
    )
    .unwrap();
    let out = termsight(&["assign", path.to_str().unwrap(), "--species", "He I"]);
    assert!(!out.status.success());
    assert!(
        text(&out.stderr).contains("lines.csv:3: column 'uncertainty_intensity'"),
        "{}",
        text(&out.stderr)
    );
}
