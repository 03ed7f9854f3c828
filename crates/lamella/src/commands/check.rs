//! `lamella check CASE`: validate a case file and print what the run will involve.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use lamella_case::{Case, ViscosityTreatment};
use lamella_post::stability::ChannelScales;
use lamella_sph::Limit;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::shared::{counts, drive_warning};
use lamella_run::feasibility::{self, load_case};
use lamella_run::reference::channel_reference;

/// Options of `lamella check`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit codes: 0 the case is valid, 2 it is not (every problem is listed \
    with the file and the field path or line and column)."
)]
pub struct Args {
    /// The case file (RON) to validate.
    #[arg(value_name = "CASE")]
    pub case: PathBuf,
}

/// Validates the case and prints its summary (nothing with `--quiet`).
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let case = load_case(&args.case)?;
    if !globals.quiet {
        crate::console::report_text(format_args!("{}", summary(&args.case, &case)))?;
    }
    Ok(())
}

/// The report `lamella check` prints for a valid case.
fn summary(path: &Path, case: &Case) -> String {
    let mut s = String::new();
    let title = if case.title.is_empty() {
        String::new()
    } else {
        format!(" — {}", case.title)
    };
    let _ = writeln!(s, "{}: valid{title}", path.display());

    let dim = case.dimension as usize;
    let extents: Vec<String> = (0..dim).map(|a| sig(case.extent(a))).collect();
    let periodic: Vec<String> = case
        .domain
        .periodic
        .iter()
        .map(|a| format!("{a:?}"))
        .collect();
    let _ = writeln!(
        s,
        "  domain        {dim}D, {} m, periodic: {}",
        extents.join(" × "),
        if periodic.is_empty() {
            "none".to_string()
        } else {
            periodic.join(", ")
        }
    );
    let h = case.smoothing_length();
    let _ = writeln!(
        s,
        "  resolution    dx = {} m, h = {} m (h/dx = {}), kernel {:?}, support {} m",
        sig(case.particles.spacing),
        sig(h),
        case.particles.smoothing_ratio,
        case.particles.kernel,
        sig(case.support_radius())
    );

    let counts = counts(case);
    let about = if counts.exact { "" } else { "about " };
    let _ = writeln!(s, "  particles     {about}{} in total", counts.total());
    for (phase, n) in case.phases.iter().zip(&counts.per_phase) {
        let _ = writeln!(s, "    {:<12}{about}{n} fluid", phase.name);
    }
    let _ = writeln!(s, "    {:<12}{about}{} wall", "walls", counts.walls);

    let c0 = case.sound_speed();
    let criteria = case.sound_speed_criteria();
    let listed: Vec<String> = criteria
        .iter()
        .map(|c| format!("{} {} m/s", c.name, sig(c.sound_speed)))
        .collect();
    let how = if case.scales.sound_speed.is_some() {
        "as given"
    } else {
        "the largest of the bounds"
    };
    let _ = writeln!(
        s,
        "  sound speed   c0 = {} m/s ({how}; bounds for 1 % density variation: {})",
        sig(c0),
        listed.join(", ")
    );
    // The flow-speed bound has its own warning in `Case::warnings`.
    if let Some(below) = criteria.iter().skip(1).find(|c| c0 < c.sound_speed) {
        let _ = writeln!(
            s,
            "  warning: scales.sound_speed: {} m/s is below the {} bound {} m/s (after Morris, \
             Fox & Zhu 1997); density may vary by more than 1 % and walls may not hold the liquid",
            sig(c0),
            below.name,
            sig(below.sound_speed)
        );
    }
    let (dt, limit) = feasibility::time_step(case);
    let steps = (case.time.end / dt).ceil();
    let treatment = match case.viscosity_treatment {
        ViscosityTreatment::Explicit => "explicit viscosity",
        ViscosityTreatment::Implicit { .. } => "implicit viscosity, no viscous limit",
    };
    let _ = writeln!(
        s,
        "  time step     ≈ {} s ({limit} limit, {treatment}); {steps} steps to t = {} s",
        sig(dt),
        sig(case.time.end)
    );
    let _ = writeln!(s, "  Reynolds      {}", reynolds(case));
    for (i, phase) in case.phases.iter().enumerate() {
        if phase.viscosity_law.newtonian_viscosity().is_some() {
            continue;
        }
        let (min, max) = phase.viscosity_law.solver_law().range();
        let _ = writeln!(
            s,
            "  viscosity law {} of '{}': μ = {} Pa·s at the characteristic shear rate U/L = {} \
             1/s (used for the sound speed and the Reynolds number), clamped to {} … {} Pa·s; \
             the explicit step takes the largest",
            phase.viscosity_law.name(),
            phase.name,
            sig(case.phase_viscosity(i)),
            sig(case.characteristic_shear_rate()),
            sig(min),
            sig(max)
        );
    }
    if case.phases.len() > 1 {
        let _ = writeln!(
            s,
            "  viscosities   largest/smallest = {}, pair average {:?}",
            sig(case.viscosity_contrast()),
            case.pair_viscosity
        );
    }
    let at_characteristic_rate = if case.has_generalised_phase() {
        " (at U/L)"
    } else {
        ""
    };
    for pair in case.layer_pairs() {
        let _ = writeln!(
            s,
            "  layers        {} under {} at y = {} m: viscosity ratio m = \
             {}{at_characteristic_rate}, width ratio n = {}",
            case.phases[pair.lower].name,
            case.phases[pair.upper].name,
            sig(pair.interface),
            sig(pair.viscosity_ratio),
            sig(pair.width_ratio)
        );
    }
    if let Some(warning) = cost_warning(case, steps, counts.total(), limit) {
        let _ = writeln!(s, "  warning: {warning}");
    }
    if let Some(warning) = viscosity_slip_warning(case, steps, limit) {
        let _ = writeln!(s, "  warning: {warning}");
    }
    if let Some(warning) = drive_warning(case) {
        let _ = writeln!(s, "  warning: {warning}");
    }
    let per_particle = lamella_run::setup::heap_bytes_per_particle(case);
    let bytes = counts.total() * per_particle;
    let _ = writeln!(
        s,
        "  memory        ≈ {:.1} MB ({per_particle} bytes per particle; `lamella estimate` \
         measures it)",
        bytes as f64 / 1.0e6,
    );
    for warning in case.warnings() {
        let _ = writeln!(s, "  warning: {warning}");
    }
    if counts.uncovered > 0 {
        let _ = writeln!(
            s,
            "  warning: regions: {} lattice sites are covered by no region and stay empty; add a \
             Fill region first to cover the whole domain",
            counts.uncovered
        );
    }
    s
}

/// The Reynolds number of a case with its definition. A channel (layered or one liquid,
/// driven by a body force or a moving wall) gets the convention of `lamella stability` and of
/// linear stability theory (Orszag 1971; Yih 1967), through the same [`ChannelScales`]:
/// Re = ρ U_max h/μ_lower, U_max the peak of the steady profile, h the channel half-width,
/// μ_lower the viscosity of the lower layer. Anything else gets U L/ν from the case's scales
/// and its least viscous phase.
pub(crate) fn reynolds(case: &Case) -> String {
    if let Some(reference) = channel_reference(case) {
        let lower = case.layer_pairs().first().map_or(0, |pair| pair.lower);
        let phase = &case.phases[lower];
        let mu = case.phase_viscosity(lower);
        let scales = ChannelScales::of_peak(
            case.extent(1) / 2.0,
            reference.steady_peak_speed(),
            phase.density,
            mu,
        );
        let (mu_name, which) = if case.phases.len() > 1 {
            ("μ_lower", format!("lower liquid '{}'", phase.name))
        } else {
            ("μ", format!("liquid '{}'", phase.name))
        };
        return format!(
            "Re = ρ U_max h/{mu_name} = {} (U_max = {} m/s the peak of the steady profile, h = {} \
             m the channel half-width, ρ and {mu_name} = {} Pa·s of the {which}; the convention \
             of `lamella stability`)",
            sig(scales.reynolds),
            sig(scales.peak_velocity),
            sig(scales.half_width),
            sig(mu)
        );
    }
    let (slowest, nu) = case.kinematic_viscosities().into_iter().enumerate().fold(
        (0, f64::INFINITY),
        |best, (i, nu)| {
            if nu < best.1 { (i, nu) } else { best }
        },
    );
    format!(
        "Re = U L/ν = {} (U = {} m/s scales.expected_max_speed, L = {} m the reference length, \
         ν = {} m²/s of the least viscous phase '{}')",
        sig(case.reynolds_number()),
        sig(case.scales.expected_max_speed),
        sig(case.reference_length()),
        sig(nu),
        case.phases.get(slowest).map_or("", |p| p.name.as_str())
    )
}

/// A warning when a viscosity of 1 Pa·s or more makes the viscous limit set the time step of a
/// long run: the likely slip is mPa·s written as Pa·s, and the warning says what the run
/// would take with the viscosity 1000 times smaller.
fn viscosity_slip_warning(case: &Case, steps: f64, limit: Limit) -> Option<String> {
    if limit != Limit::Viscous || steps <= MANY_STEPS {
        return None;
    }
    let (index, mu) = case
        .phases
        .iter()
        .map(|p| p.viscosity_law.newtonian_viscosity().unwrap_or(0.0))
        .enumerate()
        .fold(
            (0, 0.0),
            |best, (i, mu)| if mu > best.1 { (i, mu) } else { best },
        );
    if mu < 1.0 {
        return None;
    }
    let mut smaller = case.clone();
    smaller.phases[index].viscosity_law = lamella_case::ViscosityLaw::Newtonian {
        viscosity: mu * 1e-3,
    };
    let (dt, _) = feasibility::time_step(&smaller);
    Some(format!(
        "phases[{index}].viscosity_law.viscosity: {} Pa·s makes the viscous limit set the time \
         step ({steps:.3e} steps) — did you mean {} mPa·s = {} Pa·s? That run takes {:.3e} steps",
        sig(mu),
        sig(mu),
        sig(mu * 1e-3),
        (smaller.time.end / dt).ceil()
    ))
}

/// Seconds one step takes per particle on one thread: 46.1 ms a step at 1e5 particles, measured
/// with `lamella bench` on the 2-core development machine (DEVELOPERS.md, "Performance").
const SECONDS_PER_PARTICLE_STEP: f64 = 4.61e-7;
/// More steps than this draw a warning.
const MANY_STEPS: f64 = 1.0e6;
/// A predicted wall time above this (s) draws a warning.
const LONG_WALL_TIME: f64 = 3600.0;

/// A warning when the run needs very many steps or a long wall time, with the estimate and,
/// when the viscous limit sets the step, how much the implicit treatment would cut.
fn cost_warning(case: &Case, steps: f64, particles: usize, limit: Limit) -> Option<String> {
    let threads = rayon::current_num_threads().max(1) as f64;
    let seconds = steps * particles as f64 * SECONDS_PER_PARTICLE_STEP / threads;
    if steps <= MANY_STEPS && seconds <= LONG_WALL_TIME {
        return None;
    }
    let mut message = format!(
        "time.end: {steps:.3e} steps, at least {} of wall time on {threads} threads (from the \
         cost per particle and step measured at 1e5 particles with one viscosity; small cases \
         and several viscosities cost more; `lamella estimate` measures it)",
        duration(seconds)
    );
    if limit == Limit::Viscous {
        let mut implicit = case.clone();
        implicit.viscosity_treatment = ViscosityTreatment::Implicit {
            tolerance: 1.0e-9,
            max_iterations: 1000,
        };
        let (dt, _) = feasibility::time_step(&implicit);
        let _ = write!(
            message,
            "; the viscous limit sets the step: viscosity_treatment: Implicit() takes {:.3e} \
             steps instead ({}× fewer, each with a viscous solve)",
            (case.time.end / dt).ceil(),
            sig(steps / (case.time.end / dt).ceil())
        );
    }
    Some(message)
}

/// A duration in the largest fitting unit (s, min, h, days).
fn duration(seconds: f64) -> String {
    if seconds < 120.0 {
        format!("{} s", sig(seconds))
    } else if seconds < 7200.0 {
        format!("{} min", sig(seconds / 60.0))
    } else if seconds < 172_800.0 {
        format!("{} h", sig(seconds / 3600.0))
    } else {
        format!("{} days", sig(seconds / 86_400.0))
    }
}

/// Four significant digits, plain for moderate magnitudes and scientific otherwise.
fn sig(x: f64) -> String {
    lamella_post::number::significant(x, 4)
}
