//! Absurd values on the command line and in case files are refused up front with exit code 2
//! and a message that names the option or field: nothing panics, hangs, fills the memory or
//! floods the disk.

use std::process::{Command, Output};

fn lamella(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lamella"))
        .args(args)
        .output()
        .unwrap()
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
