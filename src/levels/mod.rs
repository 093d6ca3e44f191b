//! Level tables, Ritz predictions and level optimisation.

pub mod optimize;
