//! The results of a sweep folder's members side by side: one row per member with its status,
//! its parameter values, its two-layer ratios, the profile error, the measured and predicted
//! growth rate, the mixing measures; `sweep.csv`, the (m, n) map of the measured growth, or for a sweep over the
//! spacing alone the convergence chart.

use std::path::{Path, PathBuf};

use lamella_case::{Analysis, Case};
use lamella_post::convergence::{convergence_chart, fit_observed_order};
use lamella_post::stability::{RatioPoint, ratio_map};
use lamella_post::table::{Column, csv_table};

use super::AnalysisError;
use super::folder::Run;
use super::growth::{FitSettings, measure};
use super::mixing::{Scalars, last_scalars};
use super::mode::predicted_mode;
use super::profile::profile;
use crate::channel::CaseChannel;
use crate::output::RunFolder;
use crate::output::atomic::write_bytes;
use crate::sweep::{Status, SweepFolder};

/// A measured growth of the interface mode.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MeasuredGrowth {
    /// Growth rate (1/s).
    pub rate: f64,
    /// Half-width of its 95 % interval (1/s).
    pub rate_ci95: f64,
    /// Wave speed (m/s).
    pub wave_speed: f64,
    /// Half-width of its 95 % interval (m/s).
    pub wave_speed_ci95: f64,
}

/// What one member gave.
#[derive(Clone, Debug, PartialEq)]
pub struct MemberResult {
    /// Index of the member.
    pub index: usize,
    /// Its parameter values, in the order of the sweep file.
    pub values: Vec<f64>,
    /// Its status.
    pub status: Status,
    /// Viscosity ratio m and width ratio n, when its case is a two-layer channel.
    pub ratios: Option<(f64, f64)>,
    /// Relative L2 error of the last snapshot's velocity profile against the analytical one,
    /// when the member finished and its case has one.
    pub profile_error: Option<f64>,
    /// The fitted growth of the interface mode, or why there is none, when the case records
    /// the mode (`InterfaceAmplitude`) and the member finished.
    pub growth: Option<Result<MeasuredGrowth, String>>,
    /// The growth rate linear theory predicts (1/s) for its case, when it is a two-layer
    /// channel.
    pub theory_rate: Option<f64>,
    /// The mixing measures of the last snapshot (as `lamella mix` takes them on its default
    /// grid), when the case records `Mixing` and the member finished.
    pub mixing: Option<Scalars>,
}

/// Gathers the results of every member of `folder`.
pub fn gather(folder: &SweepFolder) -> Result<Vec<MemberResult>, AnalysisError> {
    (0..folder.len())
        .map(|index| member_result(folder, index))
        .collect()
}

fn member_result(folder: &SweepFolder, index: usize) -> Result<MemberResult, AnalysisError> {
    let case_path = folder.member_case(index);
    let case = lamella_case::load(&case_path).map_err(|err| {
        AnalysisError::BadInput(format!("{err}; the sweep folder was changed by hand?"))
    })?;
    let status = folder.status(index);
    let channel = CaseChannel::of(&case).ok();
    let theory_rate = match &channel {
        Some(_) => Some(predicted_mode(&case, &case_path)?.rate),
        None => None,
    };
    let finished = status == Status::Finished;
    let run_dir = folder.member_run(index);
    let profile_error = if finished {
        let run = Run::open(&run_dir)?;
        profile(&run, None, 1, None, None, None)?
            .comparison
            .ok()
            .map(|(c, _)| c.relative_l2)
    } else {
        None
    };
    let growth = (finished && case.output.analyses.contains(&Analysis::InterfaceAmplitude))
        .then(|| measured_growth(&run_dir, &case));
    let mixing = if finished && case.output.analyses.contains(&Analysis::Mixing) {
        let run = Run::open(&run_dir)?;
        Some(match case.dimension {
            3 => last_scalars::<glam::DVec3>(&run)?,
            _ => last_scalars::<glam::DVec2>(&run)?,
        })
    } else {
        None
    };
    Ok(MemberResult {
        index,
        values: folder.manifest.members[index].clone(),
        status,
        ratios: channel.map(|c| (c.pair.viscosity_ratio, c.pair.width_ratio)),
        profile_error,
        growth,
        theory_rate,
        mixing,
    })
}

/// The growth `lamella growth` fits with its default settings, or why there is none.
fn measured_growth(run_dir: &Path, case: &Case) -> Result<MeasuredGrowth, String> {
    let folder = RunFolder::open(run_dir).map_err(|err| err.to_string())?;
    let measurement = measure(&folder, case, &FitSettings::default()).map_err(|e| e.to_string())?;
    let fit = measurement.fit.map_err(|err| err.to_string())?;
    Ok(MeasuredGrowth {
        rate: fit.rate,
        rate_ci95: fit.rate_ci95,
        wave_speed: fit.wave_speed,
        wave_speed_ci95: fit.wave_speed_ci95,
    })
}

/// `sweep.csv`: a header (the parameters' field paths as their column names) and one row per
/// member; a missing number is an empty cell.
pub fn table(parameters: &[String], rows: &[MemberResult]) -> String {
    let real = |f: &dyn Fn(&MemberResult) -> Option<f64>| -> Vec<f64> {
        rows.iter().map(|r| f(r).unwrap_or(f64::NAN)).collect()
    };
    let growth = |r: &MemberResult| r.growth.as_ref().and_then(|g| g.as_ref().ok()).copied();
    let members: Vec<u64> = rows.iter().map(|r| r.index as u64).collect();
    let statuses: Vec<String> = rows.iter().map(|r| r.status.word().to_string()).collect();
    let values: Vec<Vec<f64>> = (0..parameters.len())
        .map(|k| rows.iter().map(|r| r.values[k]).collect())
        .collect();
    let results: Vec<Vec<f64>> = vec![
        real(&|r| r.ratios.map(|m| m.0)),
        real(&|r| r.ratios.map(|m| m.1)),
        real(&|r| r.profile_error),
        real(&|r| growth(r).map(|g| g.rate)),
        real(&|r| growth(r).map(|g| g.rate_ci95)),
        real(&|r| growth(r).map(|g| g.wave_speed)),
        real(&|r| growth(r).map(|g| g.wave_speed_ci95)),
        real(&|r| r.theory_rate),
        real(&|r| r.mixing.map(|m| m.intensity)),
        real(&|r| r.mixing.map(|m| m.lacey)),
        real(&|r| r.mixing.map(|m| m.entropy)),
        real(&|r| r.mixing.map(|m| m.ftle)),
    ];
    let notes: Vec<String> = rows
        .iter()
        .map(|row| match (&row.status, &row.growth) {
            (Status::Failed(why), _) => why.clone(),
            (_, Some(Err(why))) => format!("no growth rate: {why}"),
            _ => String::new(),
        })
        .collect();
    let mut headers = vec!["member", "status"];
    headers.extend(parameters.iter().map(String::as_str));
    headers.extend([
        "viscosity_ratio_m",
        "width_ratio_n",
        "profile_relative_l2",
        "growth_rate_per_s",
        "growth_rate_ci95_per_s",
        "wave_speed_m_per_s",
        "wave_speed_ci95_m_per_s",
        "theory_growth_rate_per_s",
        "intensity_of_segregation",
        "lacey_index",
        "mixing_entropy_index",
        "mean_ftle_per_s",
        "note",
    ]);
    let mut columns = vec![Column::Count(&members), Column::Text(&statuses)];
    columns.extend(values.iter().chain(&results).map(|c| Column::Real(c)));
    columns.push(Column::Text(&notes));
    csv_table(&headers, &columns).expect("one header per column, one row per member")
}

/// The files a report wrote.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Written {
    /// `sweep.csv`.
    pub table: PathBuf,
    /// `stability-map.png`, when members with two layers measured a growth rate.
    pub map: Option<PathBuf>,
    /// `convergence.png` and its verdict, for a sweep over `particles.spacing` alone with
    /// profile errors at two spacings or more.
    pub convergence: Option<(PathBuf, String)>,
}

/// Writes `sweep.csv` and the chart into the sweep folder.
pub fn write_report(folder: &SweepFolder, rows: &[MemberResult]) -> Result<Written, AnalysisError> {
    let root = folder.root();
    let mut written = Written {
        table: root.join("sweep.csv"),
        ..Written::default()
    };
    write_bytes(
        &written.table,
        table(&folder.manifest.parameters, rows).as_bytes(),
    )?;
    if folder.manifest.parameters == ["particles.spacing"] {
        let (dx, l2): (Vec<f64>, Vec<f64>) = rows
            .iter()
            .filter_map(|r| r.profile_error.map(|e| (r.values[0], e)))
            .unzip();
        if let Ok(fit) = fit_observed_order(&dx, &l2) {
            let chart = convergence_chart("sweep over the spacing", &dx, &l2, &fit);
            let png = chart
                .to_png(800, 600)
                .map_err(|err| AnalysisError::Failed(err.to_string()))?;
            let path = root.join("convergence.png");
            write_bytes(&path, &png)?;
            written.convergence = Some((path, fit.verdict()));
        }
        return Ok(written);
    }
    let points: Vec<RatioPoint> = rows
        .iter()
        .filter_map(|r| {
            let (m, n) = r.ratios?;
            let rate = r.growth.as_ref()?.as_ref().ok()?.rate;
            Some(RatioPoint { m, n, value: rate })
        })
        .collect();
    if !points.is_empty() {
        let map = ratio_map(
            &points,
            format!(
                "Sweep: measured growth of the interface wave ({} members)",
                points.len()
            ),
            "measured growth rate (1/s)",
            (
                "growing (measured rate > 0)",
                "decaying (measured rate ≤ 0)",
            ),
        );
        let png = map
            .to_png(900, 700)
            .map_err(|err| AnalysisError::Failed(err.to_string()))?;
        let path = root.join("stability-map.png");
        write_bytes(&path, &png)?;
        written.map = Some(path);
    }
    Ok(written)
}
