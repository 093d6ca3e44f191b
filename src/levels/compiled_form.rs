//! The compact form in which the compiled spectra are built into the program.
//!
//! The build script (`build.rs`) reads each published table of `reference-levels/`
//! with the program's own readers ([`super::read_level_table`],
//! [`super::rates::read_rates`]), so that a defect is a build error naming the file
//! and line, and writes what they give, levels, the warnings kept with them and the
//! published lines, as one [`CompiledSpectrum`] in postcard's binary encoding. The
//! program decodes it when a spectrum is used: no text is parsed, no label
//! re-checked at run time. Everything the tables mark (bracketed energies, `+x`
//! offsets, uncertain labels, label warnings) is carried unchanged; the tests
//! compare the decoded form with a fresh reading of every table.
//!
//! postcard (a serde format) rather than a hand-written encoding: the levels are
//! nested types (configurations with parents, terms in several couplings) that
//! already derive serde's traits.

use serde::{Deserialize, Serialize};

use super::rates::PublishedLine;
use super::table::Level;

/// One compiled spectrum, as built into the program.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CompiledSpectrum {
    /// The levels, in the table's order.
    pub levels: Vec<Level>,
    /// The table's warnings (levels kept as published although odd), each as
    /// (1-based line, column, what is odd).
    pub warnings: Vec<(usize, Option<String>, String)>,
    /// The published lines, in the line list's order (empty without one).
    pub published: Vec<PublishedLine>,
}

impl CompiledSpectrum {
    /// The binary form (written by `build.rs` only).
    #[allow(dead_code)]
    pub fn encode(&self) -> Result<Vec<u8>, postcard::Error> {
        postcard::to_allocvec(self)
    }

    /// Read the binary form.
    pub fn decode(bytes: &[u8]) -> Result<CompiledSpectrum, postcard::Error> {
        postcard::from_bytes(bytes)
    }
}
