//! Nothing lost, nothing panics: signals in every order, closed output streams, two writers of
//! one run folder, through the `lamella` binary as a user (or `timeout`, or a closed terminal)
//! drives it.

use std::fs;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use glam::DVec2;
use lamella_run::output::checkpoint::PAUSE_HOOK_ENV;
use lamella_run::output::{CheckpointStore, RunFolder};
use lamella_suite::assert_success;

/// A small two-layer channel (10 × 10 fluid particles); `END` is filled in per test.
const CASE: &str = r#"
#![enable(implicit_some)]
(
    title: "reliability check",
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
        checkpoint_minutes: 15.0,
        probes: [Point(name: "middle", at: [2.0e-4, 2.0e-4])],
    ),
)
"#;

/// Snapshot interval of [`CASE`] (s); about four steps each.
const SNAPSHOT_INTERVAL: f64 = 1.0e-3;

/// Bytes of a checkpoint made for a run folder.
type CheckpointBytes<'a> = Box<dyn Fn(&Path) -> Vec<u8> + 'a>;

fn write_case(dir: &Path, intervals: f64) -> PathBuf {
    let path = dir.join("layers.ron");
    let end = intervals * SNAPSHOT_INTERVAL;
    fs::write(&path, CASE.replace("END", &format!("{end:e}"))).unwrap();
    path
}

fn lamella() -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_lamella"));
    command.arg("--threads").arg("2");
    command
}

fn run_command(case: &Path, out: &Path) -> Command {
    let mut command = lamella();
    command
        .arg("--quiet")
        .arg("run")
        .arg(case)
        .arg("--out")
        .arg(out);
    command
}

fn resume_command(out: &Path) -> Command {
    let mut command = lamella();
    command.arg("--quiet").arg("resume").arg(out);
    command
}

/// Waits (at most a minute) until `ready` holds.
fn wait_for(what: &str, mut ready: impl FnMut() -> bool) {
    let started = Instant::now();
    while !ready() {
        assert!(started.elapsed() < Duration::from_secs(60), "{what}");
        std::thread::sleep(Duration::from_millis(2));
    }
}

/// Waits until the run in `out` has written its second snapshot: the interrupt handler is
/// installed and the run is stepping.
fn wait_until_stepping(out: &Path) {
    let second = out.join("snapshots").join(RunFolder::snapshot_name(1));
    wait_for("the run did not start", || second.exists());
}

fn signal(child: &Child, name: &str) {
    let sent = Command::new("kill")
        .arg(format!("-{name}"))
        .arg(child.id().to_string())
        .status()
        .unwrap();
    assert!(sent.success(), "kill -{name} failed");
}

fn checkpoint_files(out: &Path) -> Vec<PathBuf> {
    CheckpointStore::new(out.join("checkpoints"))
        .list()
        .unwrap()
        .into_iter()
        .map(|(_, path)| path)
        .collect()
}

/// Every result file that must match byte for byte between a straight and a resumed run.
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
    files
}

fn assert_same_results(straight: &Path, resumed: &Path) {
    let a = results(straight);
    let b = results(resumed);
    assert_eq!(a.len(), b.len(), "different numbers of result files");
    for ((name, x), (other, y)) in a.iter().zip(&b) {
        assert_eq!(name, other);
        assert!(
            x == y,
            "{name} differs between the straight and the resumed run"
        );
    }
}

/// The state the stopped run saved: a valid checkpoint strictly before the end.
fn assert_saved_mid_run(out: &Path, end: f64) {
    let restored = CheckpointStore::new(out.join("checkpoints"))
        .newest_valid::<DVec2>()
        .unwrap();
    assert!(restored.skipped.is_empty(), "{:?}", restored.skipped);
    let time = restored.checkpoint.time;
    assert!(
        time >= SNAPSHOT_INTERVAL && time < end,
        "saved at t = {time}"
    );
}

#[test]
fn signals_during_the_save_wait_for_it_and_the_resume_matches_a_straight_run() {
    let dir = tempfile::tempdir().unwrap();
    let intervals = 100.0;
    let case = write_case(dir.path(), intervals);
    let straight = dir.path().join("straight");
    assert_success(
        &run_command(&case, &straight).output().unwrap(),
        "the straight run",
    );

    // Ctrl-C twice, then SIGTERM and SIGHUP, all while the interrupt's checkpoint (the first
    // this process writes) is half on disk and held there for two seconds.
    let stopped = dir.path().join("stopped");
    let child = run_command(&case, &stopped)
        .env(PAUSE_HOOK_ENV, "1:2000")
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    wait_until_stepping(&stopped);
    signal(&child, "INT");
    let partial = stopped.join("checkpoints/.checkpoint_000001.bin.partial");
    wait_for("the interrupt's checkpoint did not begin", || {
        fs::metadata(&partial).is_ok_and(|m| m.len() > 0)
    });
    for name in ["INT", "TERM", "HUP", "INT"] {
        signal(&child, name);
    }
    let output = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(130), "{stderr}");
    assert!(!partial.exists());
    assert_eq!(checkpoint_files(&stopped).len(), 1);
    assert_saved_mid_run(&stopped, intervals * SNAPSHOT_INTERVAL);

    assert_success(&resume_command(&stopped).output().unwrap(), "the resume");
    assert_same_results(&straight, &stopped);
}

#[test]
fn sighup_and_sigterm_save_like_ctrl_c() {
    let dir = tempfile::tempdir().unwrap();
    let intervals = 2000.0;
    let case = write_case(dir.path(), intervals);
    for name in ["HUP", "TERM"] {
        let out = dir.path().join(name);
        let child = run_command(&case, &out)
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        wait_until_stepping(&out);
        signal(&child, name);
        let output = child.wait_with_output().unwrap();
        assert_eq!(output.status.code(), Some(130), "SIG{name}");
        // Reported as an interrupt with where to continue, not as an error.
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(
            stderr.contains("interrupted at t = ") && stderr.contains("lamella resume"),
            "SIG{name}: {stderr}"
        );
        assert!(!stderr.contains("error"), "SIG{name}: {stderr}");
        assert_saved_mid_run(&out, intervals * SNAPSHOT_INTERVAL);
        let log = fs::read_to_string(out.join("run.log")).unwrap();
        assert!(log.contains("interrupted"), "SIG{name}: {log}");
    }
}

#[test]
fn gnu_timeout_loses_nothing() {
    // GNU timeout (coreutils 9) sends SIGTERM to the child and then to its own process group,
    // which holds the child: two signals a moment apart.
    let dir = tempfile::tempdir().unwrap();
    let intervals = 20000.0;
    let case = write_case(dir.path(), intervals);
    for trial in 0..3 {
        let out = dir.path().join(format!("trial{trial}"));
        let output = Command::new("timeout")
            .arg("--preserve-status")
            .arg(format!("{}", 1.0 + 0.3 * trial as f64))
            .arg(env!("CARGO_BIN_EXE_lamella"))
            .args(["--threads", "2", "--quiet", "run"])
            .arg(&case)
            .arg("--out")
            .arg(&out)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(130), "trial {trial}: {stderr}");
        assert_saved_mid_run(&out, intervals * SNAPSHOT_INTERVAL);
    }
}

#[test]
fn a_closed_stderr_or_stdout_never_stops_a_run_without_its_results() {
    let dir = tempfile::tempdir().unwrap();
    let case = write_case(dir.path(), 8.0);
    let out = dir.path().join("run");
    // As `lamella run CASE --out DIR 2>&1 | head -n1`: both streams into one pipe whose
    // reader leaves after the first line.
    let mut child = lamella()
        .arg("run")
        .arg(&case)
        .arg("--out")
        .arg(&out)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 1];
    child.stderr.take().unwrap().read_exact(&mut first).unwrap();
    drop(child.stdout.take());
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(0));
    let log = fs::read_to_string(out.join("run.log")).unwrap();
    assert!(log.contains("finished"), "{log}");
    assert_eq!(checkpoint_files(&out).len(), 1);

    // `check` with its report going nowhere: a closed pipe is fine, a full disk is exit 1.
    let mut child = lamella()
        .arg("check")
        .arg(&case)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let output = child.wait_with_output().unwrap();
    assert_eq!(output.status.code(), Some(0), "{output:?}");
    if Path::new("/dev/full").exists() {
        let full = fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let output = lamella()
            .arg("check")
            .arg(&case)
            .stdout(full)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{stderr}");
        assert!(stderr.contains("standard output"), "{stderr}");
    }
}

#[test]
fn a_run_folder_in_use_is_refused_naming_its_holder_and_a_killed_holder_frees_it() {
    let dir = tempfile::tempdir().unwrap();
    // Far longer than any of the runs below lasts before it is stopped: on a busy machine a
    // run of 4000 intervals once finished before its interrupt arrived.
    let intervals = 40000.0;
    let case = write_case(dir.path(), intervals);
    let out = dir.path().join("run");
    let first = run_command(&case, &out).spawn().unwrap();
    wait_until_stepping(&out);
    signal(&first, "INT");
    assert_eq!(first.wait_with_output().unwrap().status.code(), Some(130));

    // Two resumes at once: the second is refused before it touches anything.
    let series_before = fs::read(out.join("series.csv")).unwrap();
    let holder = resume_command(&out).spawn().unwrap();
    let lock = out.join("run.lock");
    let pid = format!("process {}", holder.id());
    wait_for("the first resume took no lock", || {
        fs::read_to_string(&lock).is_ok_and(|text| text.contains(&pid))
    });
    for second in [
        resume_command(&out).output().unwrap(),
        run_command(&case, &out).arg("--force").output().unwrap(),
    ] {
        let stderr = String::from_utf8_lossy(&second.stderr);
        assert_eq!(second.status.code(), Some(2), "{stderr}");
        assert!(
            stderr.contains("in use") && stderr.contains(&pid),
            "{stderr}"
        );
    }

    // SIGKILL leaves the lock file with its text, but the lock went with the process.
    let mut holder = holder;
    holder.kill().unwrap();
    holder.wait().unwrap();
    assert!(fs::read_to_string(&lock).unwrap().contains(&pid));
    let next = resume_command(&out).spawn().unwrap();
    let next_pid = format!("process {}", next.id());
    wait_for("the resume after SIGKILL took no lock", || {
        fs::read_to_string(&lock).is_ok_and(|text| text.contains(&next_pid))
    });
    signal(&next, "INT");
    assert_eq!(next.wait_with_output().unwrap().status.code(), Some(130));
    // Nothing was written twice: every row after the ones before the resumes is new.
    let series = fs::read_to_string(out.join("series.csv")).unwrap();
    assert!(
        series
            .as_bytes()
            .starts_with(&series_before[..series_before.len() / 2])
    );
    let times: Vec<f64> = series
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert!(
        times.windows(2).all(|w| w[0] < w[1]),
        "series.csv has rows twice or out of order"
    );
}

#[test]
fn a_foreign_or_impossible_newest_checkpoint_is_named_and_the_older_valid_one_used() {
    use lamella_run::output::checkpoint::{decode, encode};
    let dir = tempfile::tempdir().unwrap();
    let case = write_case(dir.path(), 8.0);
    let other_dir = dir.path().join("other");
    fs::create_dir_all(&other_dir).unwrap();
    let other_case = other_dir.join("layers.ron");
    fs::write(
        &other_case,
        fs::read_to_string(&case)
            .unwrap()
            .replace("body_force: [0.5", "body_force: [0.25"),
    )
    .unwrap();
    let other = dir.path().join("other_run");
    assert_success(
        &run_command(&other_case, &other).output().unwrap(),
        "the other run",
    );
    let foreign = fs::read(&checkpoint_files(&other)[0]).unwrap();

    let ours = |out: &Path| {
        assert_success(&run_command(&case, out).output().unwrap(), "the run");
        decode::<DVec2>(&fs::read(&checkpoint_files(out)[0]).unwrap()).unwrap()
    };
    let variants: [(&str, CheckpointBytes<'_>, &str); 3] = [
        (
            "foreign",
            Box::new(|_| foreign.clone()),
            "with another text",
        ),
        (
            "nan_time",
            Box::new(|out| {
                let mut c = ours(out);
                c.time = f64::NAN;
                encode(&c)
            }),
            "time is NaN",
        ),
        (
            "far_particle",
            Box::new(|out| {
                let mut c = ours(out);
                c.particles.position[3].x = 1e6;
                encode(&c)
            }),
            "outside the case's domain",
        ),
    ];
    for (name, bad, reason) in variants {
        let out = dir.path().join(name);
        let bytes = bad(&out);
        if !out.exists() {
            ours(&out);
        }
        fs::write(out.join("checkpoints/checkpoint_000002.bin"), bytes).unwrap();
        let output = lamella().arg("resume").arg(&out).output().unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_success(&output, name);
        assert!(
            stderr.contains("checkpoint_000002.bin") && stderr.contains(reason),
            "{name}: {stderr}"
        );
        assert!(stderr.contains("checkpoint_000001.bin"), "{name}: {stderr}");
    }
}
