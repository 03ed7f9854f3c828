//! Errors of the neighbour search: each names the particle or the setting at fault and the fix.

/// Why a domain, a cell list or a rebuild was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CellError {
    /// A particle lies outside the domain on a non-periodic axis.
    #[error(
        "particle {index} at {position:?} lies outside the neighbour-search domain on a \
         non-periodic axis; enlarge the domain so that it holds every particle (wall particles \
         included) or make that axis periodic"
    )]
    OutsideDomain {
        /// Index of the particle in the slice given to `rebuild`.
        index: usize,
        /// Its coordinates.
        position: Vec<f64>,
    },
    /// A particle has a NaN or infinite coordinate.
    #[error(
        "particle {index} has a non-finite coordinate (NaN or infinity); the state was corrupted \
         before the neighbour search, which usually means the run went unstable: reduce the time \
         step or check the case set-up"
    )]
    NonFinite {
        /// Index of the particle in the slice given to `rebuild`.
        index: usize,
    },
    /// The domain bounds are not finite or not ordered.
    #[error(
        "domain axis {axis} has lower bound {lower} and upper bound {upper}; both must be finite \
         with lower < upper"
    )]
    InvalidDomain {
        /// The axis at fault (0 = x, 1 = y, 2 = z).
        axis: usize,
        /// Lower bound given.
        lower: f64,
        /// Upper bound given.
        upper: f64,
    },
    /// The search radius is not a finite positive number.
    #[error("search radius {radius} must be finite and positive")]
    InvalidRadius {
        /// The radius given.
        radius: f64,
    },
    /// A periodic axis is too short for the minimum image to be unique.
    #[error(
        "periodic axis {axis} is {extent} long, less than twice the search radius {radius}, so a \
         particle would meet several images of one neighbour; make that axis at least {} long or \
         reduce the radius",
        2.0 * radius
    )]
    PeriodicTooShort {
        /// The axis at fault.
        axis: usize,
        /// Its length.
        extent: f64,
        /// The search radius.
        radius: f64,
    },
    /// The grid would need more cells than the structure can index.
    #[error(
        "the cell grid would need {cells:.3e} cells, more than the limit of {limit}; enlarge the \
         search radius or shrink the domain to the region the particles occupy"
    )]
    TooManyCells {
        /// Cells the grid would need.
        cells: f64,
        /// The largest supported cell count.
        limit: usize,
    },
    /// More particles than 32-bit indices can address.
    #[error("{count} particles exceed the limit of {limit} particles of one cell list")]
    TooManyParticles {
        /// Particles given.
        count: usize,
        /// The largest supported count.
        limit: usize,
    },
}
