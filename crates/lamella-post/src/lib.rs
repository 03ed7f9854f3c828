//! Analyses of Lamella runs and the reference solutions they are compared with.

pub mod convergence;
pub mod fit;
pub mod growth;
pub mod norms;
pub mod profile;
pub mod reference;
