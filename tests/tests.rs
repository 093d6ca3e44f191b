//! Integration tests, built as one binary: one module per topic, shared helpers in
//! `util`.

mod units;
mod util;
