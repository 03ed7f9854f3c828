//! `lamella stability`: predicted growth rates of layered channel flow from linear theory.
//!
//! Three ways to give the flow: the ratios directly (`--m`, `--n`, `--re`, scaled units of
//! `lamella_post::stability`), a case file, from which the two layers, their viscosities,
//! the channel height, the body force and the seeded wavelength are taken and the results
//! are printed in the case's units as well, or a run folder (`--run`), whose case copy is
//! used the same way at the wavelength the run recorded, and whose measured growth rate and
//! wave speed (as `lamella growth` fits them) are printed beside the prediction with a verdict.

use std::fmt::Write as _;
use std::fs;
use std::path::{Path, PathBuf};

use lamella_case::Case;
use lamella_post::number::{significant, with_uncertainty};
use lamella_post::stability::{
    self, CurvePoint, DEFAULT_POINTS_PER_LAYER, LayeredChannel, MapPoint, StabilityError,
    StabilityProblem,
};

use crate::Failure;
use crate::commands::Globals;
use crate::commands::shared::{FitArgs, growth_chart, period_line};
use crate::point_progress::PointProgress;
use lamella_run::analysis::AnalysisError;
use lamella_run::analysis::folder::open_case;
use lamella_run::analysis::growth::{Measurement, measure};
use lamella_run::analysis::mode::Prediction;
use lamella_run::channel::{CaseChannel, ChannelError};
use lamella_run::feasibility::load_case;
use lamella_run::output::OutputError;
use lamella_run::output::atomic::write_bytes;

/// Width and height of the PNG charts (pixels).
const PNG_SIZE: (u32, u32) = (800, 560);

/// Options of `lamella stability`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Modes: a CASE file; --m, --n and --re with --wavenumber or --scan; --re and \
    --wavenumber with --map-m and --map-n (a map over the ratios); or --run DIR.\n\nScaled units: lengths by the channel half-width h, velocities by the \
    peak velocity U_max of the steady profile, Re = rho U_max h / mu_lower, m = mu_lower/mu_upper, \
    n = d_lower/d_upper, growth rate = wavenumber x Im(c) in U_max/h, tension S = gamma/(rho \
    U_max^2 h).\n\nWith --run: the verdict is \"agrees\" when the prediction lies within the \
    measured 95 % interval, or the measured growth rate within 15 % of the prediction (the wave \
    speed within 5 %), \"disagrees\" otherwise. Exit codes: 0 done (whatever the verdict), 1 a solve or a file write \
    failed, 2 bad options, case or run folder, or the growth fit of the run refuses (the \
    prediction and the reason are printed first)."
)]
pub struct Args {
    /// A two-layer channel case: m, n, Re and the wavenumber come from it.
    #[arg(value_name = "CASE", conflicts_with_all = ["m", "n", "re"])]
    pub case: Option<PathBuf>,
    /// Viscosity ratio m = mu_lower / mu_upper (1 with --n 1 is one fluid).
    #[arg(
        long,
        value_name = "M",
        value_parser = super::values::positive,
        requires_all = ["n", "re"]
    )]
    pub m: Option<f64>,
    /// Width ratio n = d_lower / d_upper.
    #[arg(long, value_name = "N", value_parser = super::values::positive, requires_all = ["m", "re"])]
    pub n: Option<f64>,
    /// Reynolds number rho U_max h / mu_lower (with --m and --n, or with --map-m and --map-n).
    #[arg(long, value_name = "RE", value_parser = super::values::positive)]
    pub re: Option<f64>,
    /// Scaled wavenumber k h [case mode default: from the perturbation wavelength].
    #[arg(long, value_name = "K", value_parser = super::values::positive, conflicts_with = "scan")]
    pub wavenumber: Option<f64>,
    /// Scan scaled wavenumbers: first,last,steps; prints the most unstable and writes the
    /// growth-rate curve (CSV + PNG).
    #[arg(long, value_name = "K0,K1,STEPS")]
    pub scan: Option<String>,
    /// Scaled interfacial tension S = gamma / (rho U_max^2 h).
    #[arg(long, value_name = "S", default_value_t = 0.0, value_parser = super::values::finite)]
    pub tension: f64,
    /// Stability map over viscosity ratios: first,last,steps (log-spaced); needs --map-n, and
    /// --re and --wavenumber unless a CASE gives them.
    #[arg(
        long,
        value_name = "M0,M1,STEPS",
        requires = "map_n",
        conflicts_with_all = ["scan", "m", "n"]
    )]
    pub map_m: Option<String>,
    /// Stability map over width ratios: first,last,steps (log-spaced); needs --map-m.
    #[arg(long, value_name = "N0,N1,STEPS", requires = "map_m", conflicts_with_all = ["m", "n"])]
    pub map_n: Option<String>,
    /// Chebyshev collocation points per layer.
    #[arg(long, value_name = "P", default_value_t = DEFAULT_POINTS_PER_LAYER, value_parser = super::values::stability_points)]
    pub points: usize,
    /// Folder for the CSV and PNG files (created if missing) [default: the current folder;
    /// DIR/analysis with --run].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// A run folder of a two-layer channel case that recorded InterfaceAmplitude: predicts from
    /// its case copy at the recorded wavelength, prints the growth rate and wave speed measured
    /// in the run (as `lamella growth DIR`) beside the prediction with a verdict, and writes
    /// growth_vs_theory.png.
    #[arg(
        long,
        value_name = "DIR",
        conflicts_with_all = ["case", "m", "n", "re", "scan", "map_m", "wavenumber"]
    )]
    pub run: Option<PathBuf>,
    /// With --run: the growth fit, as in `lamella growth`.
    #[command(flatten)]
    pub fit: FitArgs,
}

/// Tolerance on the growth rate for the verdict "agrees": the measured rate within 15 % of the
/// prediction (the project's validation bound for growth rates).
pub const RATE_TOLERANCE: f64 = 0.15;

/// Tolerance on the wave speed for the verdict "agrees": within 5 % (the project's validation
/// bound for wave speeds).
pub const SPEED_TOLERANCE: f64 = 0.05;

/// The problem to solve and, in case mode, the units to print results in.
struct Setup {
    problem: StabilityProblem,
    units: Option<CaseChannel>,
    description: String,
}

/// Solves and prints; writes the curve or map files when asked for.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    if args.run.is_none() && args.fit.given() {
        return Err(Failure::BadInput(
            "--window, --min-r2 and --start-up set the growth fit of a run; give the run folder with --run DIR".into(),
        ));
    }
    let (mut setup, run_folder) = match (&args.case, &args.run) {
        (Some(path), _) => (
            from_case(&load_case(path)?, path, Wavenumber::Asked(&args))?,
            None,
        ),
        (None, Some(dir)) => {
            let (folder, case) = open_case(dir)?;
            let setup = from_case(&case, &folder.case(), Wavenumber::Recorded)?;
            (setup, Some((folder, case)))
        }
        (None, None) => (from_ratios(&args)?, None),
    };
    let out_dir = match (&args.out, &run_folder) {
        (Some(out), _) => out.clone(),
        (None, Some((folder, _))) => folder.root().join("analysis"),
        (None, None) => PathBuf::from("."),
    };
    let mut refusal = None;
    setup.problem.tension = args.tension;
    setup.problem.points_per_layer = args.points;
    let mut report = setup.description.clone();
    let mut written = Vec::new();
    if let Some(scan) = &args.scan {
        let (first, last, steps) = parse_range(scan, "--scan")?;
        let mut progress = PointProgress::new("wavenumber", steps, globals.quiet);
        let curve =
            stability::growth_curve_observed(&setup.problem, first, last, steps, &mut |k| {
                progress.set(k)
            });
        progress.finish();
        let curve = curve.map_err(solve_failure)?;
        let best = stability::most_unstable(&setup.problem, &curve).map_err(solve_failure)?;
        let edge = best.wavenumber <= first || best.wavenumber >= last;
        writeln!(
            report,
            "most unstable wavenumber in {first}..{last}{}:",
            if edge {
                " (at the scan edge: widen the scan)"
            } else {
                ""
            }
        )
        .ok();
        describe(&mut report, best.wavenumber, best.speed, &setup.units);
        let csv = out_dir.join("stability_curve.csv");
        let png = out_dir.join("stability_curve.png");
        write_atomic(&csv, curve_csv(&curve, &setup.units).as_bytes())?;
        let chart = stability::growth_curve_chart(&curve);
        let bytes = chart
            .to_png(PNG_SIZE.0, PNG_SIZE.1)
            .map_err(|e| write_failure(&png, e))?;
        write_atomic(&png, &bytes)?;
        written.extend([csv, png]);
    } else if args.map_m.is_none() {
        let checked = stability::leading_checked(&setup.problem).map_err(solve_failure)?;
        writeln!(report, "leading eigenvalue:").ok();
        describe(
            &mut report,
            setup.problem.wavenumber,
            checked.speed,
            &setup.units,
        );
        writeln!(
            report,
            "  resolution check: |dc| = {:.1e} at {} instead of {} points per layer",
            checked.resolution_change,
            setup.problem.points_per_layer * 3 / 2,
            setup.problem.points_per_layer
        )
        .ok();
        if let (Some((folder, case)), Some(units)) = (&run_folder, &setup.units) {
            let predicted = Prediction {
                rate: units.growth_rate(setup.problem.wavenumber, checked.speed),
                wave_speed: units.wave_speed(checked.speed),
            };
            let measured = measure(folder, case, &args.fit.settings()?)?;
            let dir = folder.root().display().to_string();
            match &measured.fit {
                Ok(fit) => {
                    compare(&mut report, &dir, &measured, fit, &predicted);
                    let png = out_dir.join("growth_vs_theory.png");
                    let bytes = growth_chart(&case.title, &measured, Some(predicted.rate))
                        .to_png(PNG_SIZE.0, PNG_SIZE.1)
                        .map_err(|e| write_failure(&png, e))?;
                    write_atomic(&png, &bytes)?;
                    written.push(png);
                }
                Err(refused) => {
                    writeln!(
                        report,
                        "measured in {dir}: the growth fit refuses: {refused}\n\
                         verdict: no comparison, the run gives no growth rate to compare with"
                    )
                    .ok();
                    refusal = Some(format!(
                        "{}: the growth fit refuses: {refused}",
                        measured.series.display()
                    ));
                }
            }
        }
    }
    if let (Some(map_m), Some(map_n)) = (&args.map_m, &args.map_n) {
        let ms = log_spaced(parse_range(map_m, "--map-m")?, "--map-m")?;
        let ns = log_spaced(parse_range(map_n, "--map-n")?, "--map-n")?;
        let mut progress = PointProgress::new("(m, n) pair", ms.len() * ns.len(), globals.quiet);
        let map =
            stability::stability_map_observed(&setup.problem, &ms, &ns, &mut |k| progress.set(k));
        progress.finish();
        let map = map.map_err(solve_failure)?;
        let unstable = map.iter().filter(|p| p.is_unstable()).count();
        writeln!(
            report,
            "stability map at Re = {}, wavenumber {}: {unstable} of {} (m, n) pairs unstable",
            setup.problem.reynolds,
            setup.problem.wavenumber,
            map.len()
        )
        .ok();
        let csv = out_dir.join("stability_map.csv");
        let png = out_dir.join("stability_map.png");
        write_atomic(&csv, map_csv(&map).as_bytes())?;
        let chart = stability::map_chart(&map, setup.problem.reynolds, setup.problem.wavenumber);
        let bytes = chart
            .to_png(PNG_SIZE.0, PNG_SIZE.1)
            .map_err(|e| write_failure(&png, e))?;
        write_atomic(&png, &bytes)?;
        written.extend([csv, png]);
    }
    for path in &written {
        writeln!(report, "wrote {}", path.display()).ok();
    }
    if !globals.quiet {
        crate::console::report_text(format_args!("{report}"))?;
    }
    match refusal {
        Some(reason) => Err(Failure::BadInput(reason)),
        None => Ok(()),
    }
}

/// A failed solve: bad input when a parameter is out of range, a failure otherwise.
fn solve_failure(err: StabilityError) -> Failure {
    AnalysisError::from(err).into()
}

fn write_failure(path: &Path, err: impl std::fmt::Display) -> Failure {
    Failure::RunFailed(format!("cannot write {}: {err}", path.display()))
}

/// What a bare `lamella stability` (or one with too little to go on) says.
pub const MODES: &str = "say which flow to analyse, in one of four ways:
  lamella stability CASE                     a two-layer channel case file (m, n, Re and the
                                             wavenumber from the case)
  lamella stability --m M --n N --re RE --wavenumber K   (or --scan K0,K1,STEPS)
                                             the ratios directly, in scaled units
  lamella stability --re RE --wavenumber K --map-m M0,M1,STEPS --map-n N0,N1,STEPS
                                             a map of growth over viscosity and width ratios
  lamella stability --run DIR                a run folder: prediction beside the measured growth
`lamella stability --help` lists every option";

fn from_ratios(args: &Args) -> Result<Setup, Failure> {
    let map = args.map_m.is_some();
    let (m, n, re) = match (args.m, args.n, args.re) {
        (Some(m), Some(n), Some(re)) => (m, n, re),
        // The map replaces the channel at each (m, n) pair; one layer stands in until then.
        (None, None, Some(re)) if map => (1.0, 1.0, re),
        (None, None, None) if map => {
            return Err(Failure::BadInput(
                "a stability map without a CASE needs the Reynolds number: add --re RE and \
                 --wavenumber K"
                    .into(),
            ));
        }
        _ => return Err(Failure::BadInput(MODES.into())),
    };
    let wavenumber = match (args.wavenumber, &args.scan) {
        (Some(k), _) => k,
        (None, Some(_)) => 1.0,
        (None, None) if map => {
            return Err(Failure::BadInput(
                "a stability map without a CASE needs the wavenumber: add --wavenumber K (scaled \
                 by the half-width)"
                    .into(),
            ));
        }
        (None, None) => {
            return Err(Failure::BadInput(
                "give --wavenumber K or --scan K0,K1,STEPS (scaled by the half-width)".into(),
            ));
        }
    };
    let channel = if m == 1.0 && n == 1.0 {
        LayeredChannel::single()
    } else {
        LayeredChannel::two_layer(m, n).map_err(solve_failure)?
    };
    let description = if map {
        format!(
            "layered channel map: Re = {re}, tension S = {} (scaled units)\n",
            args.tension
        )
    } else {
        format!(
            "layered channel: m = {m}, n = {n}, Re = ρ U_max h/μ_lower = {re}, tension S = {} \
             (scaled units)\n",
            args.tension
        )
    };
    Ok(Setup {
        problem: StabilityProblem::new(channel, re, wavenumber),
        units: None,
        description,
    })
}

/// Whether a prediction agrees with a measured value ± its 95 % half-width, and why: it lies
/// within the measured interval, or the measured value lies within `tolerance` (relative) of
/// the prediction.
pub fn agreement(measured: f64, ci95: f64, predicted: f64, tolerance: f64) -> (bool, String) {
    let off = (predicted - measured).abs();
    let percent = 100.0 * tolerance;
    if off <= ci95 {
        (
            true,
            "agrees: the prediction lies within the measured 95 % interval".into(),
        )
    } else if off <= tolerance * predicted.abs() {
        (
            true,
            format!("agrees: the measured value lies within {percent:.0} % of the prediction"),
        )
    } else {
        (
            false,
            format!(
                "disagrees: the prediction lies outside the measured 95 % interval and the \
                 {percent:.0} % tolerance"
            ),
        )
    }
}

/// measured / predicted with its range from the measured 95 % interval, or why there is none.
fn ratio(measured: f64, ci95: f64, predicted: f64) -> String {
    if predicted != 0.0 && predicted.is_finite() {
        let (low, high) = ((measured - ci95) / predicted, (measured + ci95) / predicted);
        format!(
            "measured / predicted = {:.4} (95 %: {:.4}..{:.4})",
            measured / predicted,
            low.min(high),
            low.max(high)
        )
    } else {
        "no ratio: the prediction is zero".into()
    }
}

/// Prints the growth rate and wave speed measured in a run beside the predicted ones, their
/// ratios, and the verdict.
fn compare(
    report: &mut String,
    dir: &str,
    measured: &Measurement,
    fit: &lamella_post::growth::ModeFit,
    predicted: &Prediction,
) {
    writeln!(
        report,
        "measured in {dir} (fit as `lamella growth`): window t = {:.4}..{:.4} s ({} samples), \
         R² = {:.4}, noise floor {:.3e} m, wavelength {:.4e} m",
        fit.start, fit.end, fit.points, fit.r_squared, fit.noise_floor, measured.wavelength
    )
    .ok();
    let (rate_ok, rate_why) = agreement(fit.rate, fit.rate_ci95, predicted.rate, RATE_TOLERANCE);
    let (speed_ok, speed_why) = agreement(
        fit.wave_speed,
        fit.wave_speed_ci95,
        predicted.wave_speed,
        SPEED_TOLERANCE,
    );
    writeln!(
        report,
        "  growth rate: measured {} 1/s (95 %), predicted {} 1/s, {}; {rate_why}",
        with_uncertainty(fit.rate, fit.rate_ci95),
        significant(predicted.rate, 5),
        ratio(fit.rate, fit.rate_ci95, predicted.rate)
    )
    .ok();
    writeln!(
        report,
        "  wave speed: measured {} m/s (95 %), predicted {} m/s, {}; {speed_why}",
        with_uncertainty(fit.wave_speed, fit.wave_speed_ci95),
        significant(predicted.wave_speed, 5),
        ratio(fit.wave_speed, fit.wave_speed_ci95, predicted.wave_speed)
    )
    .ok();
    writeln!(
        report,
        "  {}",
        period_line(measured, fit, Some(predicted.rate))
    )
    .ok();
    let verdict = match (rate_ok, speed_ok) {
        (true, true) => "agrees (growth rate and wave speed)",
        (false, true) => "disagrees (growth rate)",
        (true, false) => "disagrees (wave speed)",
        (false, false) => "disagrees (growth rate and wave speed)",
    };
    writeln!(report, "verdict: {verdict}").ok();
}

/// Which wavenumber a case is analysed at.
enum Wavenumber<'a> {
    /// The one the options ask for, else the seeded one.
    Asked(&'a Args),
    /// The one a run records ([`Case::tracked_wavelength`]).
    Recorded,
}

/// Reads m, n, Re, the drive and the wavenumber (see [`Wavenumber`]) from a two-layer
/// channel case read from `path`.
fn from_case(case: &Case, path: &Path, wavenumber: Wavenumber<'_>) -> Result<Setup, Failure> {
    let bad = |what: &str| Failure::BadInput(format!("{}: {what}", path.display()));
    let channel = CaseChannel::of(case).map_err(|err| match err {
        ChannelError::Layers(_) => bad(&format!("{err}; use --m, --n, --re instead")),
        ChannelError::Ratios(err) => solve_failure(err),
        other => bad(&other.to_string()),
    })?;
    let (lower, upper) = (
        &case.phases[channel.pair.lower],
        &case.phases[channel.pair.upper],
    );
    let (m, n) = (channel.pair.viscosity_ratio, channel.pair.width_ratio);
    let half_width = channel.scales.half_width;
    let (peak_velocity, re) = (channel.scales.peak_velocity, channel.scales.reynolds);
    let wavenumber = match wavenumber {
        Wavenumber::Recorded => channel.wavenumber(case.tracked_wavelength()),
        Wavenumber::Asked(args) => {
            match (args.wavenumber, &case.interface_perturbation, &args.scan) {
                (Some(k), _, _) => k,
                (None, Some(p), _) => channel.wavenumber(p.wavelength),
                (None, None, Some(_)) => 1.0,
                (None, None, None) => {
                    return Err(bad(
                        "the case seeds no interface perturbation; give --wavenumber or --scan",
                    ));
                }
            }
        }
    };
    let description = format!(
        "case {}: phases '{}' (lower) and '{}' (upper), m = {m:.6}, n = {n:.6}, Re = ρ U_max h/μ_lower = {re:.6}\n  \
         half-width h = {half_width} m, peak velocity of the steady profile U_max = {peak_velocity:.6e} m/s\n",
        path.display(),
        lower.name,
        upper.name
    );
    Ok(Setup {
        problem: channel.problem(wavenumber),
        units: Some(channel),
        description,
    })
}

fn describe(report: &mut String, wavenumber: f64, c: stability::c64, units: &Option<CaseChannel>) {
    let growth = wavenumber * c.im;
    writeln!(
        report,
        "  scaled: wavenumber {wavenumber:.6}, wave speed c = {:.8} {:+.8}i, growth rate {growth:.6e} ({})",
        c.re,
        c.im,
        if growth > 0.0 { "unstable" } else { "stable" }
    )
    .ok();
    if let Some(u) = units {
        writeln!(
            report,
            "  case units: wavenumber {:.6} 1/m (wavelength {:.6} m), wave speed {:.6e} {:+.6e}i m/s, growth rate {:.6e} 1/s",
            wavenumber / u.scales.half_width,
            u.wavelength(wavenumber),
            u.wave_speed(c),
            c.im * u.scales.peak_velocity,
            u.growth_rate(wavenumber, c)
        )
        .ok();
    }
}

fn curve_csv(curve: &[CurvePoint], units: &Option<CaseChannel>) -> String {
    let mut out = String::from(
        "wavenumber_scaled,wave_speed_real_scaled,wave_speed_imag_scaled,growth_rate_scaled",
    );
    if units.is_some() {
        out.push_str(",wavenumber_per_m,growth_rate_per_s");
    }
    out.push('\n');
    for p in curve {
        write!(
            out,
            "{},{},{},{}",
            p.wavenumber, p.speed.re, p.speed.im, p.growth_rate
        )
        .ok();
        if let Some(u) = units {
            write!(
                out,
                ",{},{}",
                p.wavenumber / u.scales.half_width,
                p.growth_rate * u.scales.peak_velocity / u.scales.half_width
            )
            .ok();
        }
        out.push('\n');
    }
    out
}

fn map_csv(map: &[MapPoint]) -> String {
    let mut out =
        String::from("m,n,wave_speed_real_scaled,wave_speed_imag_scaled,growth_rate_scaled\n");
    for p in map {
        writeln!(
            out,
            "{},{},{},{},{}",
            p.m, p.n, p.speed.re, p.speed.im, p.growth_rate
        )
        .ok();
    }
    out
}

/// Parses "first,last,steps".
fn parse_range(text: &str, option: &str) -> Result<(f64, f64, usize), Failure> {
    let bad = || {
        Failure::BadInput(format!(
            "{option} {text}: expected first,last,steps, e.g. 0.1,2,40 (first < last, \
             2 <= steps <= 10000)"
        ))
    };
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let [first, last, steps] = parts.as_slice() else {
        return Err(bad());
    };
    let first: f64 = first.parse().map_err(|_| bad())?;
    let last: f64 = last.parse().map_err(|_| bad())?;
    let steps: usize = steps.parse().map_err(|_| bad())?;
    if !(first.is_finite() && last.is_finite() && first < last && (2..=10_000).contains(&steps)) {
        return Err(bad());
    }
    Ok((first, last, steps))
}

fn log_spaced((first, last, steps): (f64, f64, usize), option: &str) -> Result<Vec<f64>, Failure> {
    if first.is_nan() || first <= 0.0 {
        return Err(Failure::BadInput(format!(
            "{option}: ratios must be positive, got {first}"
        )));
    }
    let (a, b) = (first.ln(), last.ln());
    Ok((0..steps)
        .map(|k| (a + (b - a) * k as f64 / (steps - 1) as f64).exp())
        .collect())
}

/// Writes `bytes` to `path` through the run folder's atomic writer, creating the folder
/// first if it is missing.
fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
        fs::create_dir_all(dir).map_err(|e| OutputError::write(dir, e))?;
    }
    Ok(write_bytes(path, bytes)?)
}
