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

// The He I lines of the ASD 2014 export with an observed wavelength and their
// printed intensities (tests/data/HeI-lines-asd2014.csv, a copy of
// ../shared/reference-data/HeI-lines.csv): the intensity-aware assignment must give
// a Boltzmann excitation temperature for He I (finite, positive, with a standard
// uncertainty) and keep the rank-1 assignments of the position-only check
// (tests/assign_reference.rs) right: configurations and terms as the export gives
// them, J of the strongest component of an unresolved group.
//
// What the temperature means: the export's intensities are "as printed, flags
// included" and "source-specific and not comparable between spectra"
// (reference-data/export-notes.md): relative intensities on the scale of the
// observations ASD took them from (estimates on a scale of its own, not calibrated
// radiances; `*` marks an intensity shared by unresolved components). The fitted
// T_exc describes that scale, the excitation of the discharge those intensities were
// estimated in as seen through the estimates, not a temperature measured here; the
// check is that the plot gives one, not its value.
#[test]
fn published_he_i_intensities_give_a_temperature_and_keep_the_assignments() {
    use termsight::assign::{EvidenceConfig, LineIntensity, MatchConfig, assign_with_evidence};

    use crate::assign_reference::{
        Component, assert_rank_one_is_the_published_classification, helium_measured_list,
        helium_printed_intensities,
    };
    let mut list = helium_measured_list();
    let printed = helium_printed_intensities();
    for line in &mut list.lines {
        let termsight::linelist::GivenPosition::Wavelength { value, .. } = line.given else {
            unreachable!("the list is of wavelengths")
        };
        let (_, intensity) = printed
            .iter()
            .find(|(w, _)| w.parse::<f64>().unwrap() == value)
            .unwrap();
        // The number without the ASD flag characters (`*`, `d`, ...).
        let digits: String = intensity
            .chars()
            .filter(|c| c.is_ascii_digit() || *c == '.')
            .collect();
        line.intensity = digits.parse().ok();
    }
    // Intensity 0 (printed for the faintest lines, 4 of the 36) has no logarithm:
    // those lines are matched by position alone.
    let intensities: Vec<Option<LineIntensity>> = list
        .lines
        .iter()
        .map(|l| l.intensity.and_then(|i| LineIntensity::new(i, None)))
        .collect();
    assert_eq!(intensities.iter().flatten().count(), 32);
    // The compiled He I spectrum, with its published transition probabilities.
    let predictions =
        termsight::levels::compiled_predictions(&[termsight::levels::embedded_table(
            "He I".parse().unwrap(),
        )
        .unwrap()])
        .unwrap();
    // k = 4 as in the position-only check (the 3935.912 Å line lies 3.3 u off).
    let config = MatchConfig::default().with_tolerance_sigma(4.0).unwrap();
    let result = assign_with_evidence(
        &list.lines,
        &intensities,
        &predictions,
        &config,
        &EvidenceConfig::default(),
        &mut |_| {},
    );
    let helium = &result.species[0];
    assert_eq!(helium.species.to_string(), "He I");
    let sigma = helium
        .temperature_sigma_k
        .unwrap_or_else(|| panic!("no Boltzmann plot: {:?}", helium.temperature_note));
    eprintln!(
        "He I from the ASD 2014 intensities: T_exc = {:.0} ± {:.0} K, {} points",
        helium.temperature_k,
        sigma,
        helium.boltzmann.as_ref().map_or(0, |b| b.used_points())
    );
    assert!(helium.temperature_k.is_finite() && helium.temperature_k > 0.0);
    assert!(sigma.is_finite() && sigma > 0.0 && sigma < helium.temperature_k);
    // Rank 1 of an unresolved group is now its strongest component (by the
    // published gA), as the intensity-aware ranking means it to be, where the
    // position-only check takes the nearest.
    assert_rank_one_is_the_published_classification(
        &list,
        &predictions,
        &result.assignments,
        Component::Strongest,
    );
}
