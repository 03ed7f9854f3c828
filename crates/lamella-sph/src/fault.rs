//! Why a step was refused: the particle, the place, the time and the likely cause.

use std::fmt;

use lamella_cells::Vector;

/// What went wrong with a particle.
#[derive(Clone, Debug, PartialEq)]
pub enum FaultCause {
    /// A position, velocity or density became NaN or infinite.
    NonFinite,
    /// |ρ − ρ0|/ρ0 exceeded the case's tolerance.
    DensityDeviation {
        /// The relative deviation reached.
        relative: f64,
        /// The case's bound.
        tolerance: f64,
    },
    /// A fluid particle left the domain on a non-periodic axis (it went through a wall).
    LeftDomain {
        /// The axis (0 = x, 1 = y, 2 = z).
        axis: usize,
    },
    /// The neighbour search refused the positions.
    NeighbourSearch(String),
    /// The implicit viscous solve did not reach its tolerance; the particle is the one with
    /// the largest residual.
    ViscousSolve {
        /// Iterations taken.
        iterations: u32,
        /// Relative residual reached.
        relative_residual: f64,
        /// The tolerance asked for.
        tolerance: f64,
    },
}

/// A refused step. The simulation keeps the last good state (the one before this step).
#[derive(Clone, Debug, PartialEq)]
pub struct Fault<V> {
    /// Stable id of the offending particle.
    pub id: u64,
    /// Its position in the refused step (m).
    pub position: V,
    /// Simulated time of the last good state (s).
    pub time: f64,
    /// Step number of the last good state.
    pub step: u64,
    /// What went wrong.
    pub cause: FaultCause,
}

impl<V: Vector> fmt::Display for Fault<V> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let coords: Vec<String> = (0..V::DIM)
            .map(|k| format!("{:.6e}", self.position.get(k)))
            .collect();
        write!(
            f,
            "particle {} at ({}) m after t = {:.6e} s (step {}): ",
            self.id,
            coords.join(", "),
            self.time,
            self.step
        )?;
        match &self.cause {
            FaultCause::NonFinite => write!(
                f,
                "its state became non-finite (NaN or infinity). Likely cause: the time step is too \
                 large for the forces (lower the time-step factors) or the resolution is too coarse \
                 for the flow (smaller spacing)"
            ),
            FaultCause::DensityDeviation {
                relative,
                tolerance,
            } => write!(
                f,
                "its density deviates {:.2} % from the reference, beyond the bound of {:.2} %. Likely \
                 cause: the sound speed is too low for the flow speed (raise the sound speed or the \
                 expected maximum speed, common practice c0 ≥ 10·Umax), or the time step is too large",
                100.0 * relative,
                100.0 * tolerance
            ),
            FaultCause::LeftDomain { axis } => write!(
                f,
                "it left the domain along axis {} through a wall. Likely cause: the sound speed is \
                 too low to hold the fluid off the wall, the time step is too large, or too few wall \
                 layers for the kernel support",
                ["x", "y", "z"][*axis]
            ),
            FaultCause::NeighbourSearch(message) => write!(f, "{message}"),
            FaultCause::ViscousSolve {
                iterations,
                relative_residual,
                tolerance,
            } => write!(
                f,
                "the implicit viscous solve stopped after {iterations} iterations at a relative \
                 residual of {relative_residual:.3e}, above its tolerance {tolerance:.1e}. Likely \
                 cause: the state is already unstable (check the sound speed and the time-step \
                 factors), or the tolerance is tighter than round-off allows (raise \
                 viscosity_treatment's tolerance or max_iterations)"
            ),
        }
    }
}

impl<V: Vector> std::error::Error for Fault<V> {}
