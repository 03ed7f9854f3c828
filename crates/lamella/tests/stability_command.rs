//! Command-line tests of `lamella stability`, run on the binary.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lamella(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lamella"))
        .args(args)
        .output()
        .expect("the lamella binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn case(name: &str) -> String {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../cases")
        .join(name);
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
    let out = lamella(&[
        "stability",
        "--m",
        "3",
        "--n",
        "1",
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

#[test]
fn a_run_folder_prints_the_measured_rate_beside_the_prediction() {
    // A coarse, short run of the seeded two-layer case (12 particles across, 0.3 s): the
    // measured number is whatever `lamella growth` fits; the test checks that `stability
    // --run` reports that same fit beside the prediction for the run's case copy, and says
    // so clearly when the fit refuses.
    let dir = tempfile::tempdir().unwrap();
    let mut seeded = lamella_case::load(Path::new(&case("two-layer-channel-seeded.ron"))).unwrap();
    seeded.particles.spacing = 1.0e-4;
    if let Some(p) = seeded.interface_perturbation.as_mut() {
        p.amplitude = 1.5e-4;
    }
    seeded.time.end = 0.3;
    let case_path = dir.path().join("seeded.ron");
    std::fs::write(&case_path, lamella_case::to_ron(&seeded)).unwrap();
    let case_path = case_path.to_str().unwrap();
    let run_dir = dir.path().join("run");
    let run_dir = run_dir.to_str().unwrap();
    let out = lamella(&["--quiet", "run", case_path, "--out", run_dir]);
    assert!(out.status.success(), "run: {}", text(&out.stderr));

    // A window over the whole run and a tiny onset threshold, so that the fit is made.
    let fit_options = ["--onset", "1e-9", "--window", "0,0.3"];
    let out = lamella(&[&["growth", run_dir][..], &fit_options].concat());
    assert!(out.status.success(), "growth: {}", text(&out.stderr));
    let growth = text(&out.stdout);
    let measured = number_after(&growth, "growth rate ");
    let interval = number_after(&growth, "± ");

    let out = lamella(&["stability", case_path]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    let in_case_units = stdout.split("case units:").nth(1).expect("case units");
    let predicted = number_after(in_case_units, "growth rate ");

    let out = lamella(&[&["stability", "--run", run_dir][..], &fit_options].concat());
    let report = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(report.contains("case units:"), "{report}");
    let beside = report.split("measured in").nth(1).expect("a measured line");
    assert_eq!(number_after(beside, "growth rate "), measured, "{report}");
    assert_eq!(number_after(beside, "± "), interval, "{report}");
    let printed_prediction = number_after(beside, "predicted ");
    assert!(
        (printed_prediction - predicted).abs() <= 1e-4 * predicted.abs(),
        "{printed_prediction} vs {predicted}"
    );
    let ratio = number_after(beside, "measured / predicted = ");
    assert!(
        (ratio - measured / predicted).abs() <= 1e-3 * (measured / predicted).abs(),
        "{report}"
    );

    // An onset threshold of 1 m is never reached: the prediction, then why there is no
    // measured rate, and success.
    let out = lamella(&["stability", "--run", run_dir, "--onset", "1"]);
    let report = text(&out.stdout);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(report.contains("leading eigenvalue:"), "{report}");
    assert!(
        report.contains("no growth rate to compare with: no instability onset"),
        "{report}"
    );

    // Fit options without a run folder, and a folder that is not a run: exit code 2.
    for args in [
        &["stability", case_path, "--onset", "1e-4"][..],
        &["stability", "--run", case_path][..],
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
