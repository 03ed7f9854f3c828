//! `lamella run --start-from RUN` (a new run from another run's state, with the case's seed)
//! and `lamella resume DIR --until T` (a finished run extended), on the binary.

use std::path::{Path, PathBuf};
use std::process::Output;

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(
        env!("CARGO_BIN_EXE_lamella"),
        &[&["--quiet"], args].concat(),
    )
}

fn path_str(path: &Path) -> &str {
    path.to_str().expect("test paths are UTF-8")
}

/// The bundled growth case with `end` as its end time, with or without its interface seed.
fn growth_case(dir: &Path, name: &str, end: f64, seeded: bool) -> PathBuf {
    let bundled = lamella_suite::cases_dir().join("interface-growth.ron");
    let mut case = lamella_case::load(&bundled).expect("the bundled case loads");
    case.time.end = end;
    if !seeded {
        case.interface_perturbation = None;
    }
    let path = dir.join(name);
    std::fs::write(&path, lamella_case::to_ron(&case)).unwrap();
    path
}

/// The rows of a run's series.csv (header skipped), split at commas.
fn series(dir: &Path) -> Vec<Vec<String>> {
    std::fs::read_to_string(dir.join("series.csv"))
        .unwrap()
        .lines()
        .skip(1)
        .map(|line| line.split(',').map(str::to_string).collect())
        .collect()
}

#[test]
fn a_seeded_run_starts_from_a_developed_run_and_is_extended() {
    let dir = tempfile::tempdir().unwrap();
    let plain = growth_case(dir.path(), "plain.ron", 0.005, false);
    let seeded = growth_case(dir.path(), "seeded.ron", 0.005, true);
    let developed = dir.path().join("developed");
    let out = lamella(&["run", path_str(&plain), "--out", path_str(&developed)]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    let run = dir.path().join("seeded");
    let out = lamella(&[
        "run",
        path_str(&seeded),
        "--out",
        path_str(&run),
        "--start-from",
        path_str(&developed),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let log = std::fs::read_to_string(run.join("run.log")).unwrap();
    assert!(log.contains("started from the state of"), "{log}");
    // The new run starts at t = 0 with the seed applied: the first recorded mode amplitude is
    // the seeded 8e-6 m (the developed run's interface was flat to round-off).
    let rows = series(&run);
    assert_eq!(rows[0][0], "0e0");
    let amplitude_column = rows[0].len() - 3;
    let amplitude: f64 = rows[0][amplitude_column].parse().unwrap();
    assert!((amplitude / 8.0e-6 - 1.0).abs() < 0.01, "{amplitude}");

    // Extend the finished run to twice its end time: the rows go on from where they stopped.
    let before = rows.len();
    let out = lamella(&["resume", path_str(&run), "--until", "0.01"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let rows = series(&run);
    assert!(rows.len() > before, "{} rows after {before}", rows.len());
    let last: f64 = rows.last().unwrap()[0].parse().unwrap();
    assert!((last - 0.01).abs() < 1e-12, "{last}");
    // An end before the newest checkpoint is refused as bad input.
    let out = lamella(&["resume", path_str(&run), "--until", "0.001"]);
    assert_eq!(out.status.code(), Some(2));

    // A state with other particles does not fit: exit 2, naming what differs.
    let coarse = dir.path().join("coarse.ron");
    let mut case = lamella_case::load(&seeded).unwrap();
    assert_eq!(case.particles.spacing, 4.0e-5);
    case.particles.spacing = 6.0e-5;
    std::fs::write(&coarse, lamella_case::to_ron(&case)).unwrap();
    let out = lamella(&[
        "run",
        path_str(&coarse),
        "--out",
        path_str(&dir.path().join("coarse")),
        "--start-from",
        path_str(&developed),
    ]);
    assert_eq!(out.status.code(), Some(2));
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains("does not fit the case"), "{message}");
}
