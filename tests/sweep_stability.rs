//! The bundled stability sweep `cases/sweeps/interface-stability.ron`, run with `lamella sweep
//! run` and reported with `lamella sweep report`: the sign of every member's measured growth
//! rate against linear stability theory.
//!
//! Theory results each member is checked against:
//! - (a) the finite-wavenumber prediction of `lamella stability` at the member's m, n, Re and
//!   k h = π (the Orr–Sommerfeld problem of two layers with the interface conditions of Yih
//!   1967, J. Fluid Mech. 27, §2), the `theory_growth_rate_per_s` column: every member;
//! - (b) the long-wave limit of Yih 1967 (§3) and Hooper 1985 (Phys. Fluids 28, "Long-wave
//!   instability at the interface between two viscous fluids: thin layer effects"), σ ≈ α² Re J
//!   with the sign of J alone deciding, computed here from m and n alone: members 0 (m = 20,
//!   n = 1) and 1 (m = 10, n = 0.5), both unstable (m > n²), and member 3 (m = 3, n = 3, k h =
//!   π/3), stable (1 < m < n²: the runny liquid in the thinner layer, Hooper 1985). Member 2
//!   (m = 10, n = 2) lies in the band n² < m < 4n² where long waves grow but the wave of
//!   k h = π decays: there the test checks that the two theories differ and the measurement
//!   follows (a).

use std::fs;

use lamella_post::stability::{LayeredChannel, long_wave_coefficient};
use lamella_suite::{assert_success, cases_dir};

const LAMELLA: &str = env!("CARGO_BIN_EXE_lamella");

/// One row of `sweep.csv`, by column name.
struct Row<'a> {
    header: &'a [&'a str],
    cells: Vec<&'a str>,
}

impl Row<'_> {
    fn text(&self, column: &str) -> &str {
        let at = self.header.iter().position(|h| *h == column);
        self.cells[at.unwrap_or_else(|| panic!("no column {column}"))]
    }
    fn number(&self, column: &str) -> f64 {
        let cell = self.text(column);
        cell.parse()
            .unwrap_or_else(|_| panic!("{column} = {cell:?} is not a number"))
    }
}

#[test]
fn every_member_grows_or_decays_as_linear_theory_says() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("stability");
    let out_arg = out.to_str().unwrap();
    let sweep = cases_dir().join("sweeps/interface-stability.ron");
    let run = lamella_suite::run(
        LAMELLA,
        &[
            "-q",
            "sweep",
            "run",
            sweep.to_str().unwrap(),
            "--out",
            out_arg,
            "--jobs",
            "2",
        ],
    );
    assert_success(&run, "the stability sweep");
    assert_success(
        &lamella_suite::run(LAMELLA, &["-q", "sweep", "report", out_arg]),
        "the report",
    );
    let table = fs::read_to_string(out.join("sweep.csv")).unwrap();
    let mut lines = table.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let rows: Vec<Row> = lines
        .map(|l| Row {
            header: &header,
            cells: l.split(',').collect(),
        })
        .collect();
    assert_eq!(rows.len(), 4, "{table}");
    // Which theory each member is checked against (see the module documentation).
    let long_wave_applies = [true, true, false, true];
    for (row, long_wave_applies) in rows.iter().zip(long_wave_applies) {
        let member = row.text("member");
        assert_eq!(row.text("status"), "finished", "member {member}: {table}");
        let measured = row.number("growth_rate_per_s");
        let interval = row.number("growth_rate_ci95_per_s");
        let predicted = row.number("theory_growth_rate_per_s");
        // Clearly away from zero, measured and predicted.
        assert!(
            measured.abs() > 2.0 * interval && predicted.abs() > 2.0,
            "member {member}: measured {measured} ± {interval}, predicted {predicted}"
        );
        assert_eq!(
            measured > 0.0,
            predicted > 0.0,
            "member {member}: measured {measured} 1/s, finite-wavenumber theory {predicted} 1/s"
        );
        let (m, n) = (row.number("viscosity_ratio_m"), row.number("width_ratio_n"));
        let channel = LayeredChannel::two_layer(m, n).unwrap();
        let long_wave = long_wave_coefficient(&channel).unwrap().growth;
        assert!(long_wave.abs() > 1e-3, "member {member}: J = {long_wave}");
        if long_wave_applies {
            assert_eq!(
                measured > 0.0,
                long_wave > 0.0,
                "member {member} (m = {m}, n = {n}): measured {measured} 1/s, long-wave J = \
                 {long_wave}"
            );
        } else {
            // Long waves grow here, the wave of k h = π decays, and so does the measured one.
            assert!(
                long_wave > 0.0 && predicted < 0.0 && measured < 0.0,
                "member {member} (m = {m}, n = {n}): J = {long_wave}, predicted {predicted}, \
                 measured {measured}"
            );
        }
    }
    let map = fs::read(out.join("stability-map.png")).unwrap();
    assert!(
        map.starts_with(b"\x89PNG"),
        "stability-map.png is not a PNG"
    );
}
