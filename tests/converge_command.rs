//! `lamella converge` on the binary: a case with no analytical profile is refused with the
//! reason, a study never starts into a folder that holds an earlier study, a refused study
//! writes nothing, and a wave study fits every spacing over the window it is given.

use std::path::{Path, PathBuf};
use std::process::Output;

fn couette() -> PathBuf {
    lamella_suite::cases_dir().join("couette.ron")
}

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

/// `lamella converge CASE --spacings SPACINGS EXTRA... --out STUDY`.
fn converge(case: &Path, spacings: &str, extra: &[&str], study: &Path) -> Output {
    let mut args = vec!["converge", case.to_str().unwrap(), "--spacings", spacings];
    args.extend_from_slice(extra);
    args.extend(["--out", study.to_str().unwrap()]);
    lamella(&args)
}

fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn an_existing_study_folder_is_bad_input_with_advice_that_fits_converge() {
    let dir = tempfile::tempdir().unwrap();
    let study = dir.path().join("study");
    std::fs::create_dir(&study).unwrap();
    std::fs::write(study.join("convergence.csv"), "earlier results\n").unwrap();
    let out = converge(&couette(), "1.2e-4,8e-5", &[], &study);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let message = stderr(&out);
    assert!(message.contains(study.to_str().unwrap()), "{message}");
    assert!(
        message.contains("choose another --out") && message.contains("remove the folder"),
        "{message}"
    );
    assert!(!message.contains("resume"), "{message}");
    // Nothing was added: the earlier study is as it was.
    let names: Vec<_> = std::fs::read_dir(&study)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names, ["convergence.csv"]);
}

#[test]
fn a_refused_study_leaves_no_folder_behind() {
    let dir = tempfile::tempdir().unwrap();
    let study = dir.path().join("study");
    // The second spacing is larger than the channel: that case is invalid, so nothing runs.
    let out = converge(&couette(), "1.2e-4,0.1", &[], &study);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(stderr(&out).contains("spacing 1e-1 m"), "{}", stderr(&out));
    assert!(
        !study.exists(),
        "the refused study left {}",
        study.display()
    );
}

#[test]
fn a_case_without_an_analytical_profile_is_refused_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let study = dir.path().join("study");
    let cavity = lamella_suite::cases_dir().join("cavity-re100.ron");
    let out = converge(&cavity, "1e-4,5e-5", &[], &study);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains(
            "no analytical profile for this case (the domain is not periodic along x, as a \
             channel is)"
        ),
        "{}",
        stderr(&out)
    );
    assert!(!study.exists());
}

#[test]
fn fit_options_are_refused_for_a_study_without_an_interface_wave() {
    let dir = tempfile::tempdir().unwrap();
    let study = dir.path().join("study");
    let out = converge(&couette(), "1.2e-4,8e-5", &["--window", "0.1,0.2"], &study);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("records no interface wave")
            && stderr(&out).contains("leave them out"),
        "{}",
        stderr(&out)
    );
    assert!(!study.exists());
}

#[test]
fn a_wave_study_fits_every_spacing_over_the_window_given() {
    // The bundled growing wave at two coarse spacings (20 and 30 particles across), run to
    // 0.05 s and fitted over the same 0.01..0.05 s at both: growth_convergence.csv names that
    // window on every row.
    let dir = tempfile::tempdir().unwrap();
    let study = dir.path().join("study");
    let case = lamella_suite::cases_dir().join("interface-growth.ron");
    let out = converge(
        &case,
        "6e-5,4e-5",
        &["--end", "0.05", "--window", "0.01,0.05"],
        &study,
    );
    assert!(out.status.success(), "{}", stderr(&out));
    let csv = std::fs::read_to_string(study.join("growth_convergence.csv")).unwrap();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|v| v.parse().unwrap()).collect())
        .collect();
    assert_eq!(rows.len(), 2, "{csv}");
    for row in &rows {
        assert!((row[column("fit_start_s")] - 0.01).abs() < 1e-9, "{csv}");
        assert!((row[column("fit_end_s")] - 0.05).abs() < 1e-9, "{csv}");
        assert!(row[column("growth_rate_per_s")] > 0.0, "{csv}");
    }
}
