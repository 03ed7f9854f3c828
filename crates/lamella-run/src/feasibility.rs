//! What a valid case asks of this machine and of time: a run that cannot finish (too many
//! time steps) or cannot fit in the machine's memory is refused before it starts. `check`,
//! `run`, `resume` and the other commands load cases through the same check, so they agree.

use std::path::Path;

use lamella_case::{Case, CaseError, Problem, ViscosityTreatment};
use lamella_sph::{Limit, TimeStepFactors, stable_time_step};

use crate::output::folder::check_output_folder;

/// Most time steps a run may need to reach `time.end`: at a few microseconds per step for the
/// smallest cases, more would take days to years.
pub const MAX_STEPS: f64 = 1.0e9;

/// Loads and validates a case file, then checks that it can finish, fits in this machine's
/// memory ([`problems`]) and that its `output.folder`, when given, can be created and written
/// ([`check_output_folder`]); the error lists every problem. Every command that reads a case
/// goes through here, so `check` and `run` agree.
pub fn load_case(path: &Path) -> Result<Case, CaseError> {
    let case = lamella_case::load(path)?;
    let mut problems = problems(&case);
    if let Some(folder) = &case.output.folder
        && let Err(problem) = check_output_folder(Path::new(folder))
    {
        problems.push(Problem::value(
            "output.folder",
            format!("{folder:?}"),
            format!("a folder that can be created and written ({problem})"),
        ));
    }
    if !problems.is_empty() {
        return Err(CaseError {
            origin: path.display().to_string(),
            problems,
        });
    }
    Ok(case)
}

/// The stable time step of `case` (s) and the limit that sets it; the implicit viscosity
/// treatment has no viscous limit.
pub fn time_step(case: &Case) -> (f64, Limit) {
    let factors = TimeStepFactors {
        acoustic: case.time_step.acoustic,
        viscous: case.time_step.viscous,
        force: case.time_step.force,
    };
    stable_time_step(
        case.smoothing_length(),
        case.sound_speed(),
        case.scales.expected_max_speed,
        match case.viscosity_treatment {
            ViscosityTreatment::Explicit => case.max_kinematic_viscosity(),
            ViscosityTreatment::Implicit { .. } => 0.0,
        },
        case.body_force_magnitude(),
        &factors,
    )
}

/// The problems of a validated case on this machine: too many steps, too much memory.
pub fn problems(case: &Case) -> Vec<Problem> {
    let mut found = Vec::new();
    let (dt, limit) = time_step(case);
    let steps = case.time.end / dt;
    // NaN (0/0) counts as too many: such a case cannot run either.
    if steps.is_nan() || steps > MAX_STEPS {
        found.push(too_many_steps(case, dt, limit, steps));
    }
    let sites: f64 = case.lattice_counts().iter().map(|&n| n as f64).product();
    let bytes = sites * crate::setup::heap_bytes_per_particle(case) as f64;
    if let Some(machine) = machine_bytes()
        && bytes > machine as f64
    {
        found.push(Problem::value(
            "particles.spacing",
            format!("{:e}", case.particles.spacing),
            format!(
                "a spacing whose particles fit in this machine's memory: about {sites:.3e} \
                 particles need {:.1} GB, the machine has {:.1} GB; make the spacing larger",
                bytes / 1e9,
                machine as f64 / 1e9
            ),
        ));
    }
    found
}

/// The problem of a time step too small to reach the end time, on the field that sets it.
fn too_many_steps(case: &Case, dt: f64, limit: Limit, steps: f64) -> Problem {
    let (path, value, cause) = match limit {
        Limit::Viscous => {
            let nu = case.largest_kinematic_viscosities();
            let i = (0..nu.len())
                .max_by(|&a, &b| nu[a].total_cmp(&nu[b]))
                .unwrap_or(0);
            let phase = &case.phases[i];
            (
                format!("phases[{i}]"),
                format!(
                    "density {:e} kg/m³, largest viscosity {:e} Pa·s",
                    phase.density,
                    phase.viscosity_law.max_viscosity()
                ),
                format!("its kinematic viscosity ν = μ/ρ = {:e} m²/s", nu[i]),
            )
        }
        Limit::Acoustic => (
            "scales".to_string(),
            format!("sound speed {:e} m/s", case.sound_speed()),
            "the sound speed".to_string(),
        ),
        Limit::Force => (
            "body_force".to_string(),
            format!("{:e} m/s²", case.body_force_magnitude()),
            "the body force".to_string(),
        ),
    };
    Problem::value(
        path,
        value,
        format!(
            "values a run can finish: {cause} sets a time step of {dt:e} s ({limit} limit), so \
             t = {:e} s takes {steps:.3e} steps, more than {MAX_STEPS:e}; check the units, or \
             shorten time.end",
            case.time.end
        ),
    )
}

/// The machine's physical memory in bytes (`MemTotal` of `/proc/meminfo` on Linux); `None`
/// where the system does not say, and then no memory check is made.
pub fn machine_bytes() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    meminfo_total(&text)
}

/// `MemTotal` of a `/proc/meminfo` text, in bytes (the file gives kB, meaning KiB; see
/// proc(5) of the Linux man-pages).
fn meminfo_total(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("MemTotal:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    kib.checked_mul(1024)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_output_folder_that_cannot_be_written_is_refused_with_its_field() {
        // The bundled Couette case with its output folder under a file.
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("plain");
        std::fs::write(&file, "x").unwrap();
        let bundled = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../cases/couette.ron");
        let mut case = lamella_case::load(&bundled).expect("bundled case");
        case.output.folder = Some(file.join("run").display().to_string());
        let path = dir.path().join("case.ron");
        std::fs::write(&path, lamella_case::to_ron(&case)).unwrap();
        let text = load_case(&path).unwrap_err().to_string();
        assert!(text.contains("output.folder"), "{text}");
        assert!(
            text.contains("a folder that can be created and written")
                && text.contains("is not a folder"),
            "{text}"
        );
        // Loading alone (the case crate) does not look at the file system.
        assert!(lamella_case::load(&path).is_ok());
    }

    #[test]
    fn meminfo_total_is_read_in_bytes() {
        // The first lines of /proc/meminfo as proc(5) shows them.
        let text = "MemTotal:       23986124 kB\nMemFree:         1234567 kB\n";
        assert_eq!(meminfo_total(text), Some(23_986_124 * 1024));
        assert_eq!(meminfo_total("MemFree: 1 kB\n"), None);
        if cfg!(target_os = "linux") {
            assert!(machine_bytes().is_some_and(|b| b > 1 << 20));
        }
    }
}
