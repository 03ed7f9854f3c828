//! `lamella growth DIR`: growth rate and wave speed of the interface mode a run recorded in
//! `series.csv` (amplitude, phase and noise floor of the tracked interface's Fourier mode at the
//! seeded wavelength), fitted by `lamella_post::growth::fit_mode`, with 95 % intervals.

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::path::PathBuf;

use lamella_case::Case;
use lamella_post::growth::{
    self, FitOptions, GrowthError, ModeFit, ModeSeries, Window, linear_amplitude_limit,
};
use lamella_post::plot::{Chart, Series, Style};
use lamella_post::table::csv_document;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::analysis::{analysis_folder, open_case, parse_list, read_columns};
use lamella_run::output::RunFolder;
use lamella_run::output::atomic::write_bytes;

/// Smallest R² of ln A against t (common practice: 0.98).
pub const DEFAULT_MIN_R2: f64 = 0.98;

/// The `series.csv` columns the fit reads: time, and the recorded mode of the interface.
pub const COLUMNS: [&str; 4] = [
    "time_s",
    "interface_mode_amplitude_m",
    "interface_mode_phase_rad",
    "interface_noise_m",
];

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

/// The options of the growth fit, shared with `lamella stability --run`.
#[derive(Debug, clap::Args)]
pub struct FitArgs {
    /// Fit window START,END (s) [default: chosen from the data, see `lamella growth --help`];
    /// refused if it starts inside the start-up or reaches under 3 times the noise floor.
    #[arg(long, value_name = "START,END")]
    pub window: Option<String>,
    /// Smallest R² of ln(amplitude) against time, in (0, 1] (common practice: 0.98).
    #[arg(long, value_name = "R2", value_parser = super::values::r_squared, default_value_t = DEFAULT_MIN_R2)]
    pub min_r2: f64,
    /// How long the base flow takes to settle (s); no fit starts before it [default: from the
    /// case, 0 when it starts from the steady profile].
    #[arg(long, value_name = "SECONDS", value_parser = super::values::time)]
    pub start_up: Option<f64>,
}

/// The recorded mode of a run and the fit of its growth.
pub struct Measurement {
    /// `series.csv` of the run.
    pub series: PathBuf,
    /// Sample times (s).
    pub time: Vec<f64>,
    /// Mode amplitude (m).
    pub amplitude: Vec<f64>,
    /// Unwrapped mode phase (rad).
    pub phase: Vec<f64>,
    /// Noise floor (m).
    pub noise: Vec<f64>,
    /// Wavelength of the recorded mode (m).
    pub wavelength: f64,
    /// End of the start-up used (s).
    pub start_up: f64,
    /// Where the start-up time came from.
    pub start_up_source: &'static str,
    /// Whether the window was given (`--window`).
    pub window_given: bool,
    /// The fit, or why there is none.
    pub fit: Result<ModeFit, GrowthError>,
}

/// Reads the recorded mode of the run in `folder` (case copy `case`) and fits its growth. The
/// error is bad input (no interface, no recorded mode, bad options); a refusal of the fit is
/// in [`Measurement::fit`].
pub fn measure(folder: &RunFolder, case: &Case, fit: &FitArgs) -> Result<Measurement, Failure> {
    let case_path = folder.case();
    let Some(pair) = case.tracked_interface() else {
        return Err(Failure::BadInput(format!(
            "{}: the case has no interface between two layers, so there is no interface mode to \
             fit",
            case_path.display()
        )));
    };
    let window = match fit.window.as_deref() {
        None => Window::Automatic,
        Some(text) => match parse_list::<f64>(text, "--window").map_err(Failure::BadInput)?[..] {
            [start, end] if start < end => Window::Times { start, end },
            _ => {
                return Err(Failure::BadInput(format!(
                    "--window {text}: give START,END in seconds with START < END"
                )));
            }
        },
    };
    let (start_up, start_up_source) = match fit.start_up {
        Some(t) if t >= 0.0 && t.is_finite() => (t, "--start-up"),
        Some(t) => {
            return Err(Failure::BadInput(format!(
                "--start-up {t}: give zero or a positive time in seconds"
            )));
        }
        None => (case.start_up_time(), "the case"),
    };
    let series = folder.series();
    let listed = case
        .output
        .analyses
        .contains(&lamella_case::Analysis::InterfaceAmplitude);
    let hint = if listed {
        format!(
            "the run did not record the interface mode although {} lists InterfaceAmplitude \
             (a run made by an older Lamella?); run the case again",
            case_path.display()
        )
    } else {
        format!(
            "the run did not record the interface mode: add InterfaceAmplitude to \
             output.analyses in {} and run the case again",
            case_path.display()
        )
    };
    let columns = read_columns(&series, &COLUMNS, &hint)?;
    let [time, amplitude, phase, noise] = <[Vec<f64>; 4]>::try_from(columns)
        .map_err(|_| Failure::BadInput(format!("{}: columns missing", series.display())))?;
    if time.is_empty() {
        return Err(Failure::BadInput(format!(
            "{} holds no samples yet",
            series.display()
        )));
    }
    let wavelength = case.tracked_wavelength();
    let wavenumber = growth::wavenumber(wavelength);
    let bands = case.layer_bands();
    let tol = 1e-9 * case.extent(1);
    let thinner = bands
        .iter()
        .filter(|b| {
            (b.top - pair.interface).abs() <= tol || (b.bottom - pair.interface).abs() <= tol
        })
        .map(|b| b.top - b.bottom)
        .fold(f64::INFINITY, f64::min);
    let options = FitOptions {
        wavenumber,
        start_up,
        min_r_squared: fit.min_r2,
        linear_limit: linear_amplitude_limit(wavenumber, thinner),
        window,
    };
    let result = growth::fit_mode(
        &ModeSeries {
            time: &time,
            amplitude: &amplitude,
            phase: &phase,
            noise: &noise,
        },
        &options,
    );
    if let Err(GrowthError::Malformed(why) | GrowthError::InvalidOption(why)) = &result {
        return Err(Failure::BadInput(format!("{}: {why}", series.display())));
    }
    let phase = growth::unwrap_phase(&phase);
    Ok(Measurement {
        series,
        time,
        amplitude,
        phase,
        noise,
        wavelength,
        start_up,
        start_up_source,
        window_given: fit.window.is_some(),
        fit: result,
    })
}

/// Runs `lamella growth`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let (folder, case) = open_case(&args.dir)?;
    let measured = measure(&folder, &case, &args.fit)?;
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
         growth rate {:.4e} ± {:.2e} 1/s (95 %)\n\
         wave speed {:.4e} ± {:.2e} m/s (95 %)\n\
         noise floor {:.3e} m (mean over the window)\n\
         {}\n",
        measured.series.display(),
        measured.wavelength,
        measured.time.len(),
        measured.time[0],
        measured.time[measured.time.len() - 1],
        measured.start_up,
        measured.start_up_source,
        fit.start,
        fit.end,
        fit.points,
        if measured.window_given {
            "given by --window"
        } else {
            "automatic"
        },
        fit.r_squared,
        fit.rate,
        fit.rate_ci95,
        fit.wave_speed,
        fit.wave_speed_ci95,
        fit.noise_floor,
        period_line(measured, fit, None),
    )
}

/// One line on the wave period T = 2π/(k|c|) and the growth rate over each whole period of the
/// window (with the difference from `predicted`, 1/s, when given): the rate of a simulated
/// wave can change from one period to the next, and one number hides that.
pub fn period_line(measured: &Measurement, fit: &ModeFit, predicted: Option<f64>) -> String {
    let series = ModeSeries {
        time: &measured.time,
        amplitude: &measured.amplitude,
        phase: &measured.phase,
        noise: &measured.noise,
    };
    let rates = growth::period_rates(&series, fit);
    let head = format!(
        "wave period {:.4} s; the window spans {:.2} periods",
        fit.wave_period,
        fit.periods()
    );
    if rates.is_empty() {
        return format!(
            "{head}: too short to tell whether the rate changes from one period to the next \
             (run at least two periods)"
        );
    }
    let listed: Vec<String> = rates
        .iter()
        .map(|p| match predicted {
            Some(theory) => format!("{:.3} ({:+.1} %)", p.rate, 100.0 * (p.rate / theory - 1.0)),
            None => format!("{:.3}", p.rate),
        })
        .collect();
    format!(
        "{head}; growth rate over each whole period: {} 1/s",
        listed.join(", ")
    )
}

/// Amplitude against time on a log axis, with the noise floor, the fitted exponential over the
/// window and, when given, the exponential of a predicted rate (1/s) from the fitted amplitude
/// at the start of the window to the end of the record.
pub fn growth_chart(title: &str, measured: &Measurement, predicted: Option<f64>) -> Chart {
    let mut series = vec![
        Series {
            label: "mode amplitude".into(),
            x: measured.time.clone(),
            y: measured.amplitude.clone(),
            style: Style::Points,
        },
        Series {
            label: "noise floor".into(),
            x: measured.time.clone(),
            y: measured.noise.clone(),
            style: Style::Line,
        },
    ];
    let mut heading = format!("{title}: no fit");
    if let Ok(fit) = &measured.fit {
        let inside: Vec<f64> = measured
            .time
            .iter()
            .copied()
            .filter(|&t| t >= fit.start && t <= fit.end)
            .collect();
        series.push(Series {
            label: format!("fit, {:.3e} ± {:.1e} 1/s", fit.rate, fit.rate_ci95),
            x: inside.clone(),
            y: inside.iter().map(|&t| fit.amplitude(t)).collect(),
            style: Style::Dashed,
        });
        heading = format!("{title}: growth rate {:.3e} 1/s", fit.rate);
        if let Some(rate) = predicted {
            let anchor = fit.amplitude(fit.start);
            let (x, y): (Vec<f64>, Vec<f64>) = measured
                .time
                .iter()
                .filter(|&&t| t >= fit.start)
                .map(|&t| (t, anchor * (rate * (t - fit.start)).exp()))
                .unzip();
            series.push(Series {
                label: format!("theory, {rate:.3e} 1/s"),
                x,
                y,
                style: Style::Line,
            });
            heading = format!("{title}: measured against predicted growth");
        }
    }
    Chart {
        title: heading,
        x_label: "time (s)".into(),
        y_label: "interface mode amplitude (m)".into(),
        log_x: false,
        log_y: true,
        series,
    }
}
