//! Integration tests, built as one binary: one module per topic, shared helpers in
//! `util`.

mod radial;
mod units;
mod util;
