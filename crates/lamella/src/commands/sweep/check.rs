//! `lamella sweep check SWEEP`: validate every member, list them with their values, and
//! estimate what the sweep costs on this machine.

use std::fmt::Write as _;
use std::path::PathBuf;

use glam::{DVec2, DVec3};
use lamella_case::sweep::Sweep;
use lamella_post::number::significant;
use lamella_run::feasibility;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::calibration::{calibrate, duration};
use crate::commands::shared::{counts, drive_warning};

/// Options of `lamella sweep check`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "The cost is estimated like `lamella estimate` does: the member with the most \
    particle-steps runs for --calibration seconds, and every member is assumed to cost the \
    same time per particle-step. Exit codes: 0 every member is valid, 2 a problem (all are \
    listed, each member named with its values)."
)]
pub struct Args {
    /// The sweep file (RON).
    #[arg(value_name = "SWEEP")]
    pub sweep: PathBuf,
    /// Wall-clock seconds to run the costliest member for, to measure this machine's speed.
    #[arg(long, value_name = "SECONDS", default_value_t = 3.0, value_parser = crate::commands::values::calibration_seconds)]
    pub calibration: f64,
    /// Skip the calibration: print the particle-steps but no wall time.
    #[arg(long)]
    pub no_calibration: bool,
}

/// Particles and steps of one member.
struct Work {
    particles: usize,
    steps: f64,
}

/// Validates the sweep and prints its members and cost.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let sweep = super::load(&args.sweep)?;
    let work: Vec<Work> = sweep
        .members
        .iter()
        .map(|m| Work {
            particles: counts(&m.case).total(),
            steps: (m.case.time.end / feasibility::time_step(&m.case).0).ceil(),
        })
        .collect();
    let total: f64 = work.iter().map(|w| w.particles as f64 * w.steps).sum();
    let seconds_per_particle_step = if args.no_calibration {
        None
    } else {
        let costliest = (0..work.len())
            .max_by(|&a, &b| {
                let cost = |w: &Work| w.particles as f64 * w.steps;
                cost(&work[a]).total_cmp(&cost(&work[b]))
            })
            .unwrap_or(0);
        let case = &sweep.members[costliest].case;
        let estimate = match case.dimension {
            3 => calibrate::<DVec3>(case, args.calibration, globals)?,
            _ => calibrate::<DVec2>(case, args.calibration, globals)?,
        };
        Some(estimate.seconds_per_step / (estimate.fluid + estimate.wall).max(1) as f64)
    };
    if !globals.quiet {
        crate::console::report_text(format_args!(
            "{}",
            summary(&args, &sweep, &work, total, seconds_per_particle_step)
        ))?;
    }
    Ok(())
}

fn summary(
    args: &Args,
    sweep: &Sweep,
    work: &[Work],
    total: f64,
    seconds_per_particle_step: Option<f64>,
) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{}: valid, {} members over {} (base case {})",
        args.sweep.display(),
        sweep.members.len(),
        sweep.parameters.join(", "),
        sweep.base_path.display()
    );
    let mut header = format!("  {:<12}", "member");
    for p in &sweep.parameters {
        let _ = write!(header, " {p:>14}");
    }
    let _ = writeln!(s, "{header} {:>10} {:>10}", "particles", "steps");
    for (member, w) in sweep.members.iter().zip(work) {
        let mut line = format!("  {:<12}", lamella_run::sweep::member_name(member.index));
        for (p, v) in sweep.parameters.iter().zip(&member.values) {
            let _ = write!(
                line,
                " {:>width$}",
                significant(*v, 6),
                width = p.len().max(14)
            );
        }
        let _ = writeln!(s, "{line} {:>10} {:>10}", w.particles, w.steps);
    }
    for member in &sweep.members {
        let case = &member.case;
        let warnings = drive_warning(case)
            .into_iter()
            .chain(case.warnings().into_iter().map(|w| w.to_string()));
        for warning in warnings {
            let _ = writeln!(
                s,
                "  warning: {}: {warning}",
                lamella_run::sweep::member_name(member.index)
            );
        }
    }
    let _ = writeln!(s, "  particle-steps  {total:.3e} in all");
    match seconds_per_particle_step {
        Some(rate) => {
            let _ = writeln!(
                s,
                "  cost            about {} on this machine one member after another ({:.3e} \
                 particle-steps/s measured on the costliest member with {} worker threads; \
                 `lamella sweep run --jobs N` runs N at once)",
                duration(total * rate),
                1.0 / rate,
                rayon::current_num_threads()
            );
        }
        None => {
            let _ = writeln!(s, "  cost            not estimated (--no-calibration)");
        }
    }
    s
}
