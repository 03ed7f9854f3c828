//! Neighbour search for particle methods (no physics here).
//!
//! A [`CellList`] bins particles into a uniform grid of cells at least one search radius
//! wide, sorts them by cell with a parallel counting sort, and visits, for any particle,
//! every other particle closer than the radius with its minimum-image displacement.
//! Periodic axes need no ghost copies. 2D and 3D share one implementation over [`Vector`].

mod caller_order;
mod cell_list;
mod domain;
mod error;
mod grid;
mod permute;
mod prefetch;
mod scan;
mod vector;

pub use caller_order::CallerOrder;
pub use cell_list::{CellList, MAX_PARTICLES};
pub use domain::Domain;
pub use error::CellError;
pub use grid::MAX_CELLS;
pub use permute::apply_permutation;
pub use vector::Vector;
