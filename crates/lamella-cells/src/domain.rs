//! The axis-aligned box particles live in, with optional periodic axes.

use crate::{CellError, Vector};

/// An axis-aligned box `[lower, upper]`; periodic axes repeat with period `upper - lower`.
///
/// Only the first `V::DIM` entries of `periodic` matter.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Domain<V: Vector> {
    /// Lower corner.
    pub lower: V,
    /// Upper corner.
    pub upper: V,
    /// Which axes are periodic (x, y, z).
    pub periodic: [bool; 3],
}

impl<V: Vector> Domain<V> {
    /// A domain with finite bounds and `lower < upper` on every axis.
    pub fn new(lower: V, upper: V, periodic: [bool; 3]) -> Result<Self, CellError> {
        for axis in 0..V::DIM {
            let (lo, up) = (lower.get(axis), upper.get(axis));
            if !(lo.is_finite() && up.is_finite() && lo < up) {
                return Err(CellError::InvalidDomain {
                    axis,
                    lower: lo,
                    upper: up,
                });
            }
        }
        Ok(Self {
            lower,
            upper,
            periodic,
        })
    }

    /// `upper - lower`.
    #[inline]
    pub fn extent(&self) -> V {
        self.upper - self.lower
    }

    /// True when `axis` is periodic.
    #[inline]
    pub fn is_periodic(&self, axis: usize) -> bool {
        self.periodic[axis]
    }

    /// The shortest periodic image of a displacement: on each periodic axis of length `L`
    /// the component is shifted by a whole number of periods into `[-L/2, L/2]`.
    #[inline]
    pub fn minimum_image(&self, mut d: V) -> V {
        for axis in 0..V::DIM {
            if self.periodic[axis] {
                let length = self.upper.get(axis) - self.lower.get(axis);
                d.set(axis, fold(d.get(axis), length, 0.5 * length));
            }
        }
        d
    }

    /// The position folded into `[lower, upper)` on periodic axes (other axes unchanged).
    #[inline]
    pub fn wrap(&self, mut x: V) -> V {
        for axis in 0..V::DIM {
            if self.periodic[axis] {
                let (lo, up) = (self.lower.get(axis), self.upper.get(axis));
                x.set(axis, wrap_coordinate(x.get(axis), lo, up));
            }
        }
        x
    }
}

/// Minimum image of one displacement component on a periodic axis of length `length`
/// (`half = length / 2`): `d − L·round(d/L)`, skipped when `|d| ≤ L/2` already.
#[inline(always)]
pub(crate) fn fold(d: f64, length: f64, half: f64) -> f64 {
    if d.abs() <= half {
        d
    } else {
        d - length * (d / length).round()
    }
}

/// One coordinate folded into `[lower, upper)`.
#[inline]
pub(crate) fn wrap_coordinate(x: f64, lower: f64, upper: f64) -> f64 {
    if x >= lower && x < upper {
        return x;
    }
    let wrapped = lower + (x - lower).rem_euclid(upper - lower);
    // Rounding can land exactly on `upper`, which is the same point as `lower`.
    if wrapped >= upper { lower } else { wrapped }
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::{DVec2, DVec3};

    #[test]
    fn rejects_empty_and_non_finite_boxes() {
        assert!(matches!(
            Domain::new(DVec2::ZERO, DVec2::new(1.0, 0.0), [false; 3]),
            Err(CellError::InvalidDomain { axis: 1, .. })
        ));
        assert!(Domain::new(DVec2::ZERO, DVec2::new(f64::INFINITY, 1.0), [false; 3]).is_err());
        assert!(Domain::new(DVec3::ZERO, DVec3::ONE, [true; 3]).is_ok());
    }

    #[test]
    fn minimum_image_and_wrap_on_periodic_axes_only() {
        let d = Domain::new(DVec2::ZERO, DVec2::new(2.0, 4.0), [true, false, false]).unwrap();
        assert_eq!(d.minimum_image(DVec2::new(1.5, 3.0)), DVec2::new(-0.5, 3.0));
        assert_eq!(
            d.minimum_image(DVec2::new(-7.5, -3.0)),
            DVec2::new(0.5, -3.0)
        );
        assert_eq!(d.wrap(DVec2::new(-0.5, 9.0)), DVec2::new(1.5, 9.0));
        assert_eq!(d.wrap(DVec2::new(2.0, 0.0)), DVec2::new(0.0, 0.0));
        assert_eq!(d.wrap(DVec2::new(-1e-18, 0.0)).x, 0.0);
        assert_eq!(d.extent(), DVec2::new(2.0, 4.0));
    }
}
