//! Analyses of Lamella runs and the reference solutions they are compared with.

pub mod convergence;
pub mod fit;
pub mod ftle;
pub mod grid;
pub mod growth;
pub mod interface;
pub mod mixing;
pub mod neighbours;
pub mod norms;
pub mod number;
pub mod plot;
pub mod profile;
pub mod reference;
pub mod stability;
pub mod table;
pub mod vtk;
