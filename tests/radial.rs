//! `termsight radial` run as a program.

use std::process::Command;

fn termsight(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_termsight"))
        .args(args)
        .output()
        .expect("the termsight binary runs")
}

#[test]
fn helium_configurations_print_orbitals_and_integrals() {
    let output = termsight(&[
        "radial",
        "--element",
        "He",
        "--config",
        "1s2",
        "--config",
        "1s 2s",
        "--quiet",
    ]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let text = String::from_utf8(output.stdout).unwrap();
    // He 1s²: E = −2.8616800 hartree (Clementi & Roetti 1974).
    let energy: f64 = text
        .split("1s2: E_av = ")
        .nth(1)
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|number| number.parse().ok())
        .unwrap_or_else(|| panic!("no E_av for 1s2 in {text}"));
    assert!((energy + 2.8616800).abs() < 3e-6, "{energy}");
    assert!(text.contains("G0(1s,2s)"), "{text}");
    assert!(text.contains("Eav"), "{text}");
}

#[test]
fn json_output_is_one_document() {
    let output = termsight(&[
        "radial",
        "--element",
        "Li",
        "--config",
        "1s2 2s",
        "--config",
        "1s2 2p",
        "--format",
        "json",
        "--quiet",
    ]);
    assert!(output.status.success());
    let json: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(json["species"], "Li I");
    let integrals = json["integrals"].as_array().unwrap();
    // Li 2s → 2p: one dipole integral, |⟨2s|r|2p⟩| ≈ 4.7 bohr (the 2s–2p radial
    // integral of lithium, common practice, no source; a loose check).
    let dipole = integrals.iter().find(|i| i["name"] == "r(2s,2p)").unwrap();
    let value = dipole["value"].as_f64().unwrap().abs();
    assert!((4.0..5.5).contains(&value), "{value}");
}

#[test]
fn wrong_electron_count_is_an_error_naming_the_flag() {
    let output = termsight(&[
        "radial",
        "--element",
        "Fe",
        "--charge",
        "1",
        "--config",
        "1s2 2s2",
    ]);
    assert_eq!(output.status.code(), Some(2));
    let message = String::from_utf8(output.stderr).unwrap();
    assert!(message.contains("--config '1s2 2s2'"), "{message}");
    assert!(message.contains("Fe II has 25"), "{message}");
}
