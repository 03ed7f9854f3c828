//! Particle regularisation by shifting, kept from carrying particles across a phase interface.

use lamella_cells::Vector;

/// How particle positions are kept regular over long runs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Regularisation {
    /// Particles move with the flow only.
    None,
    /// Fickian particle shifting (Lind et al. 2012, J. Comput. Phys. 231, 1499–1523):
    /// δr = −D ∇C with D = A h |v|max dt (the form of Skillen et al. 2013, Comput. Methods Appl.
    /// Mech. Eng. 265), A the dimensionless `coefficient` (1 … 6 in those papers).
    Shifting {
        /// A in D = A h |v|max dt.
        coefficient: f64,
    },
}

/// The shift of one particle, −D ∇C, with the part along `interface_normal` removed where that
/// is not zero, so shifting never moves such a particle towards or away from the interface (only
/// along it). The solver gives a normal to the particles on the more viscous side of an
/// interface only ([`crate::forces::Rates::interface_normal`]): they carry the interface's shape,
/// and the runnier liquid's particles are shifted freely against them (held on both sides, the
/// runny rows next to the interface sit out of place; DEVELOPERS.md). With D in m² the result is
/// the displacement δr (m); the solver passes D/dt (m²/s) and gets the shifting velocity
/// δv = δr/dt (m/s).
#[inline]
pub fn shift<V: Vector>(diffusivity: f64, concentration_gradient: V, interface_normal: V) -> V {
    let mut delta = concentration_gradient * (-diffusivity);
    let n2 = interface_normal.length_squared();
    if n2 > 0.0 {
        delta -= interface_normal * (delta.dot(interface_normal) / n2);
    }
    delta
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    #[test]
    fn shift_descends_the_concentration_gradient_and_stays_on_the_interface() {
        let g = DVec2::new(3.0, 4.0);
        assert!((shift(0.1, g, DVec2::ZERO) - DVec2::new(-0.3, -0.4)).length() < 1e-15);
        let along = shift(0.1, g, DVec2::new(0.0, 2.0));
        assert!((along - DVec2::new(-0.3, 0.0)).length() < 1e-15);
    }
}
