//! Shared helpers for Lamella's workspace-level tests and benchmarks: paths to the bundled
//! cases, running the `lamella` binary ([`run`], [`text`]), the layered channel of the
//! validations ([`layered`]) and its runs at large viscosity ratios ([`viscous_layers`]).

pub mod layered;
pub mod viscous_layers;

use std::path::PathBuf;
use std::process::{Command, Output};

/// The workspace root (the folder holding the top-level `Cargo.toml`).
pub fn workspace_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The folder of bundled case files.
pub fn cases_dir() -> PathBuf {
    workspace_root().join("cases")
}

/// Every bundled case file (`cases/*.ron`), sorted by name.
pub fn bundled_cases() -> Vec<PathBuf> {
    let mut cases: Vec<PathBuf> = std::fs::read_dir(cases_dir())
        .expect("the cases/ folder exists")
        .filter_map(|entry| entry.ok().map(|e| e.path()))
        .filter(|path| path.extension().is_some_and(|ext| ext == "ron"))
        .collect();
    cases.sort();
    cases
}

/// Runs `binary` (a test passes `env!("CARGO_BIN_EXE_lamella")`, which only test crates see)
/// with `args` and returns its output; panics if it cannot start.
pub fn run(binary: &str, args: &[&str]) -> Output {
    Command::new(binary)
        .args(args)
        .output()
        .unwrap_or_else(|err| panic!("{binary} does not start: {err}"))
}

/// Output bytes as text, invalid UTF-8 replaced.
pub fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Panics with `what`, the exit code and the standard error unless `output` is a success.
pub fn assert_success(output: &Output, what: &str) {
    assert!(
        output.status.success(),
        "{what} failed ({:?}):\n{}",
        output.status.code(),
        String::from_utf8_lossy(&output.stderr)
    );
}
