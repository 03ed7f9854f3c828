//! Command-line tests of `lamella stability`, run on the binary.

use lamella_suite::text;
use std::path::Path;
use std::process::Output;

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

fn case(name: &str) -> String {
    let path = lamella_suite::cases_dir().join(name);
    path.to_str().expect("UTF-8 path").to_owned()
}

#[test]
fn one_fluid_at_orszag_conditions_prints_the_leading_eigenvalue() {
    // Orszag 1971 (J. Fluid Mech. 50): Re = 10000, α = 1, c = 0.23752649 + 0.00373967 i.
    let out = lamella(&[
        "stability",
        "--m",
        "1",
        "--n",
        "1",
        "--re",
        "10000",
        "--wavenumber",
        "1",
    ]);
    let stdout = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(stdout.contains("0.23752649 +0.00373967i"), "{stdout}");
    assert!(stdout.contains("unstable"), "{stdout}");
}

#[test]
fn scan_and_map_write_csv_and_png_files() {
    let dir = tempfile::tempdir().unwrap();
    let out_dir = dir.path().to_str().unwrap();
    let out = lamella(&[
        "stability",
        "--m",
        "3",
        "--n",
        "1",
        "--re",
        "100",
        "--scan",
        "0.05,1.5,6",
        "--points",
        "24",
        "--out",
        out_dir,
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    assert!(stdout.contains("most unstable wavenumber"), "{stdout}");
    // A map needs no --m/--n (it sets them at each pair); progress goes to stderr, the
    // report to stdout.
    let out = lamella(&[
        "stability",
        "--re",
        "100",
        "--wavenumber",
        "0.5",
        "--points",
        "24",
        "--map-m",
        "0.2,5,3",
        "--map-n",
        "0.5,2,3",
        "--out",
        out_dir,
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains("(m, n) pairs unstable"));
    let curve = std::fs::read_to_string(dir.path().join("stability_curve.csv")).unwrap();
    assert!(curve.starts_with("wavenumber_scaled,"));
    assert_eq!(curve.lines().count(), 7);
    let map = std::fs::read_to_string(dir.path().join("stability_map.csv")).unwrap();
    assert_eq!(map.lines().count(), 10);
    for png in ["stability_curve.png", "stability_map.png"] {
        let bytes = std::fs::read(dir.path().join(png)).unwrap();
        assert_eq!(&bytes[1..4], b"PNG");
    }
}

/// Runs `lamella ARGS`, expects exit code 2 and `needle` in its error output.
fn refused_naming(args: &[&str], needle: &str) {
    let out = lamella(args);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(text(&out.stderr).contains(needle), "{}", text(&out.stderr));
}

#[test]
fn a_bare_stability_names_its_four_modes_and_exits_with_code_2() {
    let out = lamella(&["stability"]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    for mode in [
        "CASE",
        "--m M --n N --re RE",
        "--map-m",
        "--map-n",
        "--run DIR",
    ] {
        assert!(stderr.contains(mode), "{mode} not named: {stderr}");
    }
    // Half a ratio mode is refused with the modes, a map without --re with what it lacks.
    refused_naming(
        &["stability", "--re", "100", "--wavenumber", "1"],
        "--run DIR",
    );
    refused_naming(
        &[
            "stability",
            "--wavenumber",
            "1",
            "--map-m",
            "1,2,2",
            "--map-n",
            "1,2,2",
        ],
        "--re RE",
    );
    // --m/--n would be ignored by a map: refused, not silently dropped.
    let out = lamella(&[
        "stability",
        "--m",
        "2",
        "--n",
        "1",
        "--re",
        "100",
        "--wavenumber",
        "1",
        "--map-m",
        "1,2,2",
        "--map-n",
        "1,2,2",
    ]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
}

#[test]
fn quiet_scans_and_maps_print_nothing_on_stderr() {
    let dir = tempfile::tempdir().unwrap();
    let out = lamella(&[
        "--quiet",
        "stability",
        "--re",
        "100",
        "--wavenumber",
        "0.5",
        "--points",
        "16",
        "--map-m",
        "0.5,2,2",
        "--map-n",
        "1,2,2",
        "--out",
        dir.path().to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(out.stderr.is_empty(), "{}", text(&out.stderr));
    assert!(out.stdout.is_empty(), "{}", text(&out.stdout));
}

#[test]
fn the_seeded_two_layer_case_gives_ratios_and_case_units() {
    // cases/two-layer-channel-seeded.ron: μ 5e-3 below 1e-3 Pa·s, widths 0.8 and 0.4 mm.
    let out = lamella(&[
        "stability",
        &case("two-layer-channel-seeded.ron"),
        "--points",
        "32",
    ]);
    let stdout = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(stdout.contains("m = 5.000000, n = 2.000000"), "{stdout}");
    assert!(stdout.contains("case units:"), "{stdout}");
    assert!(stdout.contains("1/s"), "{stdout}");
}

#[test]
fn bad_options_exit_with_code_2_and_say_what_to_fix() {
    let cases: [&[&str]; 4] = [
        &[
            "stability",
            "--m",
            "-1",
            "--n",
            "1",
            "--re",
            "100",
            "--wavenumber",
            "1",
        ],
        &["stability", "--m", "2", "--n", "1", "--re", "100"],
        &[
            "stability",
            "--m",
            "2",
            "--n",
            "1",
            "--re",
            "100",
            "--scan",
            "1,0.5,4",
        ],
        &["stability", &case("cavity-re100.ron")],
    ];
    for args in cases {
        let out = lamella(args);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?}: {}",
            text(&out.stdout)
        );
        assert!(!text(&out.stderr).is_empty());
    }
}

/// Number after `key` in `text`, up to the next space.
fn number_after(text: &str, key: &str) -> f64 {
    text.split(key)
        .nth(1)
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|v| v.trim_end_matches([',', ';']).parse().ok())
        .unwrap_or_else(|| panic!("no number after {key:?} in: {text}"))
}

/// The seeded two-layer case made unstable enough for a short synthetic record: μ 20e-3 below
/// 1e-3 Pa·s, equal layers (m = 20, n = 1), body force 0.5 m/s², wavelength 1.2 mm; it starts
/// from rest, so its start-up lasts ln(100) H²/(π² ν) = 0.67 s.
fn unstable_case() -> lamella_case::Case {
    let mut case = lamella_case::load(Path::new(&case("two-layer-channel-seeded.ron"))).unwrap();
    case.phases[0].viscosity_law = lamella_case::ViscosityLaw::Newtonian { viscosity: 2.0e-2 };
    case.regions = vec![
        lamella_case::Region::Layer {
            phase: "syrup".into(),
            bottom: 0.0,
            top: 0.6e-3,
        },
        lamella_case::Region::Layer {
            phase: "water".into(),
            bottom: 0.6e-3,
            top: 1.2e-3,
        },
    ];
    case.body_force = Some(vec![0.5, 0.0]);
    case.scales.expected_max_speed = 5.0e-2;
    // Started from rest, so that the fit has a start-up to skip.
    case.initial_velocity = lamella_case::InitialVelocity::Rest;
    if let Some(p) = case.interface_perturbation.as_mut() {
        p.wavelength = 1.2e-3;
    }
    case
}

/// A run folder holding `case` as case.ron and a series.csv of the interface mode
/// A = 1e-7 exp(σ t) (1 % deterministic ripple), φ = 0.3 − k c t wrapped to (−π, π], noise
/// floor 1e-9 m, sampled every 0.01 s over 3 s.
fn synthetic_run(dir: &Path, case: &lamella_case::Case, sigma: f64, speed: f64) {
    std::fs::create_dir_all(dir).unwrap();
    std::fs::write(dir.join("case.ron"), lamella_case::to_ron(case)).unwrap();
    let k = 2.0 * std::f64::consts::PI / case.tracked_wavelength();
    let mut csv = String::from(
        "time_s,step,interface_mode_amplitude_m,interface_mode_phase_rad,interface_noise_m\n",
    );
    for i in 0..=300 {
        let t = i as f64 * 0.01;
        let a = 1e-7 * (sigma * t).exp() * (1.0 + 0.01 * (7.3 * i as f64).sin());
        let phase = (0.3 - k * speed * t + std::f64::consts::PI)
            .rem_euclid(2.0 * std::f64::consts::PI)
            - std::f64::consts::PI;
        csv.push_str(&format!("{t:e},{i},{a:e},{phase:e},1e-9\n"));
    }
    std::fs::write(dir.join("series.csv"), csv).unwrap();
}

/// Predicted growth rate (1/s) and wave speed (m/s) of `case`, from `lamella stability CASE`.
fn prediction(dir: &Path, case: &lamella_case::Case) -> (f64, f64) {
    let path = dir.join("predict.ron");
    std::fs::write(&path, lamella_case::to_ron(case)).unwrap();
    let out = lamella(&["stability", path.to_str().unwrap()]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    let units = stdout.split("case units:").nth(1).expect("case units");
    (
        number_after(units, "growth rate "),
        number_after(units, "wave speed "),
    )
}

#[test]
fn a_run_folder_is_compared_with_theory_and_given_a_verdict() {
    // Synthetic records made from the predicted exponential agree; made from twice the
    // predicted rate they disagree (ratio 2, far outside the 15 % tolerance and the interval).
    let dir = tempfile::tempdir().unwrap();
    let case = unstable_case();
    let (rate, speed) = prediction(dir.path(), &case);
    assert!(rate > 1.0 && speed > 0.0, "{rate} {speed}");

    let agree = dir.path().join("agree");
    synthetic_run(&agree, &case, rate, speed);
    let agree = agree.to_str().unwrap();
    let out = lamella(&["growth", agree]);
    assert!(out.status.success(), "growth: {}", text(&out.stderr));
    let growth = text(&out.stdout);
    let measured = number_after(&growth, "growth rate ");
    let interval = number_after(&growth, "± ");
    assert!((measured - rate).abs() < 0.01 * rate, "{growth}");

    let out = lamella(&["stability", "--run", agree]);
    let report = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(report.contains("case units:"), "{report}");
    let beside = report.split("measured in").nth(1).expect("a measured line");
    // The same fit as `lamella growth`, and the same prediction as `lamella stability CASE`.
    assert_eq!(number_after(beside, "growth rate: measured "), measured);
    assert_eq!(number_after(beside, "± "), interval);
    let printed = number_after(beside, "1/s (95 %), predicted ");
    assert!((printed - rate).abs() <= 1e-4 * rate, "{report}");
    let printed_speed = number_after(beside, "m/s (95 %), predicted ");
    assert!((printed_speed - speed).abs() <= 1e-4 * speed, "{report}");
    let ratio = number_after(beside, "measured / predicted = ");
    assert!((ratio - 1.0).abs() < 0.01, "{report}");
    let measured_speed = number_after(beside, "wave speed: measured ");
    assert!((measured_speed - speed).abs() < 1e-3 * speed, "{report}");
    assert!(
        report.contains("verdict: agrees (growth rate and wave speed)"),
        "{report}"
    );
    // The wave period λ/c and the rate over each whole period of the window, each within
    // 1 % of the prediction here (a clean exponential), in both reports.
    let wavelength = case.tracked_wavelength();
    for text in [&growth, &report] {
        let period = number_after(text, "wave period ");
        assert!((period / (wavelength / speed) - 1.0).abs() < 1e-3, "{text}");
        let periods = text
            .split("growth rate over each whole period: ")
            .nth(1)
            .expect("per-period rates");
        let first: f64 = periods
            .split([' ', ','])
            .next()
            .and_then(|v| v.parse().ok())
            .expect("a rate");
        assert!((first / rate - 1.0).abs() < 0.01, "{text}");
    }
    let png = std::fs::read(Path::new(agree).join("analysis/growth_vs_theory.png")).unwrap();
    assert_eq!(&png[1..4], b"PNG");

    let twice = dir.path().join("twice");
    synthetic_run(&twice, &case, 2.0 * rate, speed);
    let out = lamella(&["stability", "--run", twice.to_str().unwrap()]);
    let report = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let beside = report.split("measured in").nth(1).expect("a measured line");
    let ratio = number_after(beside, "measured / predicted = ");
    assert!((ratio - 2.0).abs() < 0.02, "{report}");
    assert!(
        report.contains("verdict: disagrees (growth rate)"),
        "{report}"
    );
    assert!(!report.contains("verdict: agrees"), "{report}");
}

#[test]
fn a_refused_fit_prints_the_prediction_and_the_reason_and_exits_with_code_2() {
    let dir = tempfile::tempdir().unwrap();
    let case = unstable_case();
    let (rate, speed) = prediction(dir.path(), &case);
    let run = dir.path().join("run");
    synthetic_run(&run, &case, rate, speed);
    let run = run.to_str().unwrap();
    // A window inside the start-up (the case starts from rest: 0.67 s).
    let out = lamella(&["stability", "--run", run, "--window", "0.1,0.5"]);
    let report = text(&out.stdout);
    assert_eq!(out.status.code(), Some(2), "{report}");
    assert!(report.contains("leading eigenvalue:"), "{report}");
    assert!(report.contains("the growth fit refuses"), "{report}");
    assert!(report.contains("start-up"), "{report}");
    assert!(!report.contains("measured / predicted"), "{report}");
    assert!(!report.contains("verdict: agrees") && !report.contains("verdict: disagrees"));
    assert!(
        text(&out.stderr).contains("start-up"),
        "{}",
        text(&out.stderr)
    );

    // Fit options without a run folder, a folder that is not a run, --min-r2 out of range:
    // exit code 2.
    let case_path = dir.path().join("predict.ron");
    let case_path = case_path.to_str().unwrap();
    for args in [
        &["stability", case_path, "--window", "1,2"][..],
        &["stability", "--run", case_path][..],
        &["stability", "--run", run, "--min-r2", "1.5"][..],
    ] {
        let out = lamella(args);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?}: {}",
            text(&out.stdout)
        );
        assert!(!text(&out.stderr).is_empty());
    }
}
