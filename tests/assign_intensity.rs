//! The intensity-aware assignment on the shipped example and on published data.

use std::process::Command;

use crate::util::{Table, data_path};

fn assign(args: &[&str]) -> String {
    let root = env!("CARGO_MANIFEST_DIR");
    let out = Command::new(env!("CARGO_BIN_EXE_termsight"))
        .current_dir(root)
        .arg("assign")
        .args(args)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

fn data_rows(csv_text: &str) -> Vec<csv::StringRecord> {
    let body: String = csv_text
        .lines()
        .filter(|l| !l.starts_with('#'))
        .map(|l| format!("{l}\n"))
        .collect();
    csv::Reader::from_reader(body.as_bytes())
        .records()
        .map(|r| r.unwrap())
        .collect()
}

// --position-only reproduces the output of the position-only ranking as it was
// before intensities were used (tests/data/he-ne-position-only.csv: the CSV of
// `termsight assign examples/he-ne-teaching-tube/lines.csv --format csv` at commit
// 4858117, kept as written): every one of the 28 columns of then, row by row, and
// the description.
#[test]
fn position_only_reproduces_the_ranking_before_intensities() {
    let before = std::fs::read_to_string(data_path("he-ne-position-only.csv")).unwrap();
    let now = assign(&[
        "examples/he-ne-teaching-tube/lines.csv",
        "--format",
        "csv",
        "--position-only",
    ]);
    let comments = |t: &str| -> Vec<String> {
        t.lines()
            .filter(|l| l.starts_with('#'))
            .map(String::from)
            .collect()
    };
    assert_eq!(comments(&before), comments(&now));
    let (a, b) = (data_rows(&before), data_rows(&now));
    assert_eq!(a.len(), b.len());
    for (x, y) in a.iter().zip(&b) {
        let x: Vec<&str> = x.iter().take(28).collect();
        let y: Vec<&str> = y.iter().take(28).collect();
        assert_eq!(x, y);
    }
}

/// The LS relative strengths of the ³S – ³P° multiplet from
/// tests/data/check-values/multiplet_strengths.csv (sympy 6j symbols; Condon &
/// Shortley 1935), as (J', fraction of the multiplet).
fn triplet_s_p_fractions() -> Vec<(String, f64)> {
    let table = Table::read("check-values/multiplet_strengths.csv");
    table
        .rows
        .iter()
        .filter(|r| &r[0] == "3S-3P")
        .map(|r| {
            (
                r[5].to_string(),
                table.number(r, "fraction_of_multiplet_float"),
            )
        })
        .collect()
}

fn rank_one_upper_j(csv_text: &str, line: &str) -> String {
    let rows = data_rows(csv_text);
    let row = rows.iter().find(|r| &r[0] == line && &r[7] == "1").unwrap();
    assert_eq!(&row[8], "He I");
    assert_eq!(&row[14], "3P°");
    row[15].to_string()
}

// The He I 388.9 nm line of the example was made at 2s ³S₁ – 3p ³P°₂ (examples/
// he-ne-teaching-tube/main.rs: the strongest component), and the LS multiplet
// table says ³P°₂ is the strongest (5/9 of the multiplet): it must be rank 1, with
// the compiled transition probabilities and, without them (a level table of one's
// own), by the LS strengths alone.
#[test]
fn he_i_388_9_nm_triplet_gets_its_strongest_component_at_rank_one() {
    let fractions = triplet_s_p_fractions();
    let strongest = fractions.iter().max_by(|a, b| a.1.total_cmp(&b.1)).unwrap();
    assert_eq!(strongest.0, "2");
    assert!((strongest.1 - 5.0 / 9.0).abs() < 1e-12);
    let with_a = assign(&["examples/he-ne-teaching-tube/lines.csv", "--format", "csv"]);
    assert_eq!(rank_one_upper_j(&with_a, "2"), "2");
    let without_a = assign(&[
        "examples/he-ne-teaching-tube/lines.csv",
        "--format",
        "csv",
        "--levels",
        "reference-levels/HeI.csv",
    ]);
    assert_eq!(rank_one_upper_j(&without_a, "2"), "2");
    // Position alone gives the weakest component (the reason for the check).
    let position = assign(&[
        "examples/he-ne-teaching-tube/lines.csv",
        "--format",
        "csv",
        "--position-only",
    ]);
    assert_eq!(rank_one_upper_j(&position, "2"), "0");
}

// Against every compiled spectrum, the example's He I, Ne I and H I lines come out
// at rank 1 in their own species (examples/he-ne-teaching-tube/README.md says
// which line was made from which spectrum), present, and not flagged as blends
// except where predictions of comparable intensity coincide.
#[test]
fn the_tubes_species_win_and_are_present() {
    let text = assign(&["examples/he-ne-teaching-tube/lines.csv", "--format", "csv"]);
    let rows = data_rows(&text);
    let first: Vec<&csv::StringRecord> = rows.iter().filter(|r| &r[7] == "1").collect();
    let count = |s: &str| first.iter().filter(|r| &r[8] == s).count();
    assert_eq!(count("He I"), 15);
    assert_eq!(count("Ne I"), 30);
    assert_eq!(count("H I"), 4);
    for r in &first {
        if ["He I", "Ne I", "H I"].contains(&&r[8]) {
            assert_eq!(&r[31], "present", "{r:?}");
        }
    }
    let blends = first.iter().filter(|r| r[27].contains("blend")).count();
    assert!(blends < 15, "{blends} blends");
    assert!(text.contains("# Species (present / absent / undecided"));
}
