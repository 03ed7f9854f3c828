//! Checkpoint and resume through the `lamella` binary: a resumed run must give the same bytes
//! as an uninterrupted one, whether it was stopped at a checkpoint, by SIGINT, by SIGKILL in the
//! middle of a checkpoint write, or resumes past a damaged checkpoint.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::atomic::AtomicBool;
use std::time::{Duration, Instant};

use glam::DVec2;
use lamella_run::output::{CheckpointStore, RunFolder};
use lamella_run::recorder::Recorder;
use lamella_run::runner::{NoProgress, run_to_end};
use lamella_suite::assert_success;

/// A small two-layer channel (10 × 10 fluid particles, 60 wall particles) with a probe line;
/// `{end}` and `{minutes}` are filled in per test.
const CASE: &str = r#"
#![enable(implicit_some)]
(
    title: "resume check",
    dimension: 2,
    domain: (lower: [0.0, 0.0], upper: [4.0e-4, 4.0e-4], periodic: [X]),
    particles: (spacing: 4.0e-5, smoothing_ratio: 1.3, kernel: WendlandC2),
    phases: [
        (name: "syrup", density: 1000.0, viscosity_law: Newtonian(viscosity: 5.0e-3)),
        (name: "water", density: 1000.0, viscosity_law: Newtonian(viscosity: 1.0e-3)),
    ],
    pair_viscosity: Harmonic,
    regions: [
        Layer(phase: "syrup", bottom: 0.0, top: 2.4e-4),
        Layer(phase: "water", bottom: 2.4e-4, top: 4.0e-4),
    ],
    walls: [(side: Bottom, layers: 3), (side: Top, layers: 3)],
    body_force: [0.5, 0.0],
    scales: (expected_max_speed: 4.0e-3),
    equation_of_state: Linear(background_pressure: 0.0),
    density_tolerance: 0.05,
    time: (end: END, snapshot_interval: 1.0e-3, sample_interval: 2.5e-4),
    output: (
        checkpoint_minutes: MINUTES,
        probes: [
            Point(name: "middle", at: [2.0e-4, 2.0e-4]),
            Line(name: "profile", from: [2.0e-4, 0.0], to: [2.0e-4, 4.0e-4], samples: 11),
        ],
    ),
)
"#;

/// Snapshot interval of [`CASE`] (s).
const SNAPSHOT_INTERVAL: f64 = 1.0e-3;

fn case_text(end: f64, minutes: f64) -> String {
    CASE.replace("END", &format!("{end:e}"))
        .replace("MINUTES", &format!("{minutes:e}"))
}

/// Writes the case as `dir/layers.ron` (the run's case name is the file stem).
fn write_case(dir: &Path, text: &str) -> PathBuf {
    let path = dir.join("layers.ron");
    fs::write(&path, text).unwrap();
    path
}

fn lamella() -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_lamella"));
    command.arg("--threads").arg("2").arg("--quiet");
    command
}

fn run(case: &Path, out: &Path) -> Output {
    lamella()
        .arg("run")
        .arg(case)
        .arg("--out")
        .arg(out)
        .output()
        .unwrap()
}

fn resume(out: &Path) -> Output {
    lamella().arg("resume").arg(out).output().unwrap()
}

/// The newest checkpoint file of a run folder.
fn newest_checkpoint(out: &Path) -> PathBuf {
    checkpoints(out).pop().expect("a checkpoint")
}

fn checkpoints(out: &Path) -> Vec<PathBuf> {
    let mut files: Vec<PathBuf> = fs::read_dir(out.join("checkpoints"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "bin"))
        .collect();
    files.sort();
    files
}

/// Every result file of a run folder that must match byte for byte: the series, the probes,
/// the collection, every snapshot, and the final checkpoint's content.
fn results(out: &Path) -> Vec<(String, Vec<u8>)> {
    let mut files = vec![(
        "series.csv".to_string(),
        fs::read(out.join("series.csv")).unwrap(),
    )];
    for dir in ["probes", "snapshots"] {
        let mut names: Vec<PathBuf> = fs::read_dir(out.join(dir))
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| !p.file_name().unwrap().to_string_lossy().starts_with('.'))
            .collect();
        names.sort();
        for path in names {
            let name = format!("{dir}/{}", path.file_name().unwrap().to_string_lossy());
            files.push((name, fs::read(&path).unwrap()));
        }
    }
    files.push((
        "final checkpoint".into(),
        fs::read(newest_checkpoint(out)).unwrap(),
    ));
    files
}

fn assert_same_results(straight: &Path, resumed: &Path) {
    let a = results(straight);
    let b = results(resumed);
    let names = |r: &[(String, Vec<u8>)]| r.iter().map(|(n, _)| n.clone()).collect::<Vec<_>>();
    assert_eq!(names(&a), names(&b), "different result files");
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        assert!(
            x == y,
            "{name} differs between the straight and the resumed run"
        );
    }
    assert!(a.len() > 6, "too few result files: {:?}", names(&a));
}

/// Runs the case of `case_path` (text `text`) into `out` only up to T = 4 snapshot intervals,
/// as the library's run loop does, which ends with a checkpoint at T.
fn run_to_half(case_path: &Path, text: &str, out: &Path) {
    let case = lamella_case::load(case_path).unwrap();
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).unwrap();
    let mut recorder = Recorder::<DVec2>::start(out, false, &case, text, "layers").unwrap();
    let half = 4.0 * SNAPSHOT_INTERVAL;
    run_to_end(
        &mut sim,
        half,
        &mut recorder,
        &AtomicBool::new(false),
        &mut NoProgress,
    )
    .unwrap();
    assert!(sim.time() == half);
    assert_eq!(checkpoints(out).len(), 1);
}

#[test]
fn run_to_t_then_resume_to_2t_equals_a_straight_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let text = case_text(8.0 * SNAPSHOT_INTERVAL, 15.0);
    let case_path = write_case(dir.path(), &text);
    let straight = dir.path().join("straight");
    assert_success(&run(&case_path, &straight), "the straight run");

    let split = dir.path().join("split");
    run_to_half(&case_path, &text, &split);
    assert_success(&resume(&split), "the resume");
    assert_same_results(&straight, &split);
}

#[test]
fn sigint_checkpoints_exits_130_and_the_resume_matches() {
    let dir = tempfile::tempdir().unwrap();
    // 100 snapshot intervals, about 400 steps: over a second of wall-clock time, so the signal
    // sent just after the second snapshot lands long before the end.
    let end = 100.0 * SNAPSHOT_INTERVAL;
    let text = case_text(end, 15.0);
    let case_path = write_case(dir.path(), &text);
    let straight = dir.path().join("straight");
    assert_success(&run(&case_path, &straight), "the straight run");

    let stopped = dir.path().join("stopped");
    let child = lamella()
        .arg("run")
        .arg(&case_path)
        .arg("--out")
        .arg(&stopped)
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // The second snapshot (t = one snapshot interval) is on disk: the interrupt handler is
    // installed (before the first snapshot) and the run is stepping.
    let second = stopped.join("snapshots").join(RunFolder::snapshot_name(1));
    let started = Instant::now();
    while !second.exists() {
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "the run did not start"
        );
        std::thread::sleep(Duration::from_millis(1));
    }
    let sent = Command::new("kill")
        .arg("-INT")
        .arg(child.id().to_string())
        .status()
        .unwrap();
    assert!(sent.success());
    let output = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(130), "{stderr}");
    assert!(stderr.contains("lamella resume"), "{stderr}");

    // Stopped mid-run: one checkpoint (the interrupt's) strictly between the start and the
    // end, fewer snapshots than the straight run, and no "finished" in the log.
    assert_eq!(checkpoints(&stopped).len(), 1);
    let saved = CheckpointStore::new(stopped.join("checkpoints"))
        .newest_valid::<DVec2>()
        .unwrap()
        .checkpoint;
    assert!(
        saved.time >= SNAPSHOT_INTERVAL && saved.time < end,
        "interrupted at t = {}",
        saved.time
    );
    let snapshots = |out: &Path| fs::read_dir(out.join("snapshots")).unwrap().count();
    assert!(snapshots(&stopped) < snapshots(&straight));
    let log = fs::read_to_string(stopped.join("run.log")).unwrap();
    assert!(
        log.contains("interrupted") && !log.contains("finished"),
        "{log}"
    );

    assert_success(&resume(&stopped), "the resume");
    assert_same_results(&straight, &stopped);
}

#[test]
fn sigkill_in_the_middle_of_a_checkpoint_write_leaves_a_resumable_run() {
    let dir = tempfile::tempdir().unwrap();
    // A checkpoint after every step.
    let text = case_text(4.0 * SNAPSHOT_INTERVAL, 1e-9);
    let case_path = write_case(dir.path(), &text);
    let straight = dir.path().join("straight");
    assert_success(&run(&case_path, &straight), "the straight run");

    let killed = dir.path().join("killed");
    let mut child = lamella()
        .env(lamella_run::output::checkpoint::PAUSE_HOOK_ENV, "5")
        .arg("run")
        .arg(&case_path)
        .arg("--out")
        .arg(&killed)
        .spawn()
        .unwrap();
    let partial = killed.join("checkpoints/.checkpoint_000005.bin.partial");
    let started = Instant::now();
    while fs::metadata(&partial).map_or(true, |m| m.len() == 0) {
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "no checkpoint write began"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    child.kill().unwrap(); // SIGKILL
    child.wait().unwrap();
    // The half-written file never took a checkpoint's name; the two before it are whole.
    assert!(partial.exists());
    let names: Vec<String> = checkpoints(&killed)
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["checkpoint_000003.bin", "checkpoint_000004.bin"]);

    assert_success(&resume(&killed), "the resume after SIGKILL");
    assert_same_results(&straight, &killed);
}

#[test]
fn a_damaged_newest_checkpoint_is_detected_and_the_previous_one_used() {
    let dir = tempfile::tempdir().unwrap();
    let text = case_text(8.0 * SNAPSHOT_INTERVAL, 15.0);
    let case_path = write_case(dir.path(), &text);
    let straight = dir.path().join("straight");
    assert_success(&run(&case_path, &straight), "the straight run");

    for damage in ["bit flip", "truncation"] {
        // Checkpoints at T (by the split run) and at 2T (the resume's final one).
        let out = dir.path().join(damage.replace(' ', "_"));
        run_to_half(&case_path, &text, &out);
        assert_success(&resume(&out), "the first resume");
        let [_, newest] = <[PathBuf; 2]>::try_from(checkpoints(&out)).unwrap();
        let mut bytes = fs::read(&newest).unwrap();
        if damage == "bit flip" {
            let middle = bytes.len() / 2;
            bytes[middle] ^= 0x10;
        } else {
            bytes.truncate(bytes.len() - 100);
        }
        fs::write(&newest, &bytes).unwrap();
        // Resumes from T and redoes T .. 2T, rewriting the same files.
        let output = resume(&out);
        assert_success(&output, "the resume");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(
            stderr.contains("checkpoint that cannot be used")
                && stderr.contains("checksum mismatch"),
            "{damage}: {stderr}"
        );
        assert_same_results(&straight, &out);
    }
}

#[test]
fn no_valid_checkpoint_is_exit_code_2_naming_every_file() {
    let dir = tempfile::tempdir().unwrap();
    let text = case_text(2.0 * SNAPSHOT_INTERVAL, 1e-9);
    let case_path = write_case(dir.path(), &text);
    let out = dir.path().join("run");
    assert_success(&run(&case_path, &out), "the run");
    let files = checkpoints(&out);
    for file in &files {
        let bytes = fs::read(file).unwrap();
        fs::write(file, &bytes[..bytes.len() / 3]).unwrap();
    }
    let output = resume(&out);
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    for file in &files {
        let name = file.file_name().unwrap().to_string_lossy();
        assert!(stderr.contains(name.as_ref()), "{stderr}");
    }
}

#[test]
fn a_changed_case_copy_and_a_non_run_folder_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let text = case_text(2.0 * SNAPSHOT_INTERVAL, 15.0);
    let case_path = write_case(dir.path(), &text);
    let out = dir.path().join("run");
    assert_success(&run(&case_path, &out), "the run");
    fs::write(out.join("case.ron"), text.replace("0.5, 0.0", "0.6, 0.0")).unwrap();
    let output = resume(&out);
    assert_eq!(output.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&output.stderr).contains("changed"));

    let output = resume(dir.path());
    assert_eq!(output.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&output.stderr).contains("not a Lamella run folder"));
}

#[test]
fn an_existing_run_folder_needs_force() {
    let dir = tempfile::tempdir().unwrap();
    let case_path = write_case(dir.path(), &case_text(SNAPSHOT_INTERVAL, 15.0));
    let out = dir.path().join("run");
    assert_success(&run(&case_path, &out), "the first run");
    let again = run(&case_path, &out);
    assert_eq!(again.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&again.stderr).contains("--force"));
    let forced = lamella()
        .arg("run")
        .arg(&case_path)
        .arg("--out")
        .arg(&out)
        .arg("--force")
        .output()
        .unwrap();
    assert_success(&forced, "the forced run");
}
