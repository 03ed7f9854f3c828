//! `lamella profile DIR`: the bin-averaged streamwise velocity across the channel at one time,
//! compared with the case's analytical profile when it has one (layered channel, start-up
//! Poiseuille or Couette flow).

use std::path::{Path, PathBuf};

use lamella_post::plot::{Chart, Series, Style};
use lamella_post::profile::{ProfileComparison, bin_average, compare_with_reference};
use lamella_post::table::{Column, csv_table};
use lamella_sph::Kind;

use crate::Failure;
use crate::commands::Globals;
use crate::commands::analysis::Run;
use lamella_run::output::atomic::write_bytes;
use lamella_run::reference::{Reference, channel_reference};

/// Options of `lamella profile`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes profile.csv and profile.png into --out [default: DIR/analysis]. \
    Exit codes: 0 done, 1 a file could not be written, 2 bad input."
)]
pub struct Args {
    /// The run folder written by `lamella run`.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Time of the snapshot to use (s); the closest snapshot is taken, with a note when the
    /// time lies outside the run [default: the last].
    #[arg(long, value_name = "T", value_parser = super::values::time)]
    pub time: Option<f64>,
    /// Axis across which to bin: x, y or z.
    #[arg(long, default_value = "y", value_parser = ["x", "y", "z"])]
    pub axis: String,
    /// Number of bins [default: one per particle row].
    #[arg(long, value_name = "N", value_parser = super::values::profile_bins)]
    pub bins: Option<usize>,
    /// Folder for the results [default: DIR/analysis].
    #[arg(long, value_name = "OUT")]
    pub out: Option<PathBuf>,
    /// Also write the profile chart to this PNG file (e.g. the README figure).
    #[arg(long, value_name = "PNG")]
    pub figure: Option<PathBuf>,
}

/// What a profile run found.
pub struct ProfileResult {
    /// Snapshot time (s).
    pub time: f64,
    /// The comparison, when the case has an analytical profile.
    pub comparison: Option<(ProfileComparison, &'static str)>,
    /// Why there is no comparison, when there is none.
    pub no_reference: Option<String>,
}

/// Runs `lamella profile`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let result = profile(
        &args.dir,
        args.time,
        &args.axis,
        args.bins,
        args.out.as_deref(),
        args.figure.as_deref(),
    )?;
    if !globals.quiet {
        match &result.comparison {
            Some((c, name)) => crate::report!(
                "profile at t = {:.4} s against {name}: relative L2 error {:.4e}, max error {:.4e} m/s",
                result.time,
                c.relative_l2,
                c.max_abs
            )?,
            None => crate::report!(
                "profile at t = {:.4} s (no analytical profile: {})",
                result.time,
                result
                    .no_reference
                    .as_deref()
                    .unwrap_or("none for this case")
            )?,
        }
    }
    Ok(())
}

/// Computes the profile of run `dir` and writes its table and chart; used by `converge` too.
pub fn profile(
    dir: &Path,
    time: Option<f64>,
    axis: &str,
    bins: Option<usize>,
    out: Option<&Path>,
    figure: Option<&Path>,
) -> Result<ProfileResult, Failure> {
    let run = Run::open(dir)?;
    let case = &run.case;
    let axis_index = match axis {
        "x" => 0,
        "y" => 1,
        _ => 2,
    };
    if axis_index >= case.dimension as usize {
        return Err(Failure::BadInput(format!(
            "--axis {axis}: the case is {}D",
            case.dimension
        )));
    }
    let (entry, time_note) = run.entry_near(time);
    if let Some(note) = time_note {
        crate::note!("note: {note}");
    }
    let snap = run.read(entry)?;
    let (lower, upper) = (case.domain.lower[axis_index], case.domain.upper[axis_index]);
    let bins = bins
        .unwrap_or_else(|| ((upper - lower) / case.particles.spacing).round().max(1.0) as usize);
    if bins == 0 {
        return Err(Failure::BadInput("--bins must be at least 1".into()));
    }
    // Streamwise component: x, or y when binning across x.
    let component = if axis_index == 0 { 1 } else { 0 };
    let fluid: Vec<usize> = (0..snap.len())
        .filter(|&i| snap.kind[i] == Kind::Fluid)
        .collect();
    let coord: Vec<f64> = fluid
        .iter()
        .map(|&i| snap.position[i][axis_index])
        .collect();
    let value: Vec<f64> = fluid.iter().map(|&i| snap.velocity[i][component]).collect();
    let t = snap.meta.time;
    let reference = if axis_index == 1 {
        channel_reference(case)
    } else {
        None
    };
    let no_reference = match (&reference, axis_index) {
        (Some(_), _) => None,
        (None, 1) => Some(
            case.channel_flow_or_why()
                .err()
                .unwrap_or_else(|| "none for this case".into()),
        ),
        (None, _) => Some(format!(
            "binned across {axis}; the channel references are profiles across y"
        )),
    };
    let bad = |e: lamella_post::profile::ProfileError| {
        Failure::BadInput(format!(
            "profile of {}: {e}",
            run.folder.snapshots().join(&entry.file).display()
        ))
    };
    let (binned, comparison) = match &reference {
        Some(r) => {
            let c = compare_with_reference(&coord, &value, lower, upper, bins, |y| {
                r.velocity(y - lower, t)
            })
            .map_err(bad)?;
            (c.sampled.clone(), Some((c, r.name())))
        }
        None => (
            bin_average(&coord, &value, lower, upper, bins).map_err(bad)?,
            None,
        ),
    };
    let axis_name = ["x", "y", "z"][axis_index];
    let comp_name = ["u", "v"][component];
    let counts: Vec<u64> = binned.count.iter().map(|&n| n as u64).collect();
    let exact_bins: Vec<f64> = comparison
        .as_ref()
        .map_or_else(|| vec![f64::NAN; bins], |(c, _)| c.reference.clone());
    let h_pos = format!("{axis_name}_m");
    let h_sim = format!("{comp_name}_m_per_s");
    let h_ref = format!("{comp_name}_reference_m_per_s");
    let csv = csv_table(
        &[&h_pos, &h_sim, &h_ref, "particles"],
        &[
            Column::Real(&binned.centres),
            Column::Real(&binned.mean),
            Column::Real(&exact_bins),
            Column::Count(&counts),
        ],
    )
    .map_err(Failure::RunFailed)?;
    let out_dir = run.output_folder(out)?;
    write_bytes(&out_dir.join("profile.csv"), csv.as_bytes())?;

    let mut series = vec![Series {
        label: "SPH, bin means".into(),
        x: binned.mean.clone(),
        y: binned.centres.clone(),
        style: Style::Points,
    }];
    if let Some(r) = &reference {
        let n = 200;
        let ys: Vec<f64> = (0..=n)
            .map(|k| lower + (upper - lower) * k as f64 / n as f64)
            .collect();
        let us: Vec<f64> = ys.iter().map(|&y| r.velocity(y - lower, t)).collect();
        series.push(Series {
            label: format!("analytical: {}", r.name()),
            x: us,
            y: ys,
            style: Style::Line,
        });
        if let Reference::Layered(c) = r {
            let xs = vec![0.0, c.peak().velocity];
            let y_if = lower + c.lower_width;
            series.push(Series {
                label: "interface".into(),
                x: xs,
                y: vec![y_if, y_if],
                style: Style::Dashed,
            });
        }
    }
    let title = match &comparison {
        Some((c, _)) => format!(
            "{} at t = {t:.3} s: relative L2 error {:.2e}",
            case.title, c.relative_l2
        ),
        None => format!("{} at t = {t:.3} s", case.title),
    };
    let chart = Chart {
        title,
        x_label: format!("{comp_name} (m/s)"),
        y_label: format!("{axis_name} (m)"),
        log_x: false,
        log_y: false,
        series,
    };
    let png = chart
        .to_png(900, 640)
        .map_err(|e| Failure::RunFailed(e.to_string()))?;
    write_bytes(&out_dir.join("profile.png"), &png)?;
    if let Some(path) = figure {
        write_bytes(path, &png)?;
    }
    Ok(ProfileResult {
        time: t,
        comparison,
        no_reference,
    })
}
