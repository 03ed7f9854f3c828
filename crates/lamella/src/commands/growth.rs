//! `lamella growth DIR`: growth of the interface disturbance from the marker particles next to
//! the initial interface: displacement normal to it over time, onset, exponential growth rate
//! with a 95 % confidence interval, and the dominant wavelength of the interface shape.

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::collections::HashSet;
use std::path::PathBuf;

use glam::{DVec2, DVec3};
use lamella_post::growth::{
    DominantMode, FitWindow, GrowthError, GrowthFit, detect_onset, displacement_measures,
    dominant_wavelength, fit_growth,
};
use lamella_post::plot::{Chart, Series, Style};
use lamella_post::table::csv_document;

use crate::Failure;
use crate::cli::Globals;
use crate::commands::analysis::{Run, parse_list, write_file};

/// Smallest R² of the automatic fit window (common practice).
pub const DEFAULT_MIN_R2: f64 = 0.98;

/// Options of `lamella growth`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes growth.csv and growth.png into --out [default: DIR/analysis]. \
    Exit codes: 0 done, 1 a file could not be written, 2 bad input or no onset to fit."
)]
pub struct Args {
    /// The run folder written by `lamella run`.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Onset threshold: the first time the largest marker displacement exceeds it (m)
    /// [default: one particle spacing].
    #[arg(long, value_name = "M", value_parser = super::values::positive)]
    pub onset: Option<f64>,
    /// Fit window START,END (s) [default: from the onset while the growth stays log-linear].
    #[arg(long, value_name = "START,END")]
    pub window: Option<String>,
    /// Smallest R² for the automatic window (common practice: 0.98).
    #[arg(long, default_value_t = DEFAULT_MIN_R2, value_name = "R2", value_parser = super::values::r_squared)]
    pub min_r2: f64,
    /// Folder for the results [default: DIR/analysis].
    #[arg(long, value_name = "OUT")]
    pub out: Option<PathBuf>,
}

/// Runs `lamella growth`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let run = Run::open(&args.dir)?;
    let window = fit_window(args.window.as_deref(), args.min_r2)?;
    let measured =
        measure(&run, args.onset, window)?.map_err(|e| Failure::BadInput(e.to_string()))?;
    let Measurement {
        time,
        max,
        rms,
        threshold,
        onset,
        fit,
        mode,
    } = &measured;
    let case = &run.case;
    let period = case.extent(0);

    let fitted: Vec<f64> = time
        .iter()
        .map(|&t| {
            if t >= fit.start && t <= fit.end {
                fit.amplitude(t)
            } else {
                f64::NAN
            }
        })
        .collect();
    let csv = csv_document(
        &[
            "time_s",
            "max_displacement_m",
            "rms_displacement_m",
            "fit_m",
        ],
        &[time, max, rms, &fitted],
    )
    .map_err(Failure::RunFailed)?;
    let out_dir = run.output_folder(args.out.as_deref())?;
    write_file(&out_dir.join("growth.csv"), csv.as_bytes())?;
    let chart = growth_chart(&case.title, time, max, rms, fit);
    let png = chart
        .to_png(900, 600)
        .map_err(|e| Failure::RunFailed(e.to_string()))?;
    write_file(&out_dir.join("growth.png"), &png)?;
    if !globals.quiet {
        crate::report!(
            "onset at t = {:.4} s (max displacement > {threshold:.3e} m); {}; dominant wavelength \
             {:.4e} m (mode {} of {:.4e} m)",
            time[*onset],
            fit.summary(),
            mode.wavelength,
            mode.mode,
            period
        )?;
    }
    Ok(())
}

/// The fit window from `--window START,END`, or the automatic log-linear window with the R²
/// floor `min_r2`.
pub fn fit_window(window: Option<&str>, min_r2: f64) -> Result<FitWindow, Failure> {
    match window {
        None => Ok(FitWindow::LogLinear {
            min_r_squared: min_r2,
        }),
        Some(text) => match parse_list::<f64>(text, "--window").map_err(Failure::BadInput)?[..] {
            [start, end] if end > start => Ok(FitWindow::Times { start, end }),
            _ => Err(Failure::BadInput(
                "--window needs START,END with END > START (s)".into(),
            )),
        },
    }
}

/// The interface growth measured in a run folder.
pub struct Measurement {
    /// Snapshot times (s).
    pub time: Vec<f64>,
    /// Largest marker displacement normal to the interface at each time (m).
    pub max: Vec<f64>,
    /// RMS marker displacement at each time (m).
    pub rms: Vec<f64>,
    /// Onset threshold used (m).
    pub threshold: f64,
    /// Index of the onset snapshot.
    pub onset: usize,
    /// Exponential fit of the largest displacement.
    pub fit: GrowthFit,
    /// Strongest Fourier mode of the interface shape at the end of the fit window.
    pub mode: DominantMode,
}

/// Measures the interface growth of `run` (onset threshold `onset`, default one particle
/// spacing). The outer error is bad input (no interface, unreadable snapshots); the inner one
/// says why the series holds no growth to fit (no onset, too few points).
pub fn measure(
    run: &Run,
    onset: Option<f64>,
    window: FitWindow,
) -> Result<Result<Measurement, GrowthError>, Failure> {
    let case = &run.case;
    let pairs = case.layer_pairs();
    if pairs.is_empty() {
        return Err(Failure::BadInput(format!(
            "{}: the case has no interface between two layers, so there is nothing to grow",
            run.folder.case().display()
        )));
    }
    let markers = marker_ids(case)?;
    let threshold = onset.unwrap_or(case.particles.spacing);
    if !(threshold > 0.0) {
        return Err(Failure::BadInput(
            "--onset must be a positive length (m)".into(),
        ));
    }
    let (mut time, mut max, mut rms) = (Vec::new(), Vec::new(), Vec::new());
    let mut shapes = Vec::new();
    for entry in &run.entries {
        let snap = run.read(entry)?;
        let (mut y0, mut y, mut x) = (Vec::new(), Vec::new(), Vec::new());
        for i in 0..snap.len() {
            if markers.contains(&snap.id[i]) {
                y0.push(snap.initial_position[i][1]);
                y.push(snap.position[i][1]);
                x.push(snap.position[i][0]);
            }
        }
        let (m, r) = displacement_measures(&y0, &y)
            .map_err(|e| Failure::BadInput(format!("{}: {e}", entry.file)))?;
        time.push(snap.meta.time);
        max.push(m);
        rms.push(r);
        let d: Vec<f64> = y.iter().zip(&y0).map(|(a, b)| a - b).collect();
        shapes.push((x, d));
    }
    let onset = match detect_onset(&time, &max, threshold) {
        Ok(onset) => onset,
        Err(e) => return Ok(Err(e)),
    };
    let fit = match fit_growth(&time, &max, onset, window) {
        Ok(fit) => fit,
        Err(e) => return Ok(Err(e)),
    };
    // Interface shape at the end of the fit window.
    let last = time
        .iter()
        .rposition(|&t| t <= fit.end)
        .unwrap_or(time.len() - 1);
    let period = case.extent(0);
    let samples = ((period / case.particles.spacing).round() as usize).max(4);
    let mode = dominant_wavelength(&shapes[last].0, &shapes[last].1, period, samples)
        .map_err(|e| Failure::BadInput(e.to_string()))?;
    Ok(Ok(Measurement {
        time,
        max,
        rms,
        threshold,
        onset,
        fit,
        mode,
    }))
}

/// Ids of the interface markers: the generator's `interface_marker` flags (ids are the
/// generation order).
fn marker_ids(case: &lamella_case::Case) -> Result<HashSet<u64>, Failure> {
    let flags = match case.dimension {
        2 => lamella_case::generate::<DVec2>(case).interface_marker,
        _ => lamella_case::generate::<DVec3>(case).interface_marker,
    };
    let ids: HashSet<u64> = flags
        .iter()
        .enumerate()
        .filter(|(_, m)| **m)
        .map(|(i, _)| i as u64)
        .collect();
    if ids.is_empty() {
        return Err(Failure::BadInput(
            "the case generates no interface marker particles".into(),
        ));
    }
    Ok(ids)
}

fn growth_chart(title: &str, time: &[f64], max: &[f64], rms: &[f64], fit: &GrowthFit) -> Chart {
    let (ft, fa): (Vec<f64>, Vec<f64>) = time
        .iter()
        .filter(|&&t| t >= fit.start && t <= fit.end)
        .map(|&t| (t, fit.amplitude(t)))
        .unzip();
    Chart {
        title: format!(
            "{title}: growth rate {:.3e} ± {:.1e} 1/s",
            fit.rate, fit.rate_ci95
        ),
        x_label: "time (s)".into(),
        y_label: "displacement normal to the interface (m)".into(),
        log_x: false,
        log_y: true,
        series: vec![
            Series {
                label: "max".into(),
                x: time.to_vec(),
                y: max.to_vec(),
                style: Style::Points,
            },
            Series {
                label: "RMS".into(),
                x: time.to_vec(),
                y: rms.to_vec(),
                style: Style::Line,
            },
            Series {
                label: "exponential fit".into(),
                x: ft,
                y: fa,
                style: Style::Dashed,
            },
        ],
    }
}
