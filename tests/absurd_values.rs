//! Absurd values on the command line and in case files are refused up front with exit code 2
//! and a message that names the option or field: nothing panics, hangs, fills the memory or
//! floods the disk. `check` and `run` refuse the same case values (one validation).

use std::process::{Command, Output};

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

fn assert_refused(out: &Output, args: &[&str], words: &[&str]) {
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
    for word in words {
        assert!(stderr.contains(word), "{args:?}: {word:?} not in {stderr}");
    }
}

#[test]
fn absurd_command_line_values_are_refused_by_the_parser() {
    // Each was accepted before and then panicked, aborted on allocation or ran forever.
    let cases: [(&[&str], &str); 9] = [
        (&["mix", "run", "--grid", "4294967296,4294967296"], "--grid"),
        (&["mix", "run", "--grid", "100000,100000"], "--grid"),
        (
            &[
                "stability",
                "--m",
                "1",
                "--n",
                "1",
                "--re",
                "100",
                "--points",
                "100000",
            ],
            "--points",
        ),
        (&["profile", "run", "--bins", "100000000"], "--bins"),
        (&["profile", "run", "--time", "NaN"], "--time"),
        (&["mix", "run", "--time", "inf"], "--time"),
        (&["growth", "run", "--min-r2", "NaN"], "--min-r2"),
        (&["growth", "run", "--min-r2", "2"], "--min-r2"),
        (&["bench", "--particles", "1e9"], "--particles"),
    ];
    for (args, option) in cases {
        // The parser refuses before the (missing) run folder is looked at.
        assert_refused(&lamella(args), args, &["invalid value", option]);
    }
}

/// The bundled start-up Couette case, with `edit` applied to its text.
fn couette_with(dir: &std::path::Path, name: &str, edit: impl Fn(&str) -> String) -> String {
    let base = lamella_suite::cases_dir().join("couette.ron");
    let text = std::fs::read_to_string(base).unwrap();
    let edited = edit(&text);
    assert_ne!(edited, text, "{name}: the edit changed nothing");
    let path = dir.join(name);
    std::fs::write(&path, edited).unwrap();
    path.to_str().unwrap().to_string()
}

#[test]
fn absurd_case_values_are_refused_by_check_and_run_alike_naming_file_and_field() {
    let dir = tempfile::tempdir().unwrap();
    let probes: String = (0..25_000)
        .map(|i| format!("Point(name: \"p{i}\", at: [0.6e-3, 0.6e-3]),\n"))
        .collect();
    let line_probe =
        "Line(name: \"profile\", from: [0.6e-3, 0.0], to: [0.6e-3, 1.2e-3], samples: 31),";
    // Each passed `check` before, then panicked, never finished, filled the disk or the memory.
    type Edit = Box<dyn Fn(&str) -> String>;
    let cases: Vec<(&str, Edit, &[&str])> = vec![
        (
            "checkpoint.ron",
            Box::new(|t| t.replace("analyses:", "checkpoint_minutes: 1e308, analyses:")),
            &["output.checkpoint_minutes", "1e308", "a year"],
        ),
        (
            "snapshots.ron",
            Box::new(|t| t.replace("snapshot_interval: 0.05", "snapshot_interval: 1e-300")),
            &["time.snapshot_interval", "flood the disk"],
        ),
        (
            "samples.ron",
            Box::new(|t| {
                t.replace(
                    "snapshot_interval: 0.05",
                    "snapshot_interval: 0.05, sample_interval: 1e-12",
                )
            }),
            &["time.sample_interval", "flood the disk"],
        ),
        (
            "density.ron",
            Box::new(|t| t.replace("density: 1000.0", "density: 1e-300")),
            &["phases[0]", "time step", "steps", "check the units"],
        ),
        (
            "viscosity.ron",
            Box::new(|t| t.replace("viscosity: 1.0e-3", "viscosity: 1e308")),
            &["phases[0]", "viscosity 1e308", "steps"],
        ),
        (
            "probes.ron",
            Box::new(move |t| t.replace(line_probe, &probes)),
            &["output.probes", "25000 probes", "at most 500"],
        ),
        (
            "periodic.ron",
            Box::new(|t| {
                t.replace("upper: [1.2e-3, 1.2e-3]", "upper: [1.2e-4, 1.2e-3]")
                    .replace("[0.6e-3, 0.0]", "[0.6e-4, 0.0]")
                    .replace("[0.6e-3, 1.2e-3]", "[0.6e-4, 1.2e-3]")
            }),
            &["domain.periodic", "twice the kernel support", "1.2e-4 m"],
        ),
    ];
    for (name, edit, words) in cases {
        let case = couette_with(dir.path(), name, edit);
        let mut words = words.to_vec();
        words.push(name);
        let check = ["check", case.as_str()];
        assert_refused(&lamella(&check), &check, &words);
        let out = dir.path().join(format!("{name}.run"));
        let run = ["run", case.as_str(), "--out", out.to_str().unwrap()];
        assert_refused(&lamella(&run), &run, &words);
        assert!(
            !out.exists(),
            "{name}: run wrote {} before refusing",
            out.display()
        );
    }
}

#[test]
fn a_spacing_beyond_this_machines_memory_is_refused_with_both_sizes() {
    let Some(machine) = lamella_run::feasibility::machine_bytes() else {
        return; // The system does not say its memory: no check is made (documented).
    };
    let dir = tempfile::tempdir().unwrap();
    // 272 bytes per particle in this case: pick a spacing needing 1.5 times the machine's
    // memory, rounded to one that tiles the 1.2 mm box.
    let particles = 1.5 * machine as f64 / 272.0;
    if particles > 0.9 * lamella_case::MAX_PARTICLES {
        return; // A machine this large meets the case's own particle limit first.
    }
    let across = (particles.sqrt()).ceil();
    let spacing = 1.2e-3 / across;
    let case = couette_with(dir.path(), "fine.ron", |t| {
        t.replace("spacing: 4.0e-5", &format!("spacing: {spacing:e}"))
    });
    let check = ["check", case.as_str()];
    assert_refused(
        &lamella(&check),
        &check,
        &["fine.ron", "particles.spacing", "memory", "GB"],
    );
}

#[test]
fn a_case_file_that_is_not_utf8_is_named_with_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("latin1.ron");
    let base = lamella_suite::cases_dir().join("couette.ron");
    let mut bytes = std::fs::read(base).unwrap();
    let at = bytes.windows(5).position(|w| w == b"Start").unwrap();
    bytes.insert(at + 5, 0xE9);
    std::fs::write(&path, bytes).unwrap();
    let args = ["check", path.to_str().unwrap()];
    assert_refused(
        &lamella(&args),
        &args,
        &["latin1.ron:1:9:", "0xe9", "UTF-8"],
    );
}

#[test]
fn check_refuses_a_fifo_or_folder_instead_of_hanging() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("case.ron");
    let made = Command::new("mkfifo").arg(&fifo).status().unwrap();
    assert!(made.success());
    for path in [fifo.as_path(), dir.path()] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_lamella"))
            .arg("check")
            .arg(path)
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap();
        let started = std::time::Instant::now();
        while child.try_wait().unwrap().is_none() {
            if started.elapsed() > std::time::Duration::from_secs(20) {
                child.kill().unwrap();
                panic!("check {} hangs", path.display());
            }
            std::thread::sleep(std::time::Duration::from_millis(10));
        }
        let out = child.wait_with_output().unwrap();
        let args = ["check", path.to_str().unwrap()];
        assert_refused(&out, &args, &["not a regular file"]);
    }
}
