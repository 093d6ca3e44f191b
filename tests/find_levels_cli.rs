//! `termsight find-levels` as a user runs it: the README's example on the shipped
//! demo (a Ne I level left out of the compiled table, NIST ASD 2014, and found again
//! from the demo's lines; the demo's lines are made from the compiled levels, see
//! examples/he-ne-teaching-tube/README.md), the CSV appended to the level table and
//! used by `assign`, and errors.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn termsight(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .output()
        .unwrap()
}

/// The compiled Ne I table in the seven level-table columns, without
/// 2p⁵3p 2[3/2] 1 (150121.5922 cm⁻¹ in reference-levels/NeI.csv).
fn neon_without_the_level(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(root().join("reference-levels/NeI.csv")).unwrap();
    let kept: Vec<String> = text
        .lines()
        .filter(|l| !l.starts_with("Ne I,2s2.2p5.(2P°<3/2>).3p,2[3/2],1,"))
        .map(|l| l.split(',').take(7).collect::<Vec<_>>().join(","))
        .collect();
    assert_eq!(
        kept.len() + 1,
        text.lines().count(),
        "the level was not removed"
    );
    let path = dir.join("ne.csv");
    std::fs::write(&path, kept.join("\n") + "\n").unwrap();
    path
}

#[test]
fn finds_the_left_out_neon_level_and_assign_uses_it() {
    let dir = tempfile::tempdir().unwrap();
    let ne = neon_without_the_level(dir.path());
    let ne = ne.to_str().unwrap();
    let assigned = dir.path().join("assigned.csv");
    let lines = root().join("examples/he-ne-teaching-tube/lines.csv");
    let out = termsight(&[
        "assign",
        lines.to_str().unwrap(),
        "--levels",
        ne,
        "--species",
        "He I",
        "--species",
        "H I",
        "--format",
        "csv",
        "-o",
        assigned.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let assigned = assigned.to_str().unwrap();

    let json = termsight(&["find-levels", assigned, "--levels", ne, "--format", "json"]);
    assert!(
        json.status.success(),
        "{}",
        String::from_utf8_lossy(&json.stderr)
    );
    let value: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    let best = &value["candidates"][0];
    let energy = best["energy_cm1"].as_f64().unwrap();
    let u = best["uncertainty_cm1"].as_f64().unwrap();
    // The level as published: 150121.5922 cm⁻¹, even, J = 1 (NIST ASD 2014).
    assert!((energy - 150121.5922).abs() <= 3.0 * u, "{energy} ± {u}");
    assert_eq!(best["parity"], "even");
    assert_eq!(best["allowed_j"], serde_json::json!(["1"]));
    assert_eq!(best["lines"], 4);

    let table = termsight(&["find-levels", assigned, "--levels", ne]);
    let text = String::from_utf8_lossy(&table.stdout);
    assert!(text.contains("Candidate 1: 150121.5"), "{text}");

    let csv = termsight(&["find-levels", assigned, "--levels", ne, "--format", "csv"]);
    let csv = String::from_utf8(csv.stdout).unwrap();
    assert!(csv.starts_with("species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n"));
    // Append the rows after the header to the level table, and assign again: the
    // four lines now go to the new level.
    let mut table_text = std::fs::read_to_string(ne).unwrap();
    for line in csv.lines().skip(1) {
        table_text.push_str(line);
        table_text.push('\n');
    }
    std::fs::write(ne, table_text).unwrap();
    let again = termsight(&[
        "assign",
        lines.to_str().unwrap(),
        "--levels",
        ne,
        "--species",
        "He I",
        "--species",
        "H I",
        "--format",
        "csv",
    ]);
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
    let text = String::from_utf8_lossy(&again.stdout);
    let to_new = text
        .lines()
        .filter(|l| l.contains(",150121e,1,") && l.contains(",1,Ne I,"))
        .count();
    assert_eq!(to_new, 4, "{text}");
}

#[test]
fn csv_rows_append_to_a_table_with_the_status_column() {
    // The compiled table as shipped has eight columns, energy_status the last
    // (reference-levels/NeI.csv): the CSV takes that column too when the table
    // given has it, and the table with the rows appended reads again.
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(root().join("reference-levels/NeI.csv")).unwrap();
    let kept: Vec<&str> = text
        .lines()
        .filter(|l| !l.starts_with("Ne I,2s2.2p5.(2P°<3/2>).3p,2[3/2],1,"))
        .collect();
    let ne = dir.path().join("ne8.csv");
    std::fs::write(&ne, kept.join("\n") + "\n").unwrap();
    let ne = ne.to_str().unwrap();
    let lines = root().join("examples/he-ne-teaching-tube/lines.csv");
    let assigned = dir.path().join("assigned.csv");
    let out = termsight(&[
        "assign",
        lines.to_str().unwrap(),
        "--levels",
        ne,
        "--species",
        "He I",
        "--species",
        "H I",
        "--format",
        "csv",
        "-o",
        assigned.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let csv = termsight(&[
        "find-levels",
        assigned.to_str().unwrap(),
        "--levels",
        ne,
        "--format",
        "csv",
    ]);
    let csv = String::from_utf8(csv.stdout).unwrap();
    assert!(
        csv.starts_with(
            "species,configuration,term,J,energy_cm1,uncertainty_cm1,source,energy_status\n"
        ),
        "{csv}"
    );
    let mut table_text = std::fs::read_to_string(ne).unwrap();
    for line in csv.lines().skip(1) {
        table_text.push_str(line);
        table_text.push('\n');
    }
    std::fs::write(ne, table_text).unwrap();
    let again = termsight(&[
        "find-levels",
        assigned.to_str().unwrap(),
        "--levels",
        ne,
        "--format",
        "json",
    ]);
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
}

#[test]
fn errors_name_what_is_wrong() {
    let out = termsight(&["find-levels", "no-such-file.csv", "--species", "Ne I"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("no-such-file.csv"));
    let lines = root().join("examples/he-ne-teaching-tube/lines.csv");
    let out = termsight(&["find-levels", lines.to_str().unwrap()]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("--species"));
    let out = termsight(&[
        "find-levels",
        lines.to_str().unwrap(),
        "--species",
        "Ne I",
        "--min-lines",
        "1",
    ]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("--min-lines"));
    let help = termsight(&["find-levels", "--help"]);
    assert!(String::from_utf8_lossy(&help.stdout).contains("--max-probability"));
}
