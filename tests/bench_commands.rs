//! Command-line tests of `lamella bench` and `lamella estimate` on tiny sizes: the outputs
//! are complete and consistent, and bad options are refused with exit code 2. (What they
//! measure is not asserted: speed is a benchmark's business, never a test's.)

use std::process::Output;

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

fn case(name: &str) -> String {
    let path = lamella_suite::cases_dir().join(name);
    path.to_str().expect("UTF-8 path").to_string()
}

#[test]
fn bench_prints_a_row_per_size_and_thread_count_and_a_json_line() {
    let out = lamella(&[
        "bench",
        "--particles",
        "400,1600",
        "--threads",
        "1,2",
        "--steps",
        "2",
        "--repeats",
        "1",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("particle-steps/s"), "{stdout}");
    let json_line = stdout
        .lines()
        .find(|l| l.starts_with('{'))
        .expect("a JSON line");
    let report: serde_json::Value = serde_json::from_str(json_line).expect("valid JSON");
    let rows = report["rows"].as_array().expect("rows");
    assert_eq!(rows.len(), 4);
    for row in rows {
        let particles = row["particles"].as_f64().unwrap();
        let seconds = row["seconds_per_step"].as_f64().unwrap();
        let rate = row["particle_steps_per_second"].as_f64().unwrap();
        assert!(seconds > 0.0 && particles > 400.0);
        assert!((rate * seconds / particles - 1.0).abs() < 1e-9);
        // Every particle holds at least its state arrays (about 90 bytes).
        assert!(row["peak_bytes_per_particle"].as_f64().unwrap() > 90.0);
    }
    assert_eq!(rows[0]["threads"], 1);
    assert_eq!(rows[0]["speed_up"], 1.0);
    assert_eq!(rows[1]["threads"], 2);
    assert!(rows[1]["speed_up"].as_f64().unwrap() > 0.0);
}

#[test]
fn bench_refuses_bad_sizes() {
    for bad in ["abc", "10", "1e4,-5"] {
        let out = lamella(&["bench", "--particles", bad, "--steps", "1"]);
        assert_eq!(out.status.code(), Some(2), "--particles {bad}");
        assert!(String::from_utf8_lossy(&out.stderr).contains("--particles"));
    }
}

#[test]
fn a_thread_list_is_for_bench_only() {
    let out = lamella(&["--threads", "1,2", "check", &case("poiseuille.ron")]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--threads takes one count"));
}

#[test]
fn estimate_reports_time_memory_and_disk() {
    let out = lamella(&[
        "estimate",
        &case("two-layer-channel.ron"),
        "--calibration",
        "0.2",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    for label in [
        "particles            1080 (900 fluid, 180 wall)",
        "steps to the end",
        "solver time",
        "snapshots            13 ×",
        "total wall time",
        "peak memory",
    ] {
        assert!(stdout.contains(label), "missing {label:?} in\n{stdout}");
    }
    // Steps predicted from the calibration's mean dt, end time 0.6 s: dt is set by the
    // viscous limit here, about 6.8e-5 s, so close to 8 900 steps.
    let steps: f64 = stdout
        .lines()
        .find(|l| l.contains("steps to the end"))
        .and_then(|l| l.split_whitespace().nth(4))
        .and_then(|s| s.parse().ok())
        .expect("a step count");
    assert!((8_000.0..10_000.0).contains(&steps), "{steps}");
}

#[test]
fn estimate_refuses_bad_input() {
    let out = lamella(&["estimate", "no-such-case.ron"]);
    assert_eq!(out.status.code(), Some(2));
    let out = lamella(&["estimate", &case("poiseuille.ron"), "--calibration", "0"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--calibration"));
}
