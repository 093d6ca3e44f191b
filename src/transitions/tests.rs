//! Tests of the transitions module.
