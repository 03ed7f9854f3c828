//! Neighbour search for particle methods (no physics here).

mod vector;

pub use vector::Vector;
