//! `lamella converge CASE --spacings a,b,c`: runs a case at several particle spacings (several
//! runs at once when cores allow), measures the error of the final velocity profile against the
//! case's analytical solution, and fits the observed order of convergence on log–log axes.
//! A case that records its interface wave (`InterfaceAmplitude`) is a resolution study of the
//! wave instead: the growth rate and wave speed each run gives (as `lamella growth` fits them)
//! against linear theory (as `lamella stability` predicts them).

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use lamella_post::convergence::{convergence_chart, fit_observed_order};
use lamella_post::table::csv_document;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::shared::{FitArgs, parse_list, period_line};
use lamella_case::Case;
use lamella_run::analysis::folder::Run;
use lamella_run::analysis::growth::{FitSettings, measure};
use lamella_run::analysis::mode::predicted_mode;
use lamella_run::analysis::profile::profile;
use lamella_run::feasibility::load_case;
use lamella_run::output::atomic::write_bytes;
use lamella_run::output::{InterfaceTracker, RunFolder};
use lamella_run::reference::channel_reference_or_why;

/// Options of `lamella converge`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes one run folder per spacing, convergence.csv and convergence.png \
    into --out; for a case that records InterfaceAmplitude, growth_convergence.csv instead: \
    the growth rate and wave speed of each run against linear theory, with each fit's window. \
    The fits follow `lamella growth` (--window, --min-r2, --start-up); give one --window so \
    that every spacing is fitted over the same stretch of its record (the automatic window \
    picks a different one for each run). A study starts new runs: an --out folder that \
    already holds files is refused (choose another, remove it, or pass --force), \
    and a refused study writes nothing. Exit codes: 0 done, 1 a run failed or its growth fit \
    refused, 2 bad input (case, spacings, an --out folder in use)."
)]
pub struct Args {
    /// The case file (RON); it needs an analytical profile (layered channel, Poiseuille or
    /// Couette flow).
    #[arg(value_name = "CASE")]
    pub case: PathBuf,
    /// Particle spacings to run, in m, separated by commas (at least two).
    #[arg(long, value_name = "DX,DX,...")]
    pub spacings: String,
    /// Run every spacing to this simulated time (s) instead of the case's end time, e.g. to
    /// follow an interface wave over several wave periods.
    #[arg(long, value_name = "SECONDS", value_parser = super::values::time)]
    pub end: Option<f64>,
    /// Runs at once [default: 1]; the cores are shared between them.
    #[arg(long, value_name = "N", default_value_t = 1, value_parser = super::values::jobs)]
    pub jobs: usize,
    /// Folder for the runs and the results [default: convergence-<case name>].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Replace the results of an earlier study in --out.
    #[arg(long)]
    pub force: bool,
    /// The growth fit of a wave study, as `lamella growth` takes it.
    #[command(flatten)]
    pub fit: FitArgs,
}

/// Runs `lamella converge`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let mut case = load_case(&args.case)?;
    let wave_study = InterfaceTracker::of(&case).is_some();
    if args.fit.given() && !wave_study {
        return Err(Failure::BadInput(format!(
            "{}: --window, --min-r2 and --start-up set the growth fit of a wave study, and \
             this case records no interface wave (no InterfaceAmplitude in output.analyses); \
             leave them out",
            args.case.display()
        )));
    }
    let fit_settings = args.fit.settings()?;
    if let Err(why) = channel_reference_or_why(&case) {
        return Err(Failure::BadInput(format!(
            "{}: no analytical profile for this case ({why}); a convergence study needs a \
             layered channel, Poiseuille or Couette case",
            args.case.display()
        )));
    }
    let spacings: Vec<f64> = parse_list(&args.spacings, "--spacings").map_err(Failure::BadInput)?;
    if spacings.len() < 2 || spacings.iter().any(|d| !(*d > 0.0)) {
        return Err(Failure::BadInput(
            "--spacings needs at least two positive spacings in m, e.g. 8e-5,4e-5,2e-5".into(),
        ));
    }
    if args.jobs == 0 {
        return Err(Failure::BadInput("--jobs must be at least 1".into()));
    }
    let stem = args
        .case
        .file_stem()
        .map_or_else(|| "case".into(), |s| s.to_string_lossy().into_owned());
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| PathBuf::from(format!("convergence-{stem}")));
    if let Some(end) = args.end {
        case.time.end = end;
    }
    // Build and validate one case per spacing before anything is written: a refused study
    // leaves no folder and no file behind.
    let mut texts = Vec::new();
    for &dx in &spacings {
        case.particles.spacing = dx;
        let text = lamella_case::to_ron(&case);
        let problems = match lamella_case::parse_str(&text, &args.case.display().to_string()) {
            Ok(valid) => lamella_run::feasibility::problems(&valid),
            Err(err) => err.problems,
        };
        if !problems.is_empty() {
            let listed: Vec<String> = problems.iter().map(ToString::to_string).collect();
            return Err(Failure::BadInput(format!(
                "{}: at spacing {dx:e} m: {}",
                args.case.display(),
                listed.join("; ")
            )));
        }
        texts.push((dx, text));
    }
    refuse_earlier_study(&out, args.force)?;
    let created = !out.exists();
    std::fs::create_dir_all(&out)
        .map_err(|e| Failure::BadInput(format!("cannot create {}: {e}", out.display())))?;
    let mut runs = Vec::new();
    for (k, (dx, text)) in texts.into_iter().enumerate() {
        let path = out.join(format!("{stem}-dx{k}.ron"));
        if let Err(err) = write_bytes(&path, text.as_bytes()) {
            if created {
                // Best effort: the write error is what the user needs to see.
                let _ = std::fs::remove_dir_all(&out);
            }
            return Err(err.into());
        }
        runs.push((dx, path, out.join(format!("run-dx{k}"))));
    }
    let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
    let threads = (cores / args.jobs).max(1);
    let exe = std::env::current_exe()
        .map_err(|e| Failure::RunFailed(format!("cannot find the lamella program: {e}")))?;
    for batch in runs.chunks(args.jobs) {
        let children: Vec<_> = batch
            .iter()
            .map(|(dx, path, dir)| {
                if !globals.quiet {
                    // Progress only: the report at the end says whether stdout works.
                    let _ = crate::report!("running spacing {dx:e} m into {}", dir.display());
                }
                let mut cmd = Command::new(&exe);
                cmd.arg("--quiet")
                    .arg("--threads")
                    .arg(threads.to_string())
                    .arg("run")
                    .arg(path)
                    .arg("--out")
                    .arg(dir);
                if args.force {
                    cmd.arg("--force");
                }
                cmd.stdin(Stdio::null()).spawn().map(|c| (*dx, c))
            })
            .collect::<Result<_, _>>()
            .map_err(|e| Failure::RunFailed(format!("cannot start a run: {e}")))?;
        for (dx, mut child) in children {
            let status = child
                .wait()
                .map_err(|e| Failure::RunFailed(format!("run at spacing {dx:e} m: {e}")))?;
            if status.code() == Some(2) {
                return Err(Failure::BadInput(format!(
                    "the run at spacing {dx:e} m refused its input (its message is above)"
                )));
            }
            if !status.success() {
                return Err(Failure::RunFailed(format!(
                    "the run at spacing {dx:e} m failed ({status})"
                )));
            }
        }
    }
    if wave_study {
        return summarise_waves(&out, &case, &args.case, &runs, &fit_settings, globals);
    }
    let mut l2 = Vec::new();
    let mut max = Vec::new();
    for (dx, _, dir) in &runs {
        let result = profile(&Run::open(dir)?, None, 1, None, None, None)?;
        let (c, _) = result.comparison.map_err(|why| {
            Failure::RunFailed(format!(
                "run at spacing {dx:e} m: no analytical profile ({why})"
            ))
        })?;
        l2.push(c.relative_l2);
        max.push(c.max_abs);
    }
    summarise(&out, &case.title, &spacings, &l2, &max, globals)
}

/// Refuses a study folder that holds anything already, unless `force` (which replaces the
/// results of the runs in it). Converge starts new runs; it cannot continue an earlier study.
fn refuse_earlier_study(out: &Path, force: bool) -> Result<(), Failure> {
    if out.exists() && !out.is_dir() {
        return Err(Failure::BadInput(format!(
            "--out {} is a file, not a folder; choose another --out",
            out.display()
        )));
    }
    let non_empty = std::fs::read_dir(out).is_ok_and(|mut entries| entries.next().is_some());
    if non_empty && !force {
        return Err(Failure::BadInput(format!(
            "{} exists and is not empty (an earlier study?); choose another --out, remove the \
             folder, or pass --force to replace its results",
            out.display()
        )));
    }
    Ok(())
}

/// The wave resolution study: growth rate and wave speed of each run against theory, into
/// `growth_convergence.csv` and the report.
fn summarise_waves(
    out: &Path,
    case: &Case,
    case_path: &Path,
    runs: &[(f64, PathBuf, PathBuf)],
    fit_settings: &FitSettings,
    globals: Globals,
) -> Result<(), Failure> {
    let predicted = predicted_mode(case, case_path)?;
    let (rate, speed) = (predicted.rate, predicted.wave_speed);
    const HEADER: [&str; 9] = [
        "spacing_m",
        "growth_rate_per_s",
        "growth_rate_ci95_per_s",
        "growth_rate_relative_error",
        "wave_speed_m_per_s",
        "wave_speed_ci95_m_per_s",
        "wave_speed_relative_error",
        "fit_start_s",
        "fit_end_s",
    ];
    let mut columns = vec![Vec::new(); HEADER.len()];
    for (dx, path, dir) in runs {
        let folder = RunFolder::open(dir)?;
        let measured = measure(&folder, &load_case(path)?, fit_settings)?;
        let fit = *measured.fit.as_ref().map_err(|why| {
            Failure::RunFailed(format!(
                "run at spacing {dx:e} m: the growth fit refuses: {why}"
            ))
        })?;
        // One value per column of HEADER (the array's type checks the count).
        let row: [f64; HEADER.len()] = [
            *dx,
            fit.rate,
            fit.rate_ci95,
            fit.rate / rate - 1.0,
            fit.wave_speed,
            fit.wave_speed_ci95,
            fit.wave_speed / speed - 1.0,
            fit.start,
            fit.end,
        ];
        for (column, value) in columns.iter_mut().zip(row) {
            column.push(value);
        }
        if !globals.quiet {
            crate::report!(
                "spacing {dx:e} m: growth rate {:.4e} ± {:.1e} 1/s ({:+.1} % from theory), wave \
                 speed {:.4e} ± {:.1e} m/s ({:+.1} %)",
                fit.rate,
                fit.rate_ci95,
                100.0 * (fit.rate / rate - 1.0),
                fit.wave_speed,
                fit.wave_speed_ci95,
                100.0 * (fit.wave_speed / speed - 1.0)
            )?;
            crate::report!("  {}", period_line(&measured, &fit, Some(rate)))?;
        }
    }
    let csv = csv_document(
        &HEADER,
        &columns.iter().map(Vec::as_slice).collect::<Vec<_>>(),
    )
    .map_err(Failure::RunFailed)?;
    write_bytes(&out.join("growth_convergence.csv"), csv.as_bytes())?;
    if !globals.quiet {
        crate::report!(
            "theory: growth rate {rate:.4e} 1/s, wave speed {speed:.4e} m/s; wrote {}",
            out.join("growth_convergence.csv").display()
        )?;
    }
    Ok(())
}

fn summarise(
    out: &Path,
    title: &str,
    dx: &[f64],
    l2: &[f64],
    max: &[f64],
    globals: Globals,
) -> Result<(), Failure> {
    let fit = fit_observed_order(dx, l2).map_err(|e| Failure::RunFailed(e.to_string()))?;
    let csv = csv_document(
        &["spacing_m", "relative_l2_error", "max_error_m_per_s"],
        &[dx, l2, max],
    )
    .map_err(Failure::RunFailed)?;
    write_bytes(&out.join("convergence.csv"), csv.as_bytes())?;
    let chart = convergence_chart(title, dx, l2, &fit);
    let png = chart
        .to_png(800, 600)
        .map_err(|e| Failure::RunFailed(e.to_string()))?;
    write_bytes(&out.join("convergence.png"), &png)?;
    if !globals.quiet {
        for (d, e) in dx.iter().zip(l2) {
            crate::report!("spacing {d:e} m: relative L2 error {e:.4e}")?;
        }
        crate::report!("{}", fit.verdict())?;
    }
    Ok(())
}
