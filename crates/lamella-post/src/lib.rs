//! Analyses of Lamella runs and the reference solutions they are compared with.

pub mod norms;
pub mod reference;
