//! The bin-averaged streamwise velocity across the channel of a run at one time, compared with
//! the case's analytical profile when it has one
//! ([`crate::reference::channel_reference_or_why`]).

use std::path::Path;

use lamella_post::plot::{Chart, Series, Style};
use lamella_post::profile::{ProfileComparison, bin_average, compare_with_reference};
use lamella_post::table::{Column, csv_table};
use lamella_sph::Kind;

use super::AnalysisError;
use super::folder::Run;
use crate::output::atomic::write_bytes;
use crate::reference::{Reference, channel_reference_or_why};

/// What a profile found.
pub struct ProfileResult {
    /// Snapshot time (s).
    pub time: f64,
    /// The comparison and the reference's name, or why there is no analytical profile to
    /// compare with (the case has none, or the profile is not across y).
    pub comparison: Result<(ProfileComparison, &'static str), String>,
    /// A note when the requested time lies outside the run (the closest snapshot was taken).
    pub time_note: Option<String>,
}

/// The profile of `run` across `axis` (0, 1 or 2; panics unless below the case's dimension) at the
/// snapshot closest to `time` [default: the last], in `bins` bins [default: one per particle
/// row]. Writes `profile.csv` and `profile.png` into `out` [default: DIR/analysis], and the
/// chart to `figure` too when given.
pub fn profile(
    run: &Run,
    time: Option<f64>,
    axis: usize,
    bins: Option<usize>,
    out: Option<&Path>,
    figure: Option<&Path>,
) -> Result<ProfileResult, AnalysisError> {
    let case = &run.case;
    let (entry, time_note) = run.entry_near(time);
    let snap = run.read(entry)?;
    let (lower, upper) = (case.domain.lower[axis], case.domain.upper[axis]);
    let bins = bins
        .unwrap_or_else(|| ((upper - lower) / case.particles.spacing).round().max(1.0) as usize);
    if bins == 0 {
        return Err(AnalysisError::BadInput(
            "a profile needs at least 1 bin".into(),
        ));
    }
    // Streamwise component: x, or y when binning across x.
    let component = if axis == 0 { 1 } else { 0 };
    let fluid: Vec<usize> = (0..snap.len())
        .filter(|&i| snap.kind[i] == Kind::Fluid)
        .collect();
    let coord: Vec<f64> = fluid.iter().map(|&i| snap.position[i][axis]).collect();
    let value: Vec<f64> = fluid.iter().map(|&i| snap.velocity[i][component]).collect();
    let t = snap.meta.time;
    let reference = if axis == 1 {
        channel_reference_or_why(case)
    } else {
        Err(format!(
            "binned across {}; the channel references are profiles across y",
            ["x", "y", "z"][axis]
        ))
    };
    let bad = |e: lamella_post::profile::ProfileError| {
        AnalysisError::BadInput(format!(
            "profile of {}: {e}",
            run.folder.snapshots().join(&entry.file).display()
        ))
    };
    let (binned, comparison) = match &reference {
        Ok(r) => {
            let c = compare_with_reference(&coord, &value, lower, upper, bins, |y| {
                r.velocity(y - lower, t)
            })
            .map_err(bad)?;
            (c.sampled.clone(), Ok((c, r.name())))
        }
        Err(why) => (
            bin_average(&coord, &value, lower, upper, bins).map_err(bad)?,
            Err(why.clone()),
        ),
    };
    let axis_name = ["x", "y", "z"][axis];
    let comp_name = ["u", "v"][component];
    let counts: Vec<u64> = binned.count.iter().map(|&n| n as u64).collect();
    let exact_bins: Vec<f64> = comparison
        .as_ref()
        .map_or_else(|_| vec![f64::NAN; bins], |(c, _)| c.reference.clone());
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
    .map_err(AnalysisError::Failed)?;
    let out_dir = run.output_folder(out)?;
    write_bytes(&out_dir.join("profile.csv"), csv.as_bytes())?;

    let mut series = vec![Series {
        label: "SPH, bin means".into(),
        x: binned.mean.clone(),
        y: binned.centres.clone(),
        style: Style::Points,
    }];
    if let Ok(r) = &reference {
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
        Ok((c, _)) => format!(
            "{} at t = {t:.3} s: relative L2 error {:.2e}",
            case.title, c.relative_l2
        ),
        Err(_) => format!("{} at t = {t:.3} s", case.title),
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
        .map_err(|e| AnalysisError::Failed(e.to_string()))?;
    write_bytes(&out_dir.join("profile.png"), &png)?;
    if let Some(path) = figure {
        write_bytes(path, &png)?;
    }
    Ok(ProfileResult {
        time: t,
        comparison,
        time_note,
    })
}
