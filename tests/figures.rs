//! The figures: golden files of small fixed inputs (numbers normalised), every
//! figure well-formed XML that renders (rasterised with resvg) to a plot area that is
//! not blank, with its axis titles present as text; the stick spectrum of the shipped
//! example showing every observed line and every assignment.

use std::path::{Path, PathBuf};
use std::process::Command;

use termsight::levels::LevelLabel;
use termsight::notation::{HalfInt, Parity};
use termsight::report::figures::{
    AssignedStick, BoltzmannPlot, BoltzmannPoint, DiagramLevel, DiagramTransition, ExtraLevel,
    FitResidual, FitResiduals, ModelSpectrumFigure, ModelStick, ObservedStick, PredictedStick,
    RitzResidual, RitzResiduals, SECOND_RADIATION_CONSTANT_CM_K, SpectrumAxis, StickSpectrum,
    StickWindow, TermDiagram, boltzmann_svg, fit_boltzmann, fit_residuals_svg, model_spectrum_svg,
    ritz_residuals_svg, stick_spectrum_svg, term_diagram_svg,
};
use termsight::units::AirFormula;

use crate::util::data_path;

/// Every number with a decimal point rounded to one decimal, so that the golden
/// files compare structure and layout, not the last digit of a coordinate.
pub fn normalise(svg: &str) -> String {
    let mut out = String::with_capacity(svg.len());
    let chars: Vec<char> = svg.chars().collect();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_ascii_digit() {
            let start = i;
            while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
                i += 1;
            }
            let token: String = chars[start..i].iter().collect();
            match token.parse::<f64>() {
                Ok(v) if token.contains('.') => out.push_str(&format!("{v:.1}")),
                _ => out.push_str(&token),
            }
        } else {
            out.push(c);
            i += 1;
        }
    }
    out
}

/// Compare with `tests/data/figures/<name>` after normalising; with the environment
/// variable `TERMSIGHT_UPDATE_GOLDEN` set, write the file instead.
fn golden(name: &str, svg: &str) {
    let path = data_path(&format!("figures/{name}"));
    let got = normalise(svg);
    if std::env::var_os("TERMSIGHT_UPDATE_GOLDEN").is_some() {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        std::fs::write(&path, &got).unwrap();
        return;
    }
    let want = std::fs::read_to_string(&path).unwrap_or_else(|e| {
        panic!(
            "{}: {e} (TERMSIGHT_UPDATE_GOLDEN=1 writes it)",
            path.display()
        )
    });
    if got != want {
        let line = got
            .lines()
            .zip(want.lines())
            .position(|(a, b)| a != b)
            .unwrap_or(got.lines().count().min(want.lines().count()));
        panic!(
            "{name} differs from {} at line {}:\n got: {:?}\nwant: {:?}",
            path.display(),
            line + 1,
            got.lines().nth(line),
            want.lines().nth(line)
        );
    }
}

/// Parse as XML (panics if not well-formed) and return every text element's content.
pub fn texts(svg: &str) -> Vec<String> {
    let doc = roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("not well-formed: {e}"));
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or_default().trim().to_string())
        .collect()
}

/// Rasterise with resvg; optionally keep the PNG (TERMSIGHT_FIGURE_PNG=dir).
pub fn render(svg: &str, name: &str) -> resvg::tiny_skia::Pixmap {
    let tree = resvg::usvg::Tree::from_str(svg, &resvg::usvg::Options::default())
        .unwrap_or_else(|e| panic!("{name}: resvg cannot read it: {e}"));
    let size = tree.size().to_int_size();
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::default(),
        &mut pixmap.as_mut(),
    );
    if let Some(dir) = std::env::var_os("TERMSIGHT_FIGURE_PNG") {
        pixmap
            .save_png(Path::new(&dir).join(format!("{name}.png")))
            .unwrap();
    }
    pixmap
}

/// The share of pixels in the rectangle (fractions of the width and height) that
/// are not white.
pub fn ink_fraction(pixmap: &resvg::tiny_skia::Pixmap, x: (f64, f64), y: (f64, f64)) -> f64 {
    let (w, h) = (pixmap.width() as f64, pixmap.height() as f64);
    let (x0, x1) = ((x.0 * w) as u32, (x.1 * w) as u32);
    let (y0, y1) = ((y.0 * h) as u32, (y.1 * h) as u32);
    let mut inked = 0usize;
    let mut all = 0usize;
    for py in y0..y1 {
        for px in x0..x1 {
            let p = pixmap.pixel(px, py).unwrap();
            all += 1;
            // Drawn on a white background: any channel clearly below white is ink.
            if p.alpha() > 0 && (p.red() < 230 || p.green() < 230 || p.blue() < 230) {
                inked += 1;
            }
        }
    }
    inked as f64 / all.max(1) as f64
}

/// Well-formed, renders, the plot area (inside the axes) is not blank, and each of
/// `labels` is the text of some element.
fn check_figure(name: &str, svg: &str, labels: &[&str]) {
    let texts = texts(svg);
    for label in labels {
        assert!(
            texts.iter().any(|t| t.contains(label)),
            "{name}: no text contains {label:?}; texts: {texts:?}"
        );
    }
    let pixmap = render(svg, name);
    // The plot area: right of the vertical axis, below the header, above the x axis.
    let ink = ink_fraction(&pixmap, (0.12, 0.95), (0.2, 0.85));
    assert!(ink > 0.0005, "{name}: plot area blank ({ink})");
    assert!(ink < 0.9, "{name}: plot area filled ({ink})");
}

fn label(text: &str) -> LevelLabel {
    text.parse().unwrap()
}

fn stick() -> StickSpectrum {
    // Invented demo data: three observed lines, two assigned.
    let observed = vec![
        ObservedStick {
            wavenumber_cm1: 17_000.0,
            intensity: Some(100.0),
            assignment: Some(AssignedStick {
                predicted_wavenumber_cm1: 17_000.3,
                label: "He I 2p 3P° 2 – 3d 3D 3".into(),
            }),
        },
        ObservedStick {
            wavenumber_cm1: 17_500.0,
            intensity: Some(30.0),
            assignment: Some(AssignedStick {
                predicted_wavenumber_cm1: 17_499.8,
                label: "Ne I 3s 2[3/2]° 2 – 3p 2[5/2] 3".into(),
            }),
        },
        ObservedStick {
            wavenumber_cm1: 18_000.0,
            intensity: None,
            assignment: None,
        },
    ];
    let predicted = vec![
        PredictedStick {
            wavenumber_cm1: 17_000.3,
            gf: Some(1.2),
        },
        PredictedStick {
            wavenumber_cm1: 17_499.8,
            gf: Some(0.05),
        },
        PredictedStick {
            wavenumber_cm1: 17_800.0,
            gf: None,
        },
    ];
    StickSpectrum {
        source: "demo.csv".into(),
        species: vec!["He I".into(), "Ne I".into()],
        observed,
        predicted,
    }
}

fn boltzmann() -> BoltzmannPlot {
    // Invented demo points near T = 8000 K.
    let points: Vec<BoltzmannPoint> = [
        (150_000.0, 0.1),
        (151_000.0, -0.1),
        (153_000.0, -0.5),
        (155_000.0, -0.8),
    ]
    .iter()
    .map(|&(e, d)| BoltzmannPoint {
        upper_energy_cm1: e,
        ordinate: 30.0 - e * SECOND_RADIATION_CONSTANT_CM_K / 8000.0 + d * 0.1,
        sigma: None,
        blend: e > 154_000.0,
    })
    .collect();
    BoltzmannPlot {
        source: "demo.csv".into(),
        species: "Ne I".into(),
        fit: fit_boltzmann(&points),
        points,
        left_out: 1,
    }
}

fn diagram() -> TermDiagram {
    // Invented demo levels with the shape of He I's.
    let levels = vec![
        DiagramLevel {
            label: label("1s.2s 3S 1"),
            energy_cm1: 159_856.0,
            single_line: false,
        },
        DiagramLevel {
            label: label("1s.2p 3P° 2"),
            energy_cm1: 169_087.0,
            single_line: false,
        },
        DiagramLevel {
            label: label("1s.3d 3D 3"),
            energy_cm1: 186_101.0,
            single_line: true,
        },
        DiagramLevel {
            label: label("1s.2p 1P° 1"),
            energy_cm1: 171_135.0,
            single_line: false,
        },
        DiagramLevel {
            label: label("1s.3d 1D 2"),
            energy_cm1: 186_105.0,
            single_line: false,
        },
    ];
    let transitions = vec![
        DiagramTransition {
            lower: 0,
            upper: 1,
            intensity: Some(1000.0),
        },
        DiagramTransition {
            lower: 1,
            upper: 2,
            intensity: Some(300.0),
        },
        DiagramTransition {
            lower: 3,
            upper: 4,
            intensity: None,
        },
        DiagramTransition {
            lower: 1,
            upper: 4,
            intensity: Some(5.0),
        },
    ];
    TermDiagram {
        species: "He I".into(),
        source: "demo.csv".into(),
        levels,
        transitions,
        extra: vec![ExtraLevel {
            energy_cm1: 190_000.0,
            parity: Parity::Even,
            j: vec![HalfInt::from_twice(2), HalfInt::from_twice(4)],
            label: "X1".into(),
        }],
    }
}

fn ritz() -> RitzResiduals {
    RitzResiduals {
        source: "demo.csv".into(),
        outlier_sigma: 3.0,
        lines: [
            (17_000.0, 0.5, false),
            (17_500.0, -1.2, false),
            (18_000.0, 3.8, true),
        ]
        .iter()
        .map(|&(x, r, o)| RitzResidual {
            species: "He I".into(),
            wavenumber_cm1: x,
            residual_sigma: r,
            outlier: o,
        })
        .collect(),
    }
}

fn fit() -> FitResiduals {
    FitResiduals {
        species: "He I".into(),
        source: "demo.toml with demo.csv".into(),
        sigma_cm1: Some(12.0),
        levels: [
            (159_856.0, 10.0, false),
            (169_087.0, -14.0, true),
            (186_101.0, 3.0, false),
        ]
        .iter()
        .map(|&(e, d, odd)| FitResidual {
            energy_cm1: e,
            difference_cm1: d,
            odd,
        })
        .collect(),
    }
}

fn model() -> ModelSpectrumFigure {
    ModelSpectrumFigure {
        species: "Ca I".into(),
        source: "demo.toml".into(),
        all_vacuum: false,
        selection: "every line".into(),
        lines: [
            (422.67, 1.75, false),
            (657.28, 2e-5, true),
            (610.3, 0.3, false),
        ]
        .iter()
        .map(|&(w, gf, i)| ModelStick {
            wavelength_nm: w,
            gf,
            intercombination: i,
        })
        .collect(),
    }
}

fn window() -> StickWindow {
    StickWindow {
        axis: SpectrumAxis::Wavelength {
            air_formula: AirFormula::BirchDowns1994,
        },
        ..StickWindow::default()
    }
}

#[test]
fn every_figure_is_well_formed_renders_and_names_its_axes() {
    // Common practice, no source: a figure has a title and its axes say what they
    // show and in which unit.
    check_figure(
        "stick",
        &stick_spectrum_svg(&stick(), &window()).unwrap(),
        &[
            "Observed against predicted lines: demo.csv",
            "wavelength (nm, in air",
            "observed intensity",
        ],
    );
    check_figure(
        "boltzmann",
        &boltzmann_svg(&boltzmann()).unwrap(),
        &[
            "Boltzmann plot of Ne I",
            "upper level energy E_k (cm⁻¹)",
            "ln(I·λ/(g_k·A_ki))",
            "T_exc",
        ],
    );
    check_figure(
        "terms",
        &term_diagram_svg(&diagram()).unwrap(),
        &[
            "Term diagram of He I",
            "energy (cm⁻¹)",
            "energy (eV)",
            "3P°",
            "candidates",
        ],
    );
    check_figure(
        "ritz",
        &ritz_residuals_svg(&ritz()).unwrap(),
        &[
            "Observed − Ritz",
            "observed vacuum wavenumber (cm⁻¹)",
            "(σ_obs − σ_Ritz)/u",
        ],
    );
    check_figure(
        "fit",
        &fit_residuals_svg(&fit()).unwrap(),
        &[
            "E_exp − E_calc of He I",
            "experimental level energy E_exp (cm⁻¹)",
            "E_exp − E_calc (cm⁻¹)",
        ],
    );
    check_figure(
        "model",
        &model_spectrum_svg(&model()).unwrap(),
        &[
            "Lines of the level model of Ca I",
            "log₁₀ gf",
            "wavelength (nm",
        ],
    );
}

#[test]
fn golden_files_of_small_inputs() {
    golden(
        "stick.svg",
        &stick_spectrum_svg(&stick(), &window()).unwrap(),
    );
    golden("boltzmann.svg", &boltzmann_svg(&boltzmann()).unwrap());
    golden("terms.svg", &term_diagram_svg(&diagram()).unwrap());
    golden("ritz.svg", &ritz_residuals_svg(&ritz()).unwrap());
    golden("fit.svg", &fit_residuals_svg(&fit()).unwrap());
    golden("model.svg", &model_spectrum_svg(&model()).unwrap());
}

#[test]
fn normalising_rounds_decimals_and_keeps_integers() {
    assert_eq!(
        normalise(r#"x="12" y="3.14159" z="-0.04""#),
        r#"x="12" y="3.1" z="-0.0""#
    );
}

#[test]
fn term_diagram_marks_intercombination_single_line_and_candidate_levels() {
    // He I: 1s2p ³P°₂ – 1s3d ¹D₂ changes S (an intercombination line; common
    // practice, no source); the 3D level of the demo is fixed by one line.
    let svg = term_diagram_svg(&diagram()).unwrap();
    assert_eq!(svg.matches(r#"class="intercombination""#).count(), 1);
    assert_eq!(svg.matches(r#"class="transition""#).count(), 3);
    assert_eq!(svg.matches(r#"class="level single-line""#).count(), 1);
    assert_eq!(svg.matches(r#"class="level""#).count(), 4);
    assert_eq!(svg.matches(r#"class="candidate""#).count(), 1);
    // Columns by term: 3S, 3P°, 3D, 1P°, 1D (singlets first).
    let columns: Vec<String> = roxmltree::Document::parse(&svg)
        .unwrap()
        .descendants()
        .filter(|n| n.attribute("class") == Some("column"))
        .map(|n| n.text().unwrap_or_default().to_string())
        .collect();
    assert_eq!(columns, ["1P°", "1D", "3S", "3P°", "3D", "candidates"]);
}

#[test]
fn boltzmann_figure_states_the_temperature_of_its_slope() {
    // T_exc = −c₂/slope (Boltzmann factor, c₂ = hc/k from CODATA 2018): the number
    // printed in the figure is the fit's.
    let plot = boltzmann();
    let fit = plot.fit.unwrap();
    let t = fit.temperature_k.unwrap();
    assert!((t + SECOND_RADIATION_CONSTANT_CM_K / fit.slope_per_cm1).abs() < 1e-9);
    let svg = boltzmann_svg(&plot).unwrap();
    assert!(
        svg.contains(&format!("T_exc = −c₂/slope = {} ±", t.round())),
        "{t}"
    );
}

fn run(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_termsight"))
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

fn example() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/he-ne-teaching-tube/lines.csv")
}

#[test]
fn stick_spectrum_of_the_shipped_example_shows_every_line_and_assignment() {
    // Counted against the assign CSV of the same run: every observed line is one
    // black stick (stroke-width 2), every assigned line one connector, every
    // unassigned one cross; each kind has one more in the legend.
    let dir = tempfile::tempdir().unwrap();
    let svg_path = dir.path().join("stick.svg");
    let csv = run(&[
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
        "--plot",
        svg_path.to_str().unwrap(),
    ]);
    let rows: Vec<Vec<&str>> = csv
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').collect())
        .collect();
    let mut lines: Vec<&str> = rows.iter().map(|r| r[0]).collect();
    lines.dedup();
    let assigned = rows.iter().filter(|r| r[7] == "1").count();
    let unassigned = rows.iter().filter(|r| r[7].is_empty()).count();
    assert_eq!(lines.len(), 53);
    assert_eq!(assigned + unassigned, 53);
    assert!(unassigned >= 4, "the 4 spurious peaks");
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    texts(&svg);
    let count = |needle: &str| svg.matches(needle).count();
    assert_eq!(count(r##"stroke="#000000" stroke-width="2""##), 53 + 1);
    assert_eq!(
        count(r##"stroke="#1F5FAA" stroke-width="1""##),
        assigned + 1
    );
    assert_eq!(
        count(r##"stroke="#D66E00" stroke-width="2""##),
        unassigned + 1
    );
    check_figure(
        "example-stick",
        &svg,
        &["wavelength (nm, in air", "lines.csv"],
    );
}
