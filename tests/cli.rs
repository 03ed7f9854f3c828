//! Command-line tests of `check`, `new`, `run` input handling and `--help`, run on the binary.

use lamella_suite::text;
use std::path::Path;
use std::process::{Command, Output};

use lamella_suite::{bundled_cases, workspace_root as root};

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(env!("CARGO_BIN_EXE_lamella"), args)
}

fn path_str(path: &Path) -> &str {
    path.to_str().expect("test paths are UTF-8")
}

#[test]
fn check_accepts_every_bundled_case_and_prints_a_summary() {
    let cases = bundled_cases();
    assert!(cases.len() >= 7);
    for case in cases {
        let out = lamella(&["check", path_str(&case)]);
        let stdout = text(&out.stdout);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}: {}",
            case.display(),
            text(&out.stderr)
        );
        for word in [
            "valid",
            "particles",
            "sound speed",
            "time step",
            "Reynolds",
            "memory",
        ] {
            assert!(
                stdout.contains(word),
                "{}: no {word:?} in\n{stdout}",
                case.display()
            );
        }
    }
}

#[test]
fn check_reports_layer_ratios_of_the_two_layer_channel() {
    let case = root().join("cases/two-layer-channel.ron");
    let out = lamella(&["check", path_str(&case)]);
    let stdout = text(&out.stdout);
    assert!(stdout.contains("viscosity ratio m = 5"), "{stdout}");
    assert!(stdout.contains("width ratio n = 2"), "{stdout}");
    assert!(stdout.contains("syrup       600 fluid"), "{stdout}");
    assert!(stdout.contains("180 wall"), "{stdout}");
}

#[test]
fn check_exits_2_on_an_invalid_case_and_names_the_field() {
    let case = root().join("crates/lamella-case/tests/invalid/several-problems.ron");
    let out = lamella(&["check", path_str(&case)]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    for path in [
        "phases[0].density",
        "regions[0].phase",
        "particles.smoothing_ratio",
    ] {
        assert!(
            stderr.contains(&format!("several-problems.ron: {path}: bad value")),
            "{stderr}"
        );
    }
}

#[test]
fn check_exits_2_on_a_syntax_error_with_line_and_column() {
    let case = root().join("crates/lamella-case/tests/invalid/syntax-error.ron");
    let out = lamella(&["check", path_str(&case)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("syntax-error.ron:4:5: "),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn check_exits_2_on_a_missing_file() {
    let out = lamella(&["check", "no/such/case.ron"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("cannot read the case file"));
}

#[test]
fn quiet_check_prints_nothing_on_success() {
    let case = root().join("cases/poiseuille.ron");
    let out = lamella(&["--quiet", "check", path_str(&case)]);
    assert_eq!(out.status.code(), Some(0));
    assert!(out.stdout.is_empty() && out.stderr.is_empty());
}

const TEMPLATES: [&str; 7] = [
    "channel",
    "two-layer-channel",
    "seeded-channel",
    "couette",
    "cavity",
    "two-phase-cavity",
    "taylor-green",
];

#[test]
fn new_writes_every_template_as_a_case_check_accepts() {
    let dir = tempfile::tempdir().unwrap();
    for name in TEMPLATES {
        let path = dir.path().join(format!("{name}.ron"));
        let out = lamella(&["new", name, path_str(&path)]);
        assert_eq!(out.status.code(), Some(0), "{name}: {}", text(&out.stderr));
        let written = std::fs::read_to_string(&path).unwrap();
        assert!(written.starts_with("// "), "{name} starts with a comment");
        let check = lamella(&["check", path_str(&path)]);
        assert_eq!(
            check.status.code(),
            Some(0),
            "{name}: {}",
            text(&check.stderr)
        );
    }
    // Nothing but the written cases is left in the folder (no partial files).
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        TEMPLATES.len()
    );
}

#[test]
fn new_without_a_path_writes_into_the_current_folder() {
    let dir = tempfile::tempdir().unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_lamella"))
        .args(["new", "cavity"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(dir.path().join("cavity.ron").is_file());
}

#[test]
fn new_refuses_to_overwrite_unless_forced() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("mine.ron");
    std::fs::write(&path, "my own notes").unwrap();
    let out = lamella(&["new", "channel", path_str(&path)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("--force"),
        "{}",
        text(&out.stderr)
    );
    assert_eq!(std::fs::read_to_string(&path).unwrap(), "my own notes");
    let out = lamella(&["new", "channel", path_str(&path), "--force"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(std::fs::read_to_string(&path).unwrap().starts_with("// "));
}

#[test]
fn new_rejects_an_unknown_template_and_lists_the_known_ones() {
    let out = lamella(&["new", "pipe"]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains("taylor-green") && stderr.contains("cavity"),
        "{stderr}"
    );
}

#[test]
fn new_into_a_missing_folder_is_bad_input() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("missing/folder/case.ron");
    let out = lamella(&["new", "channel", path_str(&path)]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("cannot write"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn run_rejects_bad_input_with_exit_code_2() {
    let invalid = root().join("crates/lamella-case/tests/invalid/unknown-phase.ron");
    let out = lamella(&["run", path_str(&invalid), "--out", "unused"]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(text(&out.stderr).contains("regions[0].phase"));

    // A run folder below a plain file cannot be created.
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("plain");
    std::fs::write(&file, "x").unwrap();
    let case = root().join("cases/taylor-green.ron");
    let out = lamella(&["run", path_str(&case), "--out", path_str(&file.join("run"))]);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    assert!(
        text(&out.stderr).contains("not a folder"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn help_explains_every_subcommand_and_option() {
    let out = lamella(&["--help"]);
    assert_eq!(out.status.code(), Some(0));
    let top = text(&out.stdout);
    for word in ["check", "new", "run", "--threads", "--quiet", "Exit codes"] {
        assert!(top.contains(word), "no {word:?} in\n{top}");
    }
    for (command, words) in [
        ("check", vec!["CASE", "Exit codes"]),
        (
            "new",
            vec!["TEMPLATE", "PATH", "--force", "taylor-green", "Exit codes"],
        ),
        ("run", vec!["CASE", "--out", "Exit codes"]),
    ] {
        let out = lamella(&[command, "--help"]);
        assert_eq!(out.status.code(), Some(0), "{command} --help");
        let help = text(&out.stdout);
        for word in words {
            assert!(
                help.contains(word),
                "{command} --help lacks {word:?}:\n{help}"
            );
        }
    }
}

#[test]
fn global_options_have_their_own_heading_and_bench_alone_describes_a_thread_list() {
    for command in ["run", "check", "stability", "converge", "resume"] {
        let out = lamella(&[command, "--help"]);
        assert_eq!(out.status.code(), Some(0), "{command} --help");
        let help = text(&out.stdout);
        assert!(
            !help.contains("bench"),
            "{command} --help mentions bench:\n{help}"
        );
        // Both global options come after the heading, none of the command's own options do.
        let heading = help
            .find("Global options:")
            .unwrap_or_else(|| panic!("{command} --help has no global heading:\n{help}"));
        let globals = &help[heading..];
        assert!(
            globals.contains("--threads") && globals.contains("--quiet"),
            "{command}: {globals}"
        );
        assert!(
            !help[..heading].contains("--threads") && !help[..heading].contains("--quiet"),
            "{command} --help lists a global option among its own:\n{help}"
        );
    }
    let out = lamella(&["bench", "--help"]);
    let help = text(&out.stdout);
    assert!(help.contains("--threads 1,2"), "{help}");
}

#[test]
fn every_misspelt_field_of_a_case_is_listed_at_once_with_exit_code_2() {
    let case = root().join("crates/lamella-case/tests/invalid/several-typos.ron");
    let out = lamella(&["check", path_str(&case)]);
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    assert!(stderr.contains("5 problems in the case file"), "{stderr}");
    for name in [
        "`smothing_ratio`",
        "`snapshot_intervall`",
        "`colour`",
        "`Q`",
    ] {
        assert!(stderr.contains(name), "{name} not listed:\n{stderr}");
    }
    assert!(stderr.contains("phases[0].density"), "{stderr}");
}
