//! `lamella growth DIR`: growth rate and wave speed of the interface mode a run recorded in
//! `series.csv` (amplitude, phase and noise floor of the tracked interface's Fourier mode at the
//! seeded wavelength), fitted by `lamella_post::growth::fit_mode`, with 95 % intervals.

use std::path::PathBuf;

use lamella_post::growth::{self, ModeFit};
use lamella_post::number::with_uncertainty;
use lamella_post::table::csv_document;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::shared::{FitArgs, growth_chart, period_line};
use lamella_run::analysis::folder::{analysis_folder, open_case};
use lamella_run::analysis::growth::{Measurement, measure};
use lamella_run::output::atomic::write_bytes;

/// Options of `lamella growth`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Reads DIR/series.csv (the case must list InterfaceAmplitude in \
    output.analyses) and DIR/case.ron. The growth rate is the slope of ln(amplitude) against \
    time, the wave speed -(d phase/dt)/k from the unwrapped phase, both with 95 % intervals \
    (Student t).\n\nThe automatic window starts after the start-up, keeps the samples whose \
    amplitude lies between 3 times the noise floor and the linear limit (k·A <= 0.1 and at \
    most a tenth of the thinner layer), may skip a settling transient in the first third of \
    them, and grows while R² >= --min-r2. A fit under the minimum R² is never accepted.\n\n\
    The report also gives the wave period T = λ/c and the growth rate over each whole period \
    of the window: a simulated rate can differ from one period to the next (on the bundled \
    interface cases it does, by about ±10 %), and the single fitted rate hides that.\n\n\
    Writes growth.csv and growth.png into --out [default: DIR/analysis], also when the fit \
    refuses. Exit codes: 0 done, 1 a file could not be written, 2 bad input, or the fit \
    refuses (inside the start-up, near the noise floor, past the linear stage, R² under the \
    minimum, too few samples)."
)]
pub struct Args {
    /// The run folder written by `lamella run`.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    #[command(flatten)]
    pub fit: FitArgs,
    /// Folder for the results [default: DIR/analysis].
    #[arg(long, value_name = "OUT")]
    pub out: Option<PathBuf>,
}

/// Runs `lamella growth`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let (folder, case) = open_case(&args.dir)?;
    let measured = measure(&folder, &case, &args.fit.settings()?)?;
    let out_dir = analysis_folder(&folder, args.out.as_deref())?;
    let fitted: Vec<f64> = match &measured.fit {
        Ok(fit) => measured
            .time
            .iter()
            .map(|&t| {
                if t >= fit.start && t <= fit.end {
                    fit.amplitude(t)
                } else {
                    f64::NAN
                }
            })
            .collect(),
        Err(_) => vec![f64::NAN; measured.time.len()],
    };
    let csv = csv_document(
        &[
            "time_s",
            "amplitude_m",
            "phase_unwrapped_rad",
            "noise_m",
            "fitted_amplitude_m",
        ],
        &[
            &measured.time,
            &measured.amplitude,
            &measured.phase,
            &measured.noise,
            &fitted,
        ],
    )
    .map_err(Failure::RunFailed)?;
    let csv_path = out_dir.join("growth.csv");
    write_bytes(&csv_path, csv.as_bytes())?;
    let png_path = out_dir.join("growth.png");
    let png = growth_chart(&case.title, &measured, None)
        .to_png(900, 600)
        .map_err(|e| Failure::RunFailed(format!("cannot draw {}: {e}", png_path.display())))?;
    write_bytes(&png_path, &png)?;
    let fit = measured.fit.as_ref().map_err(|refused| {
        Failure::BadInput(format!(
            "{}: the growth fit refuses: {refused} (wrote {} and {} to look at the record)",
            measured.series.display(),
            csv_path.display(),
            png_path.display()
        ))
    })?;
    if !globals.quiet {
        crate::report!("{}", report(&measured, fit).trim_end())?;
        crate::report!("wrote {} and {}", csv_path.display(), png_path.display())?;
    }
    Ok(())
}

/// The lines `lamella growth` prints for a fit.
fn report(measured: &Measurement, fit: &ModeFit) -> String {
    let k = growth::wavenumber(measured.wavelength);
    format!(
        "interface mode in {}: wavelength {:.4e} m (k = {k:.4e} 1/m), {} samples, t = {:.4}..{:.4} s\n\
         start-up until t = {:.4} s (from {})\n\
         fit window t = {:.4}..{:.4} s ({} samples, {}), R² = {:.4}\n\
         growth rate {} 1/s (95 %)\n\
         wave speed {} m/s (95 %)\n\
         noise floor {:.3e} m (mean over the window)\n\
         {}\n",
        measured.series.display(),
        measured.wavelength,
        measured.time.len(),
        measured.time[0],
        measured.time[measured.time.len() - 1],
        measured.start_up,
        if measured.start_up_given {
            "--start-up"
        } else {
            "the case"
        },
        fit.start,
        fit.end,
        fit.points,
        if measured.window_given {
            "given by --window"
        } else {
            "automatic"
        },
        fit.r_squared,
        with_uncertainty(fit.rate, fit.rate_ci95),
        with_uncertainty(fit.wave_speed, fit.wave_speed_ci95),
        fit.noise_floor,
        period_line(measured, fit, None),
    )
}
