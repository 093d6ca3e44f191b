//! Tests of the line-list reader as a whole: formats, media, uncertainties, order,
//! every kind of bad input with its location, and skipping.

use std::io::{self, BufReader, Read};

use proptest::prelude::*;
use rand::{RngCore, SeedableRng, rngs::StdRng};

use super::*;
use crate::location::Location;
use crate::units;

fn read_with(text: &str, options: &ReadOptions) -> Result<LineList, LineListError> {
    read_line_list(text.as_bytes(), "lines.csv", options)
}

fn read(text: &str) -> LineList {
    match read_with(text, &ReadOptions::default()) {
        Ok(list) => list,
        Err(error) => panic!("{error}"),
    }
}

fn error_with(text: &str, options: &ReadOptions) -> String {
    match read_with(text, options) {
        Ok(list) => panic!("expected an error, read {} lines", list.lines.len()),
        Err(error) => error.to_string(),
    }
}

fn error(text: &str) -> String {
    error_with(text, &ReadOptions::default())
}

fn with_uncertainty(text: &str) -> ReadOptions {
    ReadOptions {
        uncertainty: Some(text.parse().unwrap()),
        ..ReadOptions::default()
    }
}

fn assert_relative(got: f64, want: f64, tolerance: f64) {
    assert!(
        ((got - want) / want).abs() < tolerance,
        "got {got}, want {want} (relative tolerance {tolerance})"
    );
}

/// Three He I lines from NIST ASD (2014 export; /work/shared/reference-data/HeI-lines.csv),
/// air Ritz wavelengths in Å with the level energies they come from (cm⁻¹):
/// (λ_air, E_lower, E_upper).
const HE_I_RITZ: [(f64, f64, f64); 3] = [
    (3296.7729278, 166277.440141, 196601.4002470),
    (5875.5986967, 169086.7664725, 186101.5928903),
    (9009.1447411, 186101.5461767, 197198.3327222),
];

const HE_I_CSV: &str = "\
wavelength_A,uncertainty_A,intensity,medium,transition
3296.7729278,0.001,,air,1s.2s 1S0 - 1s.8p 1P1
5875.5986967,0.001,100,air,\"1s.2p 3P2 - 1s.3d 3D1\"
9009.1447411,0.002,3.5,air,1s.3d 3D3 - 1s.10p 3P2
";

#[test]
fn air_wavelengths_give_the_level_differences_of_the_reference_table() {
    // NIST ASD (2014): each Ritz air wavelength is E_upper − E_lower converted to air;
    // export-notes.md: our default air formula reproduces them to 0.0002 Å, i.e. a
    // relative 0.0002/3296 = 6e-8, so σ must agree to 1e-7.
    let list = read(HE_I_CSV);
    assert_eq!(list.lines.len(), 3);
    // In input order.
    let rows: Vec<usize> = list.lines.iter().map(|line| line.row).collect();
    assert_eq!(rows, vec![1, 2, 3]);
    for line in &list.lines {
        let (lambda, lower, upper) = HE_I_RITZ[line.row - 1];
        assert_relative(line.wavenumber_cm1, upper - lower, 1e-7);
        assert_eq!(
            line.given,
            GivenPosition::Wavelength {
                value: lambda,
                unit: LengthUnit::Angstrom,
                medium: Medium::Air
            }
        );
        assert_eq!(line.source_line, line.row + 1);
    }
    assert!(!list.medium_assumed);
    assert_eq!(list.extra_columns, vec!["transition"]);
    let by_row = |row: usize| list.lines.iter().find(|l| l.row == row).unwrap();
    assert_eq!(by_row(1).intensity, None);
    assert_eq!(by_row(2).intensity, Some(100.0));
    assert_eq!(by_row(3).intensity, Some(3.5));
    assert_eq!(by_row(2).extra, vec!["1s.2p 3P2 - 1s.3d 3D1"]);
    assert_eq!(list.air_formula, AirFormula::BirchDowns1994);
    assert_eq!((list.skipped.len(), list.skipped_total), (0, 0));
}

#[test]
fn tsv_and_whitespace_columns_read_like_csv() {
    let csv = "wavelength_nm,uncertainty_cm1,intensity,note\n\
               500.0,0.01,10,a\n\
               250.5,0.02,20,b\n";
    let tsv = "wavelength_nm\tuncertainty_cm1\tintensity\tnote\n\
               500.0\t0.01\t10\ta\n\
               250.5\t0.02\t20\tb\n";
    let spaced = "  wavelength_nm   uncertainty_cm1 intensity note\n\
                  500.0  0.01\t10 a\n\
                  \t250.5 0.02 20   b   \n";
    let expected = read(csv);
    assert_eq!(read(tsv), expected);
    assert_eq!(read(spaced), expected);
    assert_eq!(expected.lines[0].extra, vec!["a"]);
    assert_eq!(expected.lines[1].uncertainty_cm1, 0.02);
}

#[test]
fn bom_crlf_comments_and_blank_lines_are_accepted() {
    let text = "\u{feff}# demo scan of a neon lamp\r\n\
                \r\n\
                # columns:\r\n\
                wavelength_nm uncertainty_nm  # header comment\r\n\
                \r\n\
                640.2248 0.0005   # strong\r\n\
                \x20\x20\t# an indented comment\r\n\
                585.2488 0.0005\r\n\
                \t\r\n";
    let list = read(text);
    let found: Vec<(usize, usize)> = list
        .lines
        .iter()
        .map(|line| (line.row, line.source_line))
        .collect();
    // In input order: 640 nm (row 1, line 6), then 585 nm (row 2, line 8).
    assert_eq!(found, vec![(1, 6), (2, 8)]);
    assert!(list.extra_columns.is_empty());
    // The BOM is not part of the first column's name, and CRLF is not in the last.
    let csv = "\u{feff}wavelength_nm,uncertainty_nm\r\n300,0.001\r\n";
    assert_eq!(read(csv).lines.len(), 1);
}

#[test]
fn a_comment_line_need_not_be_utf8() {
    let mut bytes = b"# Latin-1 comment: 20\xB0C\nwavenumber_cm1,uncertainty_cm1\n".to_vec();
    bytes.extend_from_slice(b"# \xFF\n15000,0.01\n");
    let list = read_line_list(&bytes[..], "lines.csv", &ReadOptions::default()).unwrap();
    assert_eq!(list.lines[0].source_line, 4);
}

#[test]
fn a_trailing_comment_in_whitespace_columns_need_not_be_utf8() {
    let bytes = b"wavenumber_cm1 uncertainty_cm1 # \xB0\n15000 0.01 # 20\xB0C\n";
    let list = read_line_list(&bytes[..], "lines.txt", &ReadOptions::default()).unwrap();
    assert_eq!(list.lines.len(), 1);
    // In CSV the same bytes are data, and must be text.
    let bytes = b"wavenumber_cm1,uncertainty_cm1\n15000,0.01 # 20\xB0C\n";
    let error = read_line_list(&bytes[..], "lines.csv", &ReadOptions::default()).unwrap_err();
    assert_eq!(
        error.to_string(),
        "lines.csv:2: the line is not valid UTF-8 text"
    );
}

#[test]
fn header_names_ignore_case_and_spaces_and_keep_extras_as_written() {
    let list = read(" Wavelength_A , UNCERTAINTY_nm,Species , Intensity\n5000, 0.0001, He I, 7\n");
    assert_eq!(list.extra_columns, vec!["Species"]);
    assert_eq!(list.lines[0].extra, vec!["He I"]);
    assert_eq!(list.lines[0].intensity, Some(7.0));
}

#[test]
fn medium_comes_from_the_column_then_the_option_then_the_convention() {
    let text = "wavelength_nm,uncertainty_nm,medium\n\
                500,0.001,vacuum\n\
                500,0.001,AIR\n\
                500,0.001,\n";
    let medium_of =
        |list: &LineList, row: usize| match list.lines.iter().find(|l| l.row == row).unwrap().given
        {
            GivenPosition::Wavelength { medium, .. } => medium,
            GivenPosition::Wavenumber { .. } => panic!("a wavelength was given"),
        };
    // The option fills the blank cell but does not override the column.
    let option_vacuum = ReadOptions {
        medium: Some(Medium::Vacuum),
        ..ReadOptions::default()
    };
    let list = read_with(text, &option_vacuum).unwrap();
    assert_eq!(
        (
            medium_of(&list, 1),
            medium_of(&list, 2),
            medium_of(&list, 3)
        ),
        (Medium::Vacuum, Medium::Air, Medium::Vacuum)
    );
    assert!(!list.medium_assumed);
    // A vacuum wavelength is 1/σ exactly: 500 nm is 20000 cm⁻¹ (definition of σ).
    let vacuum = list.lines.iter().find(|l| l.row == 1).unwrap();
    assert_eq!(vacuum.wavenumber_cm1, 20000.0);
    // Without the option the blank cell follows the convention (air at 500 nm).
    let list = read(text);
    assert_eq!(medium_of(&list, 3), Medium::Air);
    assert!(list.medium_assumed);
}

#[test]
fn the_convention_is_air_from_200_nm_and_vacuum_below() {
    // Common practice, no source: air wavelengths at and above 200 nm, vacuum below.
    let list = read("wavelength_A,uncertainty_A\n1215.67,0.01\n2000.0,0.01\n6562.8,0.01\n");
    let media: Vec<Medium> = list
        .lines
        .iter()
        .map(|line| match line.given {
            GivenPosition::Wavelength { medium, .. } => medium,
            GivenPosition::Wavenumber { .. } => panic!("a wavelength was given"),
        })
        .collect();
    assert_eq!(media, vec![Medium::Vacuum, Medium::Air, Medium::Air]);
    assert!(list.medium_assumed);
    // Lyman α given in vacuum: σ = 1e8/1215.67 cm⁻¹ (definition of σ).
    assert_eq!(list.lines[0].wavenumber_cm1, 1e8 / 1215.67);
    // With the option nothing is assumed.
    let options = ReadOptions {
        medium: Some(Medium::Air),
        ..ReadOptions::default()
    };
    assert!(
        !read_with("wavelength_A,uncertainty_A\n6562.8,0.01\n", &options)
            .unwrap()
            .medium_assumed
    );
    // Wavenumbers have no medium to assume.
    assert!(!read("wavenumber_cm1,uncertainty_cm1\n15000,0.01\n").medium_assumed);
}

#[test]
fn a_wavenumber_row_may_say_vacuum_but_not_air() {
    let list = read("wavenumber_cm1,uncertainty_cm1,medium\n15000,0.01,vacuum\n16000,0.01,\n");
    assert_eq!(list.lines.len(), 2);
    assert_eq!(
        error("wavenumber_cm1,uncertainty_cm1,medium\n15000,0.01,air\n"),
        "lines.csv:2: column 'medium': 'air' does not apply: wavenumber_cm1 is a vacuum \
         wavenumber (leave the medium blank or write vacuum)"
    );
}

#[test]
fn a_global_uncertainty_serves_rows_without_their_own() {
    // u(σ) = u(λ)/λ² for a vacuum wavelength (σ = 1/λ; common practice, no source):
    // 100 nm ± 0.001 nm is 100000 cm⁻¹ ± 1 cm⁻¹.
    let options = ReadOptions {
        medium: Some(Medium::Vacuum),
        uncertainty: Some("0.001nm".parse().unwrap()),
        ..ReadOptions::default()
    };
    let list = read_with("wavelength_nm\n100\n", &options).unwrap();
    assert_relative(list.lines[0].uncertainty_cm1, 1.0, 1e-12);
    // A blank cell of the uncertainty column falls back to it; a filled one wins.
    let list = read_with("wavelength_nm,uncertainty_nm\n100,\n200,0.004\n", &options).unwrap();
    let u: Vec<f64> = list.lines.iter().map(|line| line.uncertainty_cm1).collect();
    // 200 nm ± 0.004 nm: 1e7·0.004/200² = 1 cm⁻¹.
    assert_relative(u[0], 1.0, 1e-12);
    assert_relative(u[1], 1.0, 1e-12);
    // A global cm⁻¹ value is taken as it is.
    let list = read_with("wavenumber_cm1\n15000\n", &with_uncertainty("0.05cm-1")).unwrap();
    assert_eq!(list.lines[0].uncertainty_cm1, 0.05);
}

#[test]
fn the_uncertainty_unit_may_differ_from_the_position_unit() {
    // u(σ) = σ²·u(λ) (σ = 1/λ_vac; common practice, no source): at 500 nm vacuum
    // (σ = 20000 cm⁻¹), 0.01 Å = 0.001 nm gives 1e7·0.001/500² = 0.04 cm⁻¹.
    let vacuum = ReadOptions {
        medium: Some(Medium::Vacuum),
        ..ReadOptions::default()
    };
    let list = read_with("wavelength_nm,uncertainty_A\n500,0.01\n", &vacuum).unwrap();
    assert_relative(list.lines[0].uncertainty_cm1, 0.04, 1e-12);
    let list = read_with("wavelength_um,uncertainty_nm\n0.5,0.001\n", &vacuum).unwrap();
    assert_relative(list.lines[0].uncertainty_cm1, 0.04, 1e-12);
    let list = read("wavenumber_cm1,uncertainty_A\n20000,0.01\n");
    assert_relative(list.lines[0].uncertainty_cm1, 0.04, 1e-12);
    let list = read("wavelength_nm,uncertainty_cm1\n500,0.04\n");
    assert_eq!(list.lines[0].uncertainty_cm1, 0.04);
    // In air the dispersion of air enters, as units::Wavelength computes it.
    let list = read("wavelength_nm,uncertainty_A\n500,0.01\n");
    let expected = units::Wavelength {
        value: 500.0,
        unit: LengthUnit::Nanometre,
        medium: Medium::Air,
    }
    .wavenumber_uncertainty_cm1(0.001, AirFormula::default())
    .unwrap();
    assert_relative(list.lines[0].uncertainty_cm1, expected, 1e-14);
    // … and differs from the vacuum value by about n ≈ 1.0003 (relative 2.8e-4 at
    // 500 nm, check-values/air_vacuum.csv) plus the wavenumber shift.
    assert_relative(list.lines[0].uncertainty_cm1, 0.04, 1e-3);
}

#[test]
fn lines_keep_their_input_order() {
    let list = read(
        "wavenumber_cm1,uncertainty_cm1,id\n\
         300,0.1,c\n100,0.1,a\n200,0.1,b1\n200,0.1,b2\n200,0.1,b3\n",
    );
    let ids: Vec<&str> = list.lines.iter().map(|l| l.extra[0].as_str()).collect();
    assert_eq!(ids, vec!["c", "a", "b1", "b2", "b3"]);
}

#[test]
fn the_air_formula_of_the_options_is_used() {
    // check-values/air_vacuum.csv (mpmath, 40 digits): λ_vac 500.000 nm is not a row,
    // so compare against units::air directly, which tests/units.rs checks against it.
    for formula in AirFormula::ALL {
        let options = ReadOptions {
            air_formula: formula,
            ..ReadOptions::default()
        };
        let list = read_with("wavelength_nm,uncertainty_nm\n500,0.001\n", &options).unwrap();
        let vacuum = units::air::air_to_vacuum_nm(500.0, formula).unwrap();
        assert_relative(list.lines[0].wavenumber_cm1, 1e7 / vacuum, 1e-15);
        assert_eq!(list.air_formula, formula);
    }
}

// --- bad rows: each message names file, line and column --------------------------

#[test]
fn bad_values_are_reported_with_line_and_column() {
    let header = "wavelength_nm,uncertainty_nm,intensity\n";
    let cases = [
        (
            "abc,0.001,1",
            "column 'wavelength_nm': 'abc' is not a number",
        ),
        (
            ",0.001,1",
            "column 'wavelength_nm': no value; every row needs one here",
        ),
        (
            "0,0.001,1",
            "column 'wavelength_nm': '0' is not greater than zero",
        ),
        (
            "-500,0.001,1",
            "column 'wavelength_nm': '-500' is not greater than zero",
        ),
        (
            "inf,0.001,1",
            "column 'wavelength_nm': 'inf' is not a finite number",
        ),
        (
            "NaN,0.001,1",
            "column 'wavelength_nm': 'NaN' is not a finite number",
        ),
        (
            "500,0,1",
            "column 'uncertainty_nm': '0' is not greater than zero",
        ),
        (
            "500,-1e-3,1",
            "column 'uncertainty_nm': '-1e-3' is not greater than zero",
        ),
        ("500,x,1", "column 'uncertainty_nm': 'x' is not a number"),
        (
            "500,inf,1",
            "column 'uncertainty_nm': 'inf' is not a finite number",
        ),
        (
            "500,0.001,strong",
            "column 'intensity': 'strong' is not a number",
        ),
        (
            "500,0.001,-inf",
            "column 'intensity': '-inf' is not a finite number",
        ),
        (
            "1e-320,0.001,1",
            "column 'wavelength_nm': '1e-320' is too extreme: its vacuum wavenumber is not \
             a finite number greater than zero",
        ),
        (
            "500,1e308,1",
            "column 'uncertainty_nm': '1e308' is too extreme: its wavenumber uncertainty is \
             not a finite number greater than zero",
        ),
        ("500,0.001", "2 fields, but the header (line 1) names 3"),
        (
            "500,0.001,1,extra",
            "4 fields, but the header (line 1) names 3",
        ),
        ("\"500,0.001,1", "a quoted field is not closed on this line"),
    ];
    for (row, message) in cases {
        let text = format!("{header}300,0.001,1\n{row}\n");
        assert_eq!(
            error(&text),
            format!("lines.csv:3: {message}"),
            "row {row:?}"
        );
    }
    // An intensity may be blank.
    assert_eq!(
        read(&format!("{header}500,0.001,\n")).lines[0].intensity,
        None
    );
}

#[test]
fn a_long_bad_field_is_shortened_in_the_message() {
    let text = format!("wavenumber_cm1,uncertainty_cm1\n{},0.1\n", "x".repeat(1000));
    let message = error(&text);
    assert!(message.len() < 150, "{message}");
    assert!(message.starts_with("lines.csv:2: column 'wavenumber_cm1': 'xxxx"));
    assert!(message.ends_with("…' is not a number"));
}

#[test]
fn the_medium_column_accepts_only_air_or_vacuum() {
    assert_eq!(
        error("wavelength_nm,uncertainty_nm,medium\n500,0.001,water\n"),
        "lines.csv:2: column 'medium': 'water' is not a medium; write air or vacuum"
    );
}

#[test]
fn an_air_wavelength_must_be_inside_the_air_formula_range() {
    let options = ReadOptions {
        medium: Some(Medium::Air),
        uncertainty: Some("0.001nm".parse().unwrap()),
        ..ReadOptions::default()
    };
    assert_eq!(
        error_with("wavelength_nm\n300\n150\n", &options),
        "lines.csv:3: column 'wavelength_nm': an air wavelength of 150 nm is shorter than \
         185 nm, where the air formulas end; give it as a vacuum wavelength"
    );
    // The same number given in Å is checked in nm.
    assert!(
        error_with("wavelength_A\n1500\n", &options)
            .contains("an air wavelength of 150 nm is shorter")
    );
}

#[test]
fn a_row_without_any_uncertainty_says_how_to_give_one() {
    let expected = "no uncertainty: add a column uncertainty_nm, uncertainty_A, uncertainty_um \
                    or uncertainty_cm1, or give one uncertainty for all lines (--uncertainty, \
                    e.g. 0.002nm or 0.05cm-1)";
    assert_eq!(
        error("wavelength_nm\n500\n"),
        format!("lines.csv:2: {expected}")
    );
    assert_eq!(
        error("wavelength_nm,uncertainty_nm\n500,0.001\n600,\n"),
        format!("lines.csv:3: column 'uncertainty_nm': {expected}")
    );
}

#[test]
fn invalid_utf8_is_an_error_with_its_line() {
    let bytes = b"wavenumber_cm1,uncertainty_cm1,note\n15000,0.1,ok\n16000,0.1,\xC3\x28\n";
    let error = read_line_list(&bytes[..], "lines.csv", &ReadOptions::default()).unwrap_err();
    assert_eq!(
        error.to_string(),
        "lines.csv:3: the line is not valid UTF-8 text"
    );
    assert_eq!(error.location(), &Location::line("lines.csv", 3));
    let bytes = b"# ok\nwavenumber_cm1,\xFFnote\n";
    let error = read_line_list(&bytes[..], "lines.csv", &ReadOptions::default()).unwrap_err();
    assert_eq!(
        error.to_string(),
        "lines.csv:2: the line is not valid UTF-8 text"
    );
}

// --- bad headers and empty inputs --------------------------------------------------

#[test]
fn header_problems_name_the_header_line_and_what_is_accepted() {
    let cases = [
        (
            "# comment\nintensity,note\n1,a\n",
            "lines.csv:2: the header names no position column; it needs exactly one of \
             wavelength_nm, wavelength_A, wavelength_um or wavenumber_cm1 (found: \
             'intensity', 'note')",
        ),
        (
            "500.1 0.001\n",
            "lines.csv:1: the header names no position column; it needs exactly one of \
             wavelength_nm, wavelength_A, wavelength_um or wavenumber_cm1 (found: \
             '500.1', '0.001')",
        ),
        (
            "wavelength_nm,wavenumber_cm1\n",
            "lines.csv:1: column 'wavenumber_cm1': a second position column after \
             'wavelength_nm'; give exactly one of wavelength_nm, wavelength_A, \
             wavelength_um or wavenumber_cm1",
        ),
        (
            "wavelength_nm,uncertainty_nm,uncertainty_cm1\n",
            "lines.csv:1: column 'uncertainty_cm1': a second uncertainty column after \
             'uncertainty_nm'; give at most one of uncertainty_nm, uncertainty_A, \
             uncertainty_um or uncertainty_cm1",
        ),
        (
            "wavelength_nm,note,Note\n",
            "lines.csv:1: column 'Note': the column name appears twice (first as column 2)",
        ),
        (
            "wavelength_mm,uncertainty_nm\n",
            "lines.csv:1: column 'wavelength_mm': unknown or missing unit; use one of \
             wavelength_nm, wavelength_A, wavelength_um or wavenumber_cm1",
        ),
        (
            "wavelength\n",
            "lines.csv:1: column 'wavelength': unknown or missing unit; use one of \
             wavelength_nm, wavelength_A, wavelength_um or wavenumber_cm1",
        ),
        (
            "wavenumber_cm1,uncertainty_pm\n",
            "lines.csv:1: column 'uncertainty_pm': unknown or missing unit; use one of \
             uncertainty_nm, uncertainty_A, uncertainty_um or uncertainty_cm1",
        ),
        (
            "wavenumber_cm1,,note\n",
            "lines.csv:1: column 2 has no name; every column needs one",
        ),
        (
            "wavenumber_cm1,\"note\n",
            "lines.csv:1: a quoted field is not closed on this line",
        ),
    ];
    for (text, message) in cases {
        assert_eq!(error(text), message, "input {text:?}");
    }
}

#[test]
fn empty_and_header_only_inputs_have_no_lines() {
    let empty = "lines.csv: no lines: the input is empty (it needs a header line naming the \
                 columns, e.g. wavelength_nm, and one line per row)";
    assert_eq!(error(""), empty);
    assert_eq!(error("\u{feff}\n  \n# only comments\r\n"), empty);
    assert_eq!(
        error("# scan\nwavelength_nm,uncertainty_nm\n\n# nothing yet\n"),
        "lines.csv:2: no lines: the header is followed by no data rows"
    );
}

// --- input that is not a line list ----------------------------------------------------

/// Seeded pseudo-random bytes, counting how many were taken.
struct Garbage {
    rng: StdRng,
    remaining: usize,
}

impl Read for Garbage {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = buf.len().min(self.remaining);
        self.rng.fill_bytes(&mut buf[..n]);
        self.remaining -= n;
        Ok(n)
    }
}

#[test]
fn a_hundred_megabytes_of_garbage_fail_at_once() {
    // Random bytes: the first line is not UTF-8 (or not a header).
    let mut garbage = Garbage {
        rng: StdRng::seed_from_u64(42),
        remaining: 100_000_000,
    };
    let result = read_line_list(
        BufReader::new(&mut garbage),
        "noise.bin",
        &ReadOptions::default(),
    );
    let message = result.unwrap_err().to_string();
    assert!(message.starts_with("noise.bin:1: "), "{message}");
    assert!(garbage.remaining > 99_000_000, "read too much");

    // One endless line: stops at the length limit.
    let mut endless = io::repeat(b'7').take(100_000_000);
    let result = read_line_list(
        BufReader::new(&mut endless),
        "endless.txt",
        &ReadOptions::default(),
    );
    assert_eq!(
        result.unwrap_err().to_string(),
        "endless.txt:1: the line is longer than 1048576 bytes; is this a line list?"
    );
    assert!(endless.limit() > 98_000_000, "read too much");
}

#[test]
fn a_header_of_a_hundred_thousand_columns_fails_quickly() {
    // Distinct names, no position column: each name is looked at once.
    let header: Vec<String> = (0..100_000).map(|i| format!("c{i}")).collect();
    let message = error(&format!("{}\n1\n", header.join(",")));
    assert!(message.starts_with("lines.csv:1: the header names no position column"));
    assert!(message.ends_with("'c11' and 99988 more)"), "{message}");
}

/// A source that gives `good` and then fails.
struct FailingAfter<'a> {
    good: &'a [u8],
}

impl Read for FailingAfter<'_> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.good.is_empty() {
            return Err(io::Error::other("device went away"));
        }
        let n = self.good.read(buf)?;
        Ok(n)
    }
}

#[test]
fn a_read_error_names_the_source_and_line() {
    let source = FailingAfter {
        good: b"wavenumber_cm1,uncertainty_cm1\n15000,0.1\n",
    };
    let error =
        read_line_list(BufReader::new(source), "scan.csv", &ReadOptions::default()).unwrap_err();
    assert_eq!(
        error.to_string(),
        "scan.csv:3: could not be read: device went away"
    );
}

#[test]
fn an_overlong_row_is_skipped_in_bounded_memory() {
    let options = ReadOptions {
        skip_bad: true,
        max_line_bytes: 100,
        ..ReadOptions::default()
    };
    let text = format!(
        "wavenumber_cm1,uncertainty_cm1\n15000,0.1\n{}\n16000,0.1\n",
        "9".repeat(5000)
    );
    let list = read_with(&text, &options).unwrap();
    assert_eq!(list.lines.len(), 2);
    assert_eq!(list.skipped_total, 1);
    assert_eq!(
        list.skipped[0].reason,
        "the line is longer than 100 bytes; is this a line list?"
    );
    assert_eq!(list.skipped[0].location, Location::line("lines.csv", 3));
    // Rows are counted through the skipped one.
    assert_eq!(list.lines[1].row, 3);
    let strict = ReadOptions {
        skip_bad: false,
        ..options
    };
    assert_eq!(
        error_with(&text, &strict),
        "lines.csv:3: the line is longer than 100 bytes; is this a line list?"
    );
}

// --- skipping -------------------------------------------------------------------------

#[test]
fn skip_bad_keeps_the_good_rows_and_counts_the_bad() {
    let options = ReadOptions {
        skip_bad: true,
        ..ReadOptions::default()
    };
    let text = "wavenumber_cm1,uncertainty_cm1,intensity\n\
                15000,0.1,1\n\
                oops,0.1,1\n\
                16000,-0.1,1\n\
                # a comment is not a row\n\
                17000,0.1,1\n\
                18000,0.1\n";
    let list = read_with(text, &options).unwrap();
    let rows: Vec<(usize, usize)> = list.lines.iter().map(|l| (l.row, l.source_line)).collect();
    assert_eq!(rows, vec![(1, 2), (4, 6)]);
    assert_eq!(list.skipped_total, 3);
    let skipped: Vec<String> = list
        .skipped
        .iter()
        .map(|s| format!("{}: {}", s.location, s.reason))
        .collect();
    assert_eq!(
        skipped,
        vec![
            "lines.csv:3: column 'wavenumber_cm1': 'oops' is not a number",
            "lines.csv:4: column 'uncertainty_cm1': '-0.1' is not greater than zero",
            "lines.csv:7: 2 fields, but the header (line 1) names 3",
        ]
    );
}

#[test]
fn skip_bad_keeps_only_the_first_few_hundred_in_detail() {
    let options = ReadOptions {
        skip_bad: true,
        ..ReadOptions::default()
    };
    let mut text = String::from("wavenumber_cm1,uncertainty_cm1\n");
    for i in 0..2000 {
        text.push_str(if i % 2 == 0 {
            "bad,0.1\n"
        } else {
            "15000,0.1\n"
        });
    }
    let list = read_with(&text, &options).unwrap();
    assert_eq!(list.lines.len(), 1000);
    assert_eq!(list.skipped_total, 1000);
    assert_eq!(list.skipped.len(), SKIPPED_DETAIL_LIMIT);
    assert_eq!(list.skipped[0].location.line, 2);
    // Header problems are never skipped.
    assert!(read_with("wavelength_mm\n1\n", &options).is_err());
}

#[test]
fn skip_bad_with_nothing_good_left_is_an_error() {
    let options = ReadOptions {
        skip_bad: true,
        ..ReadOptions::default()
    };
    assert_eq!(
        error_with("wavenumber_cm1,uncertainty_cm1\nx,1\n0,1\n", &options),
        "lines.csv:1: no lines: all 2 data rows were bad and skipped"
    );
}

#[test]
fn the_error_type_carries_a_structured_location() {
    let error = read_with(
        "wavenumber_cm1,uncertainty_cm1\n10,1\n20,x\n",
        &ReadOptions::default(),
    )
    .unwrap_err();
    assert_eq!(
        error.location(),
        &Location::line("lines.csv", 3).column("uncertainty_cm1")
    );
    assert!(matches!(
        error,
        LineListError::BadLine {
            problem: LineProblem::NotANumber { .. },
            ..
        }
    ));
}

// --- no panic on any input --------------------------------------------------------------

proptest! {
    // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
    #![proptest_config(ProptestConfig { cases: 512, rng_seed: proptest::test_runner::RngSeed::Fixed(13), ..ProptestConfig::default() })]

    #[test]
    fn no_byte_string_makes_the_reader_panic(bytes in prop::collection::vec(any::<u8>(), 0..400),
                                            skip_bad in any::<bool>()) {
        let options = ReadOptions { skip_bad, max_line_bytes: 64, ..ReadOptions::default() };
        let _ = read_line_list(&bytes[..], "fuzz", &options);
    }

    #[test]
    fn no_near_line_list_makes_the_reader_panic(
        header in prop::sample::select(vec![
            "wavelength_nm,uncertainty_nm,medium,intensity,x",
            "wavelength_A\tuncertainty_cm1\tmedium",
            "wavenumber_cm1 uncertainty_A intensity",
            "wavelength_um,medium",
        ]),
        body in "[0-9a-z.,\t \"#e+-\u{feff}é\r\n]{0,300}",
        skip_bad in any::<bool>(),
        global in any::<bool>(),
    ) {
        let options = ReadOptions {
            skip_bad,
            uncertainty: global.then(|| "0.01A".parse().unwrap()),
            ..ReadOptions::default()
        };
        let text = format!("{header}\n{body}");
        if let Ok(list) = read_line_list(text.as_bytes(), "fuzz", &options) {
            // Whatever is read is in input order, finite and positive.
            prop_assert!(list.lines.windows(2).all(|w| w[0].row < w[1].row));
            for line in &list.lines {
                prop_assert!(line.wavenumber_cm1.is_finite() && line.wavenumber_cm1 > 0.0);
                prop_assert!(line.uncertainty_cm1.is_finite() && line.uncertainty_cm1 > 0.0);
            }
        }
    }
}

#[test]
fn large_lists_read_in_batches_as_line_by_line() {
    // 40 000 rows (three conversion batches), bad rows in the first and the third:
    // the rows, the skipped rows and the first error are where they are in the file,
    // on one thread or four (the conversion runs in parallel).
    let mut text = String::from("wavenumber_cm1,uncertainty_cm1,note\n");
    for i in 0..40_000 {
        match i {
            7 | 35_001 => text.push_str("oops,0.1,bad\n"),
            20_000 => text.push_str("# a comment between batches\n"),
            _ => text.push_str(&format!("{}.5,0.01,n{i}\n", 10_000 + i)),
        }
    }
    let skip = ReadOptions {
        skip_bad: true,
        ..ReadOptions::default()
    };
    let read_on = |threads: usize, options: &ReadOptions| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| read_with(&text, options))
    };
    let one = read_on(1, &skip).unwrap();
    let four = read_on(4, &skip).unwrap();
    assert_eq!(one, four);
    assert_eq!(one.lines.len(), 39_997);
    let skipped: Vec<String> = one.skipped.iter().map(|s| s.location.to_string()).collect();
    // Physical lines: the header is line 1, data row i is on line i + 2.
    assert_eq!(
        skipped,
        vec![
            "lines.csv:9: column 'wavenumber_cm1'",
            "lines.csv:35003: column 'wavenumber_cm1'"
        ]
    );
    assert!(one.lines.windows(2).all(|w| w[0].row < w[1].row));
    let last = one.lines.last().unwrap();
    assert_eq!((last.row, last.source_line), (39_999, 40_001));
    let strict = ReadOptions::default();
    for threads in [1, 4] {
        let error = read_on(threads, &strict).unwrap_err().to_string();
        assert!(
            error.starts_with("lines.csv:9: column 'wavenumber_cm1'"),
            "{error}"
        );
    }
}
