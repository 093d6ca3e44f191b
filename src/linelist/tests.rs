//! Tests of the line-list reader.
