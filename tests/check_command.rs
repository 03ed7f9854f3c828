//! `lamella check` on cases a new user gets wrong: one Reynolds number with its definition
//! (the one `lamella stability` uses), and warnings, never refusals, for magnitudes that are
//! likely unit slips and for a drive that cannot give the expected speed.

use lamella_suite::text;
use std::path::{Path, PathBuf};
use std::process::Output;

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

fn bundled(name: &str) -> PathBuf {
    lamella_suite::cases_dir().join(name)
}

/// `lamella check` on the bundled two-layer channel with `from` replaced by `to`: its report.
fn check_changed(dir: &Path, from: &str, to: &str) -> String {
    let original = std::fs::read_to_string(bundled("two-layer-channel.ron")).unwrap();
    assert!(original.contains(from), "{from} not in the bundled case");
    let path = dir.join("changed.ron");
    std::fs::write(&path, original.replace(from, to)).unwrap();
    let out = lamella(&["check", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    text(&out.stdout)
}

fn warnings(report: &str) -> Vec<&str> {
    report
        .lines()
        .filter(|l| l.trim_start().starts_with("warning:"))
        .collect()
}

/// The number after `key` in `text`, up to the next space.
fn number_after(text: &str, key: &str) -> f64 {
    let at = text
        .find(key)
        .unwrap_or_else(|| panic!("no {key:?} in {text}"))
        + key.len();
    text[at..]
        .split_whitespace()
        .next()
        .and_then(|s| s.trim_end_matches(',').parse().ok())
        .unwrap_or_else(|| panic!("no number after {key:?} in {text}"))
}

#[test]
fn check_shows_one_reynolds_number_with_its_definition_the_one_stability_uses() {
    let case = bundled("two-layer-channel-seeded.ron");
    let case = case.to_str().unwrap();
    let check = text(&lamella(&["check", case]).stdout);
    assert_eq!(check.matches("Re = ").count(), 1, "{check}");
    let key = "Re = ρ U_max h/μ_lower = ";
    assert!(
        check.contains("peak of the steady profile") && check.contains("half-width"),
        "{check}"
    );
    let stability = lamella(&["stability", case, "--points", "32"]);
    assert!(stability.status.success(), "{}", text(&stability.stderr));
    let (ours, theirs) = (
        number_after(&check, key),
        number_after(&text(&stability.stdout), key),
    );
    assert!(
        ((ours - theirs) / theirs).abs() < 1e-3,
        "check {ours}, stability {theirs}"
    );
    // A case that is no channel gets U L/ν, named as such.
    let cavity = text(&lamella(&["check", bundled("cavity-re100.ron").to_str().unwrap()]).stdout);
    // (Its title says "Re = 100" too; the report has one Reynolds line.)
    let lines: Vec<&str> = cavity.lines().filter(|l| l.contains("Re = ")).collect();
    assert_eq!(lines.len(), 2, "{cavity}");
    assert!(lines[0].contains("Lid-driven cavity"), "{cavity}");
    assert_eq!(number_after(&cavity, "Re = U L/ν = "), 100.0, "{cavity}");
}

#[test]
fn the_bundled_channels_draw_no_magnitude_or_drive_warning() {
    for name in [
        "two-layer-channel.ron",
        "poiseuille.ron",
        "couette.ron",
        "interface-growth.ron",
    ] {
        let out = lamella(&["check", bundled(name).to_str().unwrap()]);
        let report = text(&out.stdout);
        assert!(
            !report.contains("expected_max_speed") && !report.contains("common practice)"),
            "{name}: {report}"
        );
    }
}

#[test]
fn a_viscosity_in_pa_s_meant_as_mpa_s_is_a_warning_with_the_slip_named() {
    let dir = tempfile::tempdir().unwrap();
    let report = check_changed(dir.path(), "viscosity: 5.0e-3", "viscosity: 5.0");
    assert!(
        warnings(&report)
            .iter()
            .any(|w| w.contains("phases[0].viscosity_law.viscosity: 5 Pa·s")
                && w.contains("did you mean 5 mPa·s = 0.005 Pa·s?")),
        "{report}"
    );
}

#[test]
fn a_density_in_g_per_cm3_is_a_warning_with_the_slip_named() {
    let dir = tempfile::tempdir().unwrap();
    let report = check_changed(
        dir.path(),
        "(name: \"water\", density: 1000.0",
        "(name: \"water\", density: 1.0",
    );
    assert!(
        warnings(&report)
            .iter()
            .any(|w| w.contains("phases[1].density: 1 kg/m³")
                && w.contains("common practice")
                && w.contains("did you mean 1 g/cm³ = 1000 kg/m³?")),
        "{report}"
    );
}

#[test]
fn a_body_force_far_too_strong_for_the_expected_speed_is_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    // 1000 times the bundled force: the steady peak is 3.449 m/s, not about 4 mm/s.
    let report = check_changed(
        dir.path(),
        "body_force: [0.05, 0.0]",
        "body_force: [50.0, 0.0]",
    );
    let found: Vec<&str> = warnings(&report)
        .into_iter()
        .filter(|w| w.contains("scales.expected_max_speed"))
        .collect();
    assert_eq!(found.len(), 1, "{report}");
    assert!(
        found[0].contains("steady peak speed of 3.449 m/s") && found[0].contains("faster"),
        "{}",
        found[0]
    );
    // Twice the force is within the factor of two: no warning.
    let report = check_changed(
        dir.path(),
        "body_force: [0.05, 0.0]",
        "body_force: [0.1, 0.0]",
    );
    assert!(!report.contains("expected_max_speed"), "{report}");
}

/// A lid corner adds a sound-speed bound (the viscous bound of Morris, Fox & Zhu 1997 over one
/// spacing): `check` lists it, and a given sound speed below it draws a warning that names it.
/// The bundled two-phase cavity meets it (0.36 m/s against 0.354); at 0.3 m/s it does not.
#[test]
fn a_sound_speed_below_the_lid_corner_bound_is_a_warning() {
    let original = std::fs::read_to_string(bundled("two-phase-cavity.ron")).unwrap();
    let report =
        text(&lamella(&["check", bundled("two-phase-cavity.ron").to_str().unwrap()]).stdout);
    assert!(report.contains("lid corner 0.3536 m/s"), "{report}");
    assert!(warnings(&report).is_empty(), "{report}");

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("slow.ron");
    let from = "sound_speed: 0.36,";
    assert!(original.contains(from));
    std::fs::write(&path, original.replace(from, "sound_speed: 0.3,")).unwrap();
    let out = lamella(&["check", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let report = text(&out.stdout);
    let found = warnings(&report);
    assert_eq!(found.len(), 1, "{report}");
    assert!(
        found[0].contains("below the lid corner bound 0.3536 m/s"),
        "{report}"
    );
}
