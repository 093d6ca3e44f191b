//! Integration tests, built as one binary: one module per topic, shared helpers in
//! `util`.

mod assign_cli;
mod assign_reference;
mod units;
mod util;
