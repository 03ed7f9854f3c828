//! The interface mode linear theory predicts for a run of a two-layer channel case: the
//! leading eigenvalue of [`CaseChannel`]'s stability problem at the wavelength a run records.

use std::path::Path;

use lamella_case::Case;
use lamella_post::stability;

use super::AnalysisError;
use crate::channel::CaseChannel;

/// A predicted interface mode in the case's units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Prediction {
    /// Temporal growth rate (1/s).
    pub rate: f64,
    /// Phase speed along x (m/s).
    pub wave_speed: f64,
}

/// The predicted growth rate and wave speed of the interface mode a run of `case` (read from
/// `path`, which error messages name) records ([`Case::tracked_wavelength`]).
pub fn predicted_mode(case: &Case, path: &Path) -> Result<Prediction, AnalysisError> {
    let channel = CaseChannel::of(case).map_err(|err| match err {
        crate::channel::ChannelError::Ratios(err) => AnalysisError::from(err),
        other => AnalysisError::BadInput(format!("{}: {other}", path.display())),
    })?;
    let alpha = channel.wavenumber(case.tracked_wavelength());
    let mode = stability::leading_checked(&channel.problem(alpha))?;
    Ok(Prediction {
        rate: channel.growth_rate(alpha, mode.speed),
        wave_speed: channel.wave_speed(mode.speed),
    })
}

#[cfg(test)]
mod tests {
    //! The eigenmode seed against the predicted mode.
    use super::predicted_mode;
    use crate::eigenmode::EigenmodeSeed;
    use crate::reference::channel_reference;
    use lamella_case::{Case, SeedMode};
    use std::path::Path;

    fn growing(mode: SeedMode) -> Case {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../cases/interface-growth.ron");
        let mut case = lamella_case::load(&path).expect("bundled case");
        case.interface_perturbation.as_mut().expect("seeded").mode = mode;
        case
    }

    /// Checks the kinematic condition at the interface in SI, against the predicted mode
    /// ([`predicted_mode`]): the seeded interface η = A sin(k(x − x0)) must move as the mode does,
    /// η(x, t) = A e^{σt} sin(k(x − x0 − c t)), so at t = 0 the fluid there moves vertically
    /// with v = ∂η/∂t + U_i ∂η/∂x = A [σ sin(kξ) + k (U_i − c) cos(kξ)] (Yih 1967, §2).
    fn assert_interface_moves_with_the_predicted_wave(case: &Case) {
        let path = Path::new("interface-growth.ron");
        let predicted = predicted_mode(case, path).expect("a predicted mode");
        let (rate, speed) = (predicted.rate, predicted.wave_speed);
        let seed = EigenmodeSeed::of(case).expect("solved").expect("asked for");
        let p = case.interface_perturbation.as_ref().unwrap();
        let pair = case.tracked_interface().unwrap();
        let bottom = case.domain.lower[1];
        let interface_speed = channel_reference(case)
            .unwrap()
            .steady_velocity_in_layer(pair.interface - bottom, false);
        let k = std::f64::consts::TAU / p.wavelength;
        let scale = p.amplitude * k * interface_speed.abs();
        for x in [0.0, 1.7e-4, 4.1e-4, 9.0e-4] {
            let xi = k * (x - case.domain.lower[0]);
            let expected =
                p.amplitude * (rate * xi.sin() + k * (interface_speed - speed) * xi.cos());
            for upper in [false, true] {
                let v = seed.velocity([x, pair.interface], upper)[1];
                assert!(
                    (v - expected).abs() < 1e-7 * scale,
                    "x = {x}, upper {upper}: v = {v}, expected {expected}"
                );
            }
        }
    }

    #[test]
    fn the_seeded_interface_moves_at_the_predicted_growth_rate_and_wave_speed() {
        assert_interface_moves_with_the_predicted_wave(&growing(SeedMode::Eigenmode));
    }

    #[test]
    fn a_flow_towards_minus_x_gets_the_mirrored_mode() {
        let mut case = growing(SeedMode::Eigenmode);
        let force = case.body_force.as_mut().unwrap();
        force[0] = -force[0];
        assert_interface_moves_with_the_predicted_wave(&case);
        let forward = EigenmodeSeed::of(&growing(SeedMode::Eigenmode))
            .unwrap()
            .unwrap();
        let backward = EigenmodeSeed::of(&case).unwrap().unwrap();
        let (length, y) = (case.extent(0), 0.45e-3);
        for x in [1.0e-4, 5.0e-4] {
            let [u, v] = forward.velocity([x, y], false);
            // x → −x maps the forward flow onto the backward one and its seed A sin(kx) onto
            // −A sin(kx), and velocities (u, v) onto (−u, v); with the period L the backward
            // field at L − x is then (u, −v) of the forward field at x.
            let [um, vm] = backward.velocity([length - x, y], false);
            assert!((um - u).abs() < 1e-12 * u.abs().max(1e-12), "{um} vs {u}");
            assert!((vm + v).abs() < 1e-12 * v.abs().max(1e-12), "{vm} vs {v}");
        }
    }

    #[test]
    fn displacement_seeds_and_unseeded_cases_have_no_mode() {
        assert_eq!(
            EigenmodeSeed::of(&growing(SeedMode::Displacement)),
            Ok(None)
        );
        let mut case = growing(SeedMode::Eigenmode);
        case.interface_perturbation = None;
        assert_eq!(EigenmodeSeed::of(&case), Ok(None));
    }
}
