//! Integration tests, one binary: each module is a topic.

mod assign_reference;
