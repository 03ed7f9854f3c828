//! The dimension-generic vector every Lamella crate computes with.
//!
//! Particle positions, velocities and forces are `V: Vector`, implemented for
//! `glam::DVec2` (2D) and `glam::DVec3` (3D), so 3D needs no rewrite of generic code.

use std::fmt::Debug;
use std::ops::{Add, AddAssign, Div, Mul, Neg, Sub, SubAssign};

use glam::{DVec2, DVec3};

/// A fixed-dimension vector of `f64` components.
pub trait Vector:
    Copy
    + Send
    + Sync
    + Debug
    + Default
    + PartialEq
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<f64, Output = Self>
    + Div<f64, Output = Self>
    + AddAssign
    + SubAssign
    + Neg<Output = Self>
    + 'static
{
    /// Number of components (2 or 3).
    const DIM: usize;
    /// The zero vector.
    const ZERO: Self;

    /// Dot product.
    fn dot(self, other: Self) -> f64;
    /// Component `axis` (0 = x, 1 = y, 2 = z).
    fn get(self, axis: usize) -> f64;
    /// Sets component `axis`.
    fn set(&mut self, axis: usize, value: f64);
    /// Builds a vector component by component.
    fn from_fn(f: impl FnMut(usize) -> f64) -> Self;
    /// The components of `points` as one flat slice (`x0, y0, [z0,] x1, ...`).
    fn flatten(points: &[Self]) -> &[f64];

    /// Squared Euclidean length.
    #[inline]
    fn length_squared(self) -> f64 {
        self.dot(self)
    }
    /// Euclidean length.
    #[inline]
    fn length(self) -> f64 {
        self.length_squared().sqrt()
    }
    /// True when every component is finite.
    #[inline]
    fn is_finite_vector(self) -> bool {
        (0..Self::DIM).all(|axis| self.get(axis).is_finite())
    }
}

impl Vector for DVec2 {
    const DIM: usize = 2;
    const ZERO: Self = DVec2::ZERO;

    #[inline]
    fn dot(self, other: Self) -> f64 {
        DVec2::dot(self, other)
    }
    #[inline]
    fn get(self, axis: usize) -> f64 {
        self[axis]
    }
    #[inline]
    fn set(&mut self, axis: usize, value: f64) {
        self[axis] = value;
    }
    #[inline]
    fn from_fn(mut f: impl FnMut(usize) -> f64) -> Self {
        DVec2::new(f(0), f(1))
    }
    #[inline]
    fn flatten(points: &[Self]) -> &[f64] {
        bytemuck::cast_slice(points)
    }
}

impl Vector for DVec3 {
    const DIM: usize = 3;
    const ZERO: Self = DVec3::ZERO;

    #[inline]
    fn dot(self, other: Self) -> f64 {
        DVec3::dot(self, other)
    }
    #[inline]
    fn get(self, axis: usize) -> f64 {
        self[axis]
    }
    #[inline]
    fn set(&mut self, axis: usize, value: f64) {
        self[axis] = value;
    }
    #[inline]
    fn from_fn(mut f: impl FnMut(usize) -> f64) -> Self {
        DVec3::new(f(0), f(1), f(2))
    }
    #[inline]
    fn flatten(points: &[Self]) -> &[f64] {
        bytemuck::cast_slice(points)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn components_round_trip_in_2d_and_3d() {
        let a = DVec2::from_fn(|i| i as f64 + 1.0);
        assert_eq!((a.get(0), a.get(1)), (1.0, 2.0));
        let mut b = DVec3::ZERO;
        b.set(2, 4.0);
        assert_eq!(b.length(), 4.0);
        assert_eq!(<DVec3 as Vector>::DIM, 3);
        assert!(!DVec2::new(f64::NAN, 0.0).is_finite_vector());
        let points = [DVec3::new(1.0, 2.0, 3.0), DVec3::new(4.0, 5.0, 6.0)];
        assert_eq!(DVec3::flatten(&points), &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0]);
        assert_eq!(DVec2::flatten(&[DVec2::new(7.0, 8.0)]), &[7.0, 8.0]);
    }
}
