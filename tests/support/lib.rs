//! Shared helpers for Lamella's workspace-level tests and benchmarks: paths to the bundled
//! cases, the layered channel of the validations ([`layered`]) and its runs at large viscosity
//! ratios ([`viscous_layers`]).

pub mod layered;
pub mod viscous_layers;

use std::path::PathBuf;

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
