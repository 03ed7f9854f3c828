//! Lid-driven square cavity at Re = 100: centre-line velocities of
//! Ghia, Ghia & Shin 1982, "High-Re solutions for incompressible flow using the Navier–Stokes
//! equations and a multigrid method", J. Comput. Phys. 48, pp. 387–411.
//!
//! Values recalled from memory of Ghia, Ghia & Shin 1982, Table I and II, Re = 100 column.
//! Coordinates are scaled by the cavity side, velocities by the lid speed; the lid is at y = 1
//! moving along +x. Checked for plausibility against the well-known features of that flow:
//! u min ≈ −0.21 near y ≈ 0.45, v max ≈ 0.18 near x ≈ 0.23, v min ≈ −0.25 near x ≈ 0.81.

/// A table of (coordinate, value) pairs with strictly increasing coordinates.
#[derive(Clone, Copy, Debug)]
pub struct CentrelineTable {
    /// Scaled coordinates along the centre line, increasing.
    pub coordinate: &'static [f64],
    /// Scaled velocity component at each coordinate.
    pub value: &'static [f64],
}

/// u/U_lid along the vertical centre line x = 0.5, against y/L (Ghia, Ghia & Shin 1982, Table I,
/// Re = 100; recalled from memory).
pub const GHIA_RE100_U: CentrelineTable = CentrelineTable {
    coordinate: &[
        0.0000, 0.0547, 0.0625, 0.0703, 0.1016, 0.1719, 0.2813, 0.4531, 0.5000, 0.6172, 0.7344,
        0.8516, 0.9531, 0.9609, 0.9688, 0.9766, 1.0000,
    ],
    value: &[
        0.00000, -0.03717, -0.04192, -0.04775, -0.06434, -0.10150, -0.15662, -0.21090, -0.20581,
        -0.13641, 0.00332, 0.23151, 0.68717, 0.73722, 0.78871, 0.84123, 1.00000,
    ],
};

/// v/U_lid along the horizontal centre line y = 0.5, against x/L (Ghia, Ghia & Shin 1982,
/// Table II, Re = 100; recalled from memory).
pub const GHIA_RE100_V: CentrelineTable = CentrelineTable {
    coordinate: &[
        0.0000, 0.0625, 0.0703, 0.0781, 0.0938, 0.1563, 0.2266, 0.2344, 0.5000, 0.8047, 0.8594,
        0.9063, 0.9453, 0.9531, 0.9609, 0.9688, 1.0000,
    ],
    value: &[
        0.00000, 0.09233, 0.10091, 0.10890, 0.12317, 0.16077, 0.17507, 0.17527, 0.05454, -0.24533,
        -0.22445, -0.16914, -0.10313, -0.08864, -0.07391, -0.05906, 0.00000,
    ],
};

impl CentrelineTable {
    /// Linear interpolation in the table at scaled coordinate `s`; `None` outside [first, last].
    pub fn interpolate(&self, s: f64) -> Option<f64> {
        let xs = self.coordinate;
        let (first, last) = (xs[0], xs[xs.len() - 1]);
        if !(first..=last).contains(&s) {
            return None;
        }
        // Index of the first coordinate ≥ s (at least 1 since s ≥ first).
        let hi = xs.partition_point(|&x| x < s).max(1);
        let lo = hi - 1;
        let w = (s - xs[lo]) / (xs[hi] - xs[lo]);
        Some(self.value[lo] + w * (self.value[hi] - self.value[lo]))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn extreme(table: &CentrelineTable, max: bool) -> (f64, f64) {
        let mut best = (table.coordinate[0], table.value[0]);
        for (&c, &v) in table.coordinate.iter().zip(table.value) {
            if (max && v > best.1) || (!max && v < best.1) {
                best = (c, v);
            }
        }
        best
    }

    #[test]
    fn tables_are_well_formed() {
        for t in [GHIA_RE100_U, GHIA_RE100_V] {
            assert_eq!(t.coordinate.len(), 17);
            assert_eq!(t.value.len(), 17);
            assert!(t.coordinate.windows(2).all(|w| w[0] < w[1]));
        }
        // No slip on the fixed walls, lid speed at the top (boundary values of the tables).
        assert_eq!(GHIA_RE100_U.value[0], 0.0);
        assert_eq!(GHIA_RE100_U.value[16], 1.0);
        assert_eq!(GHIA_RE100_V.value[0], 0.0);
        assert_eq!(GHIA_RE100_V.value[16], 0.0);
    }

    #[test]
    fn extremes_are_where_the_re100_vortex_puts_them() {
        let (y, u) = extreme(&GHIA_RE100_U, false);
        assert!((u + 0.21).abs() < 0.01 && (y - 0.45).abs() < 0.02);
        let (x, v) = extreme(&GHIA_RE100_V, true);
        assert!((v - 0.18).abs() < 0.01 && (x - 0.23).abs() < 0.02);
        let (x, v) = extreme(&GHIA_RE100_V, false);
        assert!((v + 0.25).abs() < 0.01 && (x - 0.81).abs() < 0.02);
    }

    #[test]
    fn interpolation_hits_nodes_and_midpoints() {
        let t = GHIA_RE100_U;
        for (&c, &v) in t.coordinate.iter().zip(t.value) {
            assert!((t.interpolate(c).unwrap() - v).abs() < 1e-15);
        }
        let mid = 0.5 * (0.5000 + 0.6172);
        let expect = 0.5 * (-0.20581 + -0.13641);
        assert!((t.interpolate(mid).unwrap() - expect).abs() < 1e-15);
        assert_eq!(t.interpolate(-0.01), None);
        assert_eq!(t.interpolate(1.01), None);
    }
}
