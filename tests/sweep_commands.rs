//! `lamella sweep`: a sweep stopped by SIGINT and run again skips its finished member (whose
//! files stay untouched) and resumes the interrupted one from its checkpoint to the same bytes
//! as an uninterrupted run; bad sweep files and folders are refused with exit code 2; the
//! Slurm scripts call this binary on the sweep folder.

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant, SystemTime};

use lamella_suite::{assert_success, cases_dir, text};

const LAMELLA: &str = env!("CARGO_BIN_EXE_lamella");

fn lamella(args: &[&str]) -> std::process::Output {
    lamella_suite::run(LAMELLA, args)
}

fn arg(path: &Path) -> &str {
    path.to_str().expect("UTF-8 temporary paths")
}

/// A sweep file over `cases/interface-growth.ron` with `parameters` (RON list items).
fn write_sweep(dir: &Path, name: &str, parameters: &str) -> PathBuf {
    let base = cases_dir().join("interface-growth.ron");
    let path = dir.join(name);
    fs::write(
        &path,
        format!(
            "(base: {:?}, combine: Zip, parameters: [{parameters}])",
            base.display().to_string()
        ),
    )
    .unwrap();
    path
}

/// Writes a sweep over the bundled case `base` with `parameters` (RON list items), runs it with
/// two jobs and returns its folder.
fn run_sweep_over(dir: &Path, base: &str, parameters: &str) -> PathBuf {
    let sweep = dir.join("sweep.ron");
    let base = cases_dir().join(base);
    fs::write(
        &sweep,
        format!(
            "(base: {:?}, parameters: [{parameters}])",
            base.display().to_string()
        ),
    )
    .unwrap();
    let out = dir.join("sweep");
    assert_success(
        &lamella(&[
            "-q",
            "sweep",
            "run",
            arg(&sweep),
            "--out",
            arg(&out),
            "--jobs",
            "2",
        ]),
        &format!("the sweep over {parameters}"),
    );
    out
}

/// Two members: member 0 runs 5 ms of flow (well under a second), member 1 runs 60 ms (a few
/// seconds), so a stop sent while member 1 runs finds member 0 finished.
fn two_members(dir: &Path) -> PathBuf {
    write_sweep(
        dir,
        "two.ron",
        "(path: \"phases[0].viscosity_law.viscosity\", values: List([2.0e-2, 1.0e-2])),
         (path: \"time.end\", values: List([0.005, 0.06]))",
    )
}

/// Every file under `root` with its bytes and modification time.
fn files(root: &Path) -> BTreeMap<PathBuf, (Vec<u8>, SystemTime)> {
    let mut found = BTreeMap::new();
    let mut stack = vec![root.to_path_buf()];
    while let Some(dir) = stack.pop() {
        for entry in fs::read_dir(&dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
            } else {
                let modified = fs::metadata(&path).unwrap().modified().unwrap();
                found.insert(path.clone(), (fs::read(&path).unwrap(), modified));
            }
        }
    }
    found
}

/// The results of a run folder that a resumed run must reproduce byte for byte.
fn results(run: &Path) -> Vec<(String, Vec<u8>)> {
    let mut out = vec![(
        "series.csv".into(),
        fs::read(run.join("series.csv")).unwrap(),
    )];
    let mut snapshots: Vec<PathBuf> = fs::read_dir(run.join("snapshots"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| !p.file_name().unwrap().to_string_lossy().starts_with('.'))
        .collect();
    snapshots.sort();
    for path in snapshots {
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        out.push((name, fs::read(&path).unwrap()));
    }
    out
}

/// Starts `lamella sweep run` of [`two_members`] with one job and returns once member 1 has
/// written its second snapshot (t = 20 ms of 60), so it is stepping: the child, the sweep
/// file and the sweep folder.
fn start_until_member_one_steps(dir: &Path) -> (std::process::Child, PathBuf, PathBuf) {
    let sweep = two_members(dir);
    let out = dir.join("sweep");
    let child = Command::new(LAMELLA)
        .args([
            "sweep",
            "run",
            arg(&sweep),
            "--out",
            arg(&out),
            "--jobs",
            "1",
        ])
        .stderr(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    let second = out.join("member-001/snapshots/state_000001.vtp");
    let started = Instant::now();
    while !second.exists() {
        assert!(
            started.elapsed() < Duration::from_secs(120),
            "member 1 did not start"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    (child, sweep, out)
}

#[test]
fn a_stopped_sweep_skips_finished_members_and_resumes_the_interrupted_one() {
    let dir = tempfile::tempdir().unwrap();
    let (child, sweep, out) = start_until_member_one_steps(dir.path());
    let sent = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(sent.success());
    let stopped = child.wait_with_output().unwrap();
    let stderr = text(&stopped.stderr);
    assert_eq!(stopped.status.code(), Some(130), "{stderr}");
    assert!(stderr.contains("run the same command again"), "{stderr}");
    let listing = text(&stopped.stdout);
    assert!(
        listing.contains("member-000  finished") && listing.contains("member-001  interrupted"),
        "{listing}"
    );
    let log = fs::read_to_string(out.join("member-001/run.log")).unwrap();
    assert!(
        log.contains("interrupted") && !log.contains("finished"),
        "{log}"
    );

    let before = files(&out.join("member-000"));
    let again = lamella(&["sweep", "run", arg(&sweep), "--out", arg(&out)]);
    assert_success(&again, "the second sweep run");
    assert!(
        text(&again.stdout).contains("member-001  finished"),
        "{}",
        text(&again.stdout)
    );
    assert_eq!(
        files(&out.join("member-000")),
        before,
        "the finished member was run again"
    );
    let log = fs::read_to_string(out.join("member-001/run.log")).unwrap();
    assert!(log.contains("resumed at t = "), "{log}");

    // The same member run straight through (its case file under its own name, as the
    // snapshots carry the case name) gives the same bytes.
    let straight_case = dir.path().join("member-001.ron");
    fs::copy(out.join("cases/member-001.ron"), &straight_case).unwrap();
    let straight = dir.path().join("straight");
    assert_success(
        &lamella(&["-q", "run", arg(&straight_case), "--out", arg(&straight)]),
        "the straight run",
    );
    let (a, b) = (results(&straight), results(&out.join("member-001")));
    assert_eq!(a.len(), b.len());
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        assert!(
            x == y,
            "{name} differs between the straight and the resumed member"
        );
    }

    // A third run has nothing to do; the folder belongs to this sweep and no other.
    assert_success(
        &lamella(&["-q", "sweep", "run", arg(&sweep), "--out", arg(&out)]),
        "the third sweep run",
    );
    let other = write_sweep(
        dir.path(),
        "other.ron",
        "(path: \"phases[0].viscosity_law.viscosity\", values: List([3.0e-2]))",
    );
    let refused = lamella(&["sweep", "run", arg(&other), "--out", arg(&out)]);
    assert_eq!(refused.status.code(), Some(2));
    assert!(
        text(&refused.stderr).contains("holds another sweep"),
        "{}",
        text(&refused.stderr)
    );
    let report = lamella(&["sweep", "report", arg(&out)]);
    assert_success(&report, "the report");
    let table = fs::read_to_string(out.join("sweep.csv")).unwrap();
    let statuses: Vec<&str> = table
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(statuses, ["finished", "finished"], "{table}");
}

#[test]
fn bad_sweep_files_and_folders_are_refused_naming_the_place() {
    let dir = tempfile::tempdir().unwrap();
    let unknown = write_sweep(
        dir.path(),
        "unknown.ron",
        "(path: \"phases[0].viscosty\", values: List([1.0]))",
    );
    let out = lamella(&["sweep", "check", arg(&unknown), "--no-calibration"]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains("unknown.ron: parameters[0].path")
            && stderr.contains("`phases[0]` has no field `viscosty`; its fields are: ")
            && stderr.contains("viscosity_law"),
        "{stderr}"
    );
    let malformed = dir.path().join("malformed.ron");
    fs::write(&malformed, "(base: \"x.ron\", parameters: [(path: 1)]").unwrap();
    let out = lamella(&[
        "sweep",
        "run",
        arg(&malformed),
        "--out",
        arg(&dir.path().join("o")),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("malformed.ron:1:"),
        "{}",
        text(&out.stderr)
    );
    assert!(
        !dir.path().join("o").exists(),
        "a refused sweep wrote a folder"
    );
    let plain = dir.path().join("plain");
    fs::write(&plain, "x").unwrap();
    let sweep = two_members(dir.path());
    let out = lamella(&[
        "sweep",
        "run",
        arg(&sweep),
        "--out",
        arg(&plain.join("sub")),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("is not a folder"),
        "{}",
        text(&out.stderr)
    );
    let out = lamella(&["sweep", "member", arg(dir.path()), "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("not a sweep folder"),
        "{}",
        text(&out.stderr)
    );
    // A valid member whose flow outruns the base case's expected speed draws the warning of
    // `lamella check`, named by the member.
    let faster = write_sweep(
        dir.path(),
        "faster.ron",
        "(path: \"phases[0].viscosity_law.viscosity\", values: List([2.0e-2, 2.0e-3]))",
    );
    let out = lamella(&["sweep", "check", arg(&faster), "--no-calibration"]);
    assert_success(&out, "sweep check");
    let stdout = text(&out.stdout);
    assert!(
        stdout.contains("2 members")
            && stdout.contains("warning: member-001: scales.expected_max_speed")
            && !stdout.contains("warning: member-000"),
        "{stdout}"
    );
}

#[test]
fn the_slurm_scripts_run_this_binary_on_each_member_and_a_missing_sbatch_is_explained() {
    let dir = tempfile::tempdir().unwrap();
    let sweep = two_members(dir.path());
    let out = dir.path().join("cluster");
    let written = lamella(&[
        "sweep",
        "slurm",
        arg(&sweep),
        "--out",
        arg(&out),
        "--partition",
        "debug",
        "--time",
        "00:10:00",
        "--cpus-per-task",
        "2",
    ]);
    assert_success(&written, "sweep slurm");
    let root = fs::canonicalize(&out).unwrap();
    let exe = fs::canonicalize(LAMELLA).unwrap();
    let script = fs::read_to_string(out.join("sweep.sbatch")).unwrap();
    for line in [
        "#SBATCH --array=0-1".to_string(),
        "#SBATCH --cpus-per-task=2".to_string(),
        "#SBATCH --partition=debug".to_string(),
        "#SBATCH --time=00:10:00".to_string(),
        format!("#SBATCH --output={}/logs/member-%a.out", root.display()),
        format!(
            "exec '{}' sweep member '{}' \"$SLURM_ARRAY_TASK_ID\" --threads \"$SLURM_CPUS_PER_TASK\"",
            exe.display(),
            root.display()
        ),
    ] {
        assert!(
            script.lines().any(|l| l == line),
            "no `{line}` in\n{script}"
        );
    }
    let collect = fs::read_to_string(out.join("collect.sbatch")).unwrap();
    assert!(
        collect.contains(&format!("sweep report '{}'", root.display())),
        "{collect}"
    );
    // An array task as Slurm would start it runs its member.
    assert_success(
        &lamella(&["-q", "sweep", "member", arg(&out), "0", "--threads", "1"]),
        "member 0",
    );
    assert!(out.join("member-000/run.log").exists());
    let missing = lamella(&["sweep", "member", arg(&out), "2"]);
    assert_eq!(missing.status.code(), Some(2));
    assert!(text(&missing.stderr).contains("has 2 members"));

    // Without sbatch on the PATH, --submit explains and fails.
    let empty = dir.path().join("no-slurm");
    fs::create_dir_all(&empty).unwrap();
    let submitted = Command::new(LAMELLA)
        .args([
            "sweep",
            "slurm",
            arg(&sweep),
            "--out",
            arg(&out),
            "--submit",
        ])
        .env("PATH", &empty)
        .output()
        .unwrap();
    assert_eq!(submitted.status.code(), Some(1));
    assert!(
        text(&submitted.stderr).contains("cannot run `sbatch`"),
        "{}",
        text(&submitted.stderr)
    );
}

#[test]
fn the_report_of_a_mixing_case_carries_the_measures_lamella_mix_gives() {
    let dir = tempfile::tempdir().unwrap();
    let out = run_sweep_over(
        dir.path(),
        "two-phase-cavity.ron",
        "(path: \"time.end\", values: List([0.002, 0.004]))",
    );
    assert_success(
        &lamella(&["-q", "sweep", "report", arg(&out)]),
        "the report",
    );
    let table = fs::read_to_string(out.join("sweep.csv")).unwrap();
    let header: Vec<&str> = table.lines().next().unwrap().split(',').collect();
    let row: Vec<&str> = table.lines().nth(2).unwrap().split(',').collect();
    let cell = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
    assert_success(
        &lamella(&["-q", "mix", arg(&out.join("member-001"))]),
        "lamella mix",
    );
    let mixing = fs::read_to_string(out.join("member-001/analysis/mixing.csv")).unwrap();
    let last: Vec<&str> = mixing.lines().last().unwrap().split(',').collect();
    // time_s, intensity_of_segregation, lacey_index, mixing_entropy_index, mean_ftle_per_s
    assert_eq!(
        cell("intensity_of_segregation"),
        last[1],
        "{table}\n{mixing}"
    );
    assert_eq!(cell("lacey_index"), last[2]);
    assert_eq!(cell("mixing_entropy_index"), last[3]);
    assert_eq!(cell("mean_ftle_per_s"), last[4]);
    assert!(cell("mean_ftle_per_s").parse::<f64>().unwrap() > 0.0);
}

#[test]
fn a_failed_member_is_recorded_and_the_others_go_on() {
    let dir = tempfile::tempdir().unwrap();
    // A density tolerance of 1e-9 stops member 1 at its first step.
    let sweep = write_sweep(
        dir.path(),
        "failing.ron",
        "(path: \"density_tolerance\", values: List([0.05, 1.0e-9])),
         (path: \"time.end\", values: List([0.002, 0.002]))",
    );
    let out = dir.path().join("sweep");
    let ran = lamella(&[
        "sweep",
        "run",
        arg(&sweep),
        "--out",
        arg(&out),
        "--jobs",
        "2",
    ]);
    assert_eq!(ran.status.code(), Some(1), "{}", text(&ran.stderr));
    let stderr = text(&ran.stderr);
    assert!(
        stderr.contains("1 of 2 members failed: member-001 (") && stderr.contains("density"),
        "{stderr}"
    );
    assert_success(
        &lamella(&["-q", "sweep", "report", arg(&out)]),
        "the report",
    );
    let table = fs::read_to_string(out.join("sweep.csv")).unwrap();
    let rows: Vec<&str> = table.lines().skip(1).collect();
    assert!(rows[0].starts_with("0,finished,"), "{table}");
    assert!(
        rows[1].starts_with("1,failed,") && rows[1].contains("density deviates"),
        "{table}"
    );
    // Run again: the failed member is left alone unless asked.
    let log = out.join("member-001/run.log");
    let written = || fs::metadata(&log).unwrap().modified().unwrap();
    let before = written();
    let again = lamella(&["sweep", "run", arg(&sweep), "--out", arg(&out)]);
    assert_eq!(again.status.code(), Some(1));
    assert_eq!(written(), before, "the failed member was run again");
    let retried = lamella(&[
        "sweep",
        "run",
        arg(&sweep),
        "--out",
        arg(&out),
        "--retry-failed",
    ]);
    assert_eq!(retried.status.code(), Some(1));
    assert_ne!(
        written(),
        before,
        "--retry-failed did not run the member again"
    );
}

#[test]
fn a_killed_member_is_not_finished_and_the_next_run_completes_it() {
    let dir = tempfile::tempdir().unwrap();
    // Member 1 is stepping; its lock file names its process.
    let (child, sweep, out) = start_until_member_one_steps(dir.path());
    let holder = fs::read_to_string(out.join("member-001/run.lock")).unwrap();
    let pid = holder
        .strip_prefix("process ")
        .and_then(|rest| rest.split_whitespace().next())
        .unwrap_or_else(|| panic!("no process in {holder:?}"));
    assert!(
        Command::new("kill")
            .args(["-KILL", pid])
            .status()
            .unwrap()
            .success()
    );
    let ended = child.wait_with_output().unwrap();
    let stderr = text(&ended.stderr);
    assert_eq!(ended.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("1 of 2 members did not finish: member-001"),
        "{stderr}"
    );
    assert_success(
        &lamella(&["-q", "sweep", "run", arg(&sweep), "--out", arg(&out)]),
        "the second sweep run",
    );
    let log = fs::read_to_string(out.join("member-001/run.log")).unwrap();
    assert!(log.contains("finished at t = "), "{log}");
}

#[test]
fn a_spacing_sweep_draws_the_convergence_of_the_profile_error() {
    let dir = tempfile::tempdir().unwrap();
    let out = run_sweep_over(
        dir.path(),
        "two-layer-channel.ron",
        "(path: \"particles.spacing\", values: List([1.0e-4, 8.0e-5, 5.0e-5]))",
    );
    let report = lamella(&["sweep", "report", arg(&out)]);
    assert_success(&report, "the report");
    let stdout = text(&report.stdout);
    // The two-layer channel against Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed.,
    // §2.5: at 12, 15 and 24 rows the profile error falls with the spacing at about second
    // order (finer, it reaches a floor of about 0.1 %, DEVELOPERS.md; a one-liquid channel is
    // there already at 10 rows).
    let order: f64 = stdout
        .split("observed order ")
        .nth(1)
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no observed order in {stdout}"));
    assert!(order > 1.5, "{stdout}");
    assert!(
        fs::read(out.join("convergence.png"))
            .unwrap()
            .starts_with(b"\x89PNG")
    );
    assert!(!out.join("stability-map.png").exists());
}
