//! Derived quantities of the bundled cases, checked against values worked by hand.

use std::path::PathBuf;

use lamella_case::{Case, ChannelFlow, SeedMode, load};

fn case(name: &str) -> Case {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../cases")
        .join(name);
    load(&path).unwrap_or_else(|err| panic!("{err}"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * b.abs()
}

#[test]
fn two_layer_channel_ratios_and_scales() {
    let c = case("two-layer-channel.ron");
    assert!(close(c.smoothing_length(), 1.3 * 4.0e-5));
    assert!(close(c.support_radius(), 2.0 * 1.3 * 4.0e-5));
    let pairs = c.layer_pairs();
    assert_eq!(pairs.len(), 1);
    let pair = &pairs[0];
    assert_eq!((pair.lower, pair.upper), (0, 1));
    assert!(close(pair.viscosity_ratio, 5.0), "{pair:?}");
    assert!(close(pair.width_ratio, 2.0), "{pair:?}");
    assert!(close(pair.interface, 0.8e-3));
    // c0² = max(U²/δ, ν_max U/(L δ), F L/δ) (Morris, Fox & Zhu 1997 §2.4), δ = 0.01:
    // U²/δ = 1.6e-3, ν U/(L δ) = 5e-6·4e-3/(1.2e-3·0.01) = 1.667e-3, F L/δ = 0.05·1.2e-3/0.01 = 6e-3.
    assert!(
        close(c.sound_speed(), 6.0e-3f64.sqrt()),
        "{}",
        c.sound_speed()
    );
    // Re = U L / ν_min = 4e-3 · 1.2e-3 / 1e-6 = 4.8.
    assert!(close(c.reynolds_number(), 4.8));
    assert!(close(c.viscosity_contrast(), 5.0));
    assert!(close(c.max_kinematic_viscosity(), 5.0e-6));
}

#[test]
fn sound_speed_floor_is_ten_times_the_speed_without_force() {
    // Cavity: no body force, ν U/(L δ) = 1e-6·0.1/(1e-3·0.01) = 0.01 < U²/δ = 1, so c0 = 10 U.
    let c = case("cavity-re100.ron");
    assert!(close(c.sound_speed(), 1.0));
    assert!(close(c.reynolds_number(), 100.0));
    assert!(c.layer_pairs().is_empty());
}

#[test]
fn given_sound_speed_wins() {
    let mut c = case("poiseuille.ron");
    c.scales.sound_speed = Some(3.0);
    assert_eq!(c.sound_speed(), 3.0);
}

#[test]
fn tracked_interface_wavelength_and_start_up() {
    let c = case("two-layer-channel-seeded.ron");
    let tracked = c.tracked_interface().expect("a layered case");
    assert!(close(tracked.interface, 0.8e-3));
    assert!(close(c.tracked_wavelength(), 4.8e-3));
    // It starts on the steady profile: nothing to settle.
    assert_eq!(c.start_up_time(), 0.0);
    // From rest: ln(100) H²/(π² ν_min) = 4.605 · (1.2e-3)² / (9.8696 · 1e-6) = 0.6720 s.
    let plain = case("two-layer-channel.ron");
    let expected = 100f64.ln() * 1.2e-3 * 1.2e-3 / (std::f64::consts::PI.powi(2) * 1.0e-6);
    assert!(
        close(plain.start_up_time(), expected),
        "{}",
        plain.start_up_time()
    );
    assert!((plain.start_up_time() - 0.6720).abs() < 1e-4);
    // Without a seed the tracked wave is the periodic length; a cavity has no interface pair.
    assert!(close(plain.tracked_wavelength(), plain.extent(0)));
    assert!(case("cavity-re100.ron").tracked_interface().is_none());
}

#[test]
fn unequal_densities_drive_each_layer_by_its_own_force_and_non_channels_say_why() {
    // A horizontal channel under a body force g along x: layer i feels ρ_i g (Bird, Stewart &
    // Lightfoot §2.5 with a force of each layer's own), so unequal densities still have the
    // layered reference.
    let mut c = case("two-layer-channel.ron");
    let g = c.body_force.as_ref().unwrap()[0];
    c.phases[0].density = 1300.0;
    match c.channel_flow() {
        Some(ChannelFlow::TwoLayers {
            force_density,
            upper_force_density,
            ..
        }) => {
            assert_eq!(force_density, 1300.0 * g);
            assert_eq!(upper_force_density, 1000.0 * g);
        }
        other => panic!("expected two layers, got {other:?}"),
    }
    // A force across the channel, or no periodic x: no reference, and the reason names it.
    let mut tilted = c.clone();
    tilted.body_force = Some(vec![g, 1.0]);
    let why = tilted.channel_flow_or_why().unwrap_err();
    assert!(why.contains("across the channel"), "{why}");
    let mut closed = c.clone();
    closed.domain.periodic.clear();
    let why = closed.channel_flow_or_why().unwrap_err();
    assert!(why.contains("not periodic along x"), "{why}");
}

#[test]
fn layers_share_a_density_within_a_relative_1e_9_for_the_eigenmode_seed() {
    // The eigenmode seed and the stability analysis assume one density; the rule they share
    // allows a relative difference of 1e-9 (of the lower layer's density), no more.
    let mut c = case("interface-growth.ron");
    c.interface_perturbation.as_mut().expect("seeded").mode = SeedMode::Eigenmode;
    let pair = c.tracked_interface().expect("two layers");
    let density = c.phases[pair.lower].density;
    let mode_problems = |c: &Case| {
        c.validate()
            .iter()
            .filter(|p| p.path() == Some("interface_perturbation.mode"))
            .count()
    };
    c.phases[pair.upper].density = density * (1.0 + 1e-12);
    assert!(c.layers_share_density(&pair));
    assert_eq!(mode_problems(&c), 0, "{:#?}", c.validate());
    c.phases[pair.upper].density = density * (1.0 + 1e-6);
    assert!(!c.layers_share_density(&pair));
    assert_eq!(mode_problems(&c), 1, "{:#?}", c.validate());
}
