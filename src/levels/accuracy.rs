//! The accuracy codes that the compilations attach to transition probabilities.
//!
//! A module of its own because the build script reads the compiled line lists
//! with it (`build.rs`).

use serde::{Deserialize, Serialize};

/// The accuracy codes of the NIST ASD transition probabilities, with the upper bound
/// of the relative uncertainty of A each stands for (ASD's line-data help page;
/// values from memory): AAA ≤ 0.3 %, AA ≤ 1 %, A+ ≤ 2 %, A ≤ 3 %, B+ ≤ 7 %, B ≤ 10 %,
/// C+ ≤ 18 %, C ≤ 25 %, D+ ≤ 40 %, D ≤ 50 %, E > 50 %.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum AccuracyCode {
    /// ≤ 0.3 %.
    AAA,
    /// ≤ 1 %.
    AA,
    /// ≤ 2 %.
    APlus,
    /// ≤ 3 %.
    A,
    /// ≤ 7 %.
    BPlus,
    /// ≤ 10 %.
    B,
    /// ≤ 18 %.
    CPlus,
    /// ≤ 25 %.
    C,
    /// ≤ 40 %.
    DPlus,
    /// ≤ 50 %.
    D,
    /// > 50 %.
    E,
}

impl AccuracyCode {
    const NAMES: [(AccuracyCode, &'static str, f64); 11] = [
        (AccuracyCode::AAA, "AAA", 0.003),
        (AccuracyCode::AA, "AA", 0.01),
        (AccuracyCode::APlus, "A+", 0.02),
        (AccuracyCode::A, "A", 0.03),
        (AccuracyCode::BPlus, "B+", 0.07),
        (AccuracyCode::B, "B", 0.10),
        (AccuracyCode::CPlus, "C+", 0.18),
        (AccuracyCode::C, "C", 0.25),
        (AccuracyCode::DPlus, "D+", 0.40),
        (AccuracyCode::D, "D", 0.50),
        (AccuracyCode::E, "E", f64::INFINITY),
    ];

    /// The code as printed (`A+`).
    pub fn name(self) -> &'static str {
        Self::NAMES.iter().find(|n| n.0 == self).map_or("", |n| n.1)
    }

    /// Read a printed code.
    pub fn from_name(name: &str) -> Option<AccuracyCode> {
        Self::NAMES.iter().find(|n| n.1 == name).map(|n| n.0)
    }

    /// The upper bound of the relative uncertainty of A (infinite for E).
    pub fn relative_uncertainty(self) -> f64 {
        Self::NAMES
            .iter()
            .find(|n| n.0 == self)
            .map_or(f64::INFINITY, |n| n.2)
    }
}
