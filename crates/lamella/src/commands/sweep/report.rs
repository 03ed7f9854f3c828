//! `lamella sweep report DIR`: every member's status and results in `DIR/sweep.csv`, a summary,
//! and the stability map (or, for a sweep over the spacing alone, the convergence chart).

use std::path::PathBuf;

use lamella_post::number::{significant, with_uncertainty};
use lamella_run::analysis::sweep::{gather, write_report};
use lamella_run::sweep::{SweepFolder, member_name};

use crate::Failure;
use crate::commands::Globals;

/// Options of `lamella sweep report`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes DIR/sweep.csv: one row per member with its index, status, parameter \
    values, m and n (two-layer channels), the profile's relative L2 error against the \
    analytical profile, the growth rate and wave speed `lamella growth` fits (default settings) \
    with their 95 % intervals or the reason it refused, the growth rate linear theory \
    predicts (as `lamella stability CASE`), and for cases that record Mixing the intensity of \
    segregation, Lacey index, mixing entropy index and mean FTLE of the last snapshot (as \
    `lamella mix` on its default grid). Draws DIR/stability-map.png over (m, n): members \
    whose wave grew as circles, decayed as squares, coloured by the measured rate; for a sweep \
    over particles.spacing alone, DIR/convergence.png instead. Members that are not finished \
    are listed with their status. Exit codes: 0 written, 1 a chart or file could not be \
    written, 2 not a sweep folder."
)]
pub struct Args {
    /// The sweep folder.
    #[arg(value_name = "DIR")]
    pub folder: PathBuf,
}

/// Gathers, writes and summarises the results of the sweep folder.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let folder = SweepFolder::open(&args.folder)?;
    let rows = gather(&folder)?;
    let written = write_report(&folder, &rows)?;
    if globals.quiet {
        return Ok(());
    }
    for row in &rows {
        let mut line = format!(
            "{}  {:<11}  {}",
            member_name(row.index),
            row.status.word(),
            super::values_text(&folder.manifest.parameters, &row.values)
        );
        if let Some((m, n)) = row.ratios {
            line.push_str(&format!(
                "; m = {}, n = {}",
                significant(m, 4),
                significant(n, 4)
            ));
        }
        if let Some(error) = row.profile_error {
            line.push_str(&format!("; profile L2 {}", significant(error, 3)));
        }
        match &row.growth {
            Some(Ok(g)) => line.push_str(&format!(
                "; growth {} 1/s",
                with_uncertainty(g.rate, g.rate_ci95)
            )),
            Some(Err(why)) => line.push_str(&format!("; no growth rate ({why})")),
            None => {}
        }
        if let Some(rate) = row.theory_rate {
            line.push_str(&format!("; theory {} 1/s", significant(rate, 4)));
        }
        if let Some(mixing) = row.mixing {
            line.push_str(&format!(
                "; intensity of segregation {}, Lacey index {}, mixing entropy index {}",
                significant(mixing.intensity, 4),
                significant(mixing.lacey, 4),
                significant(mixing.entropy, 4)
            ));
        }
        if let lamella_run::sweep::Status::Failed(why) = &row.status {
            line.push_str(&format!("; {why}"));
        }
        crate::report!("{line}")?;
    }
    let finished = rows
        .iter()
        .filter(|r| r.status == lamella_run::sweep::Status::Finished)
        .count();
    crate::report!(
        "{finished} of {} members finished; table in {}",
        rows.len(),
        written.table.display()
    )?;
    if let Some(map) = &written.map {
        crate::report!("stability map in {}", map.display())?;
    }
    if let Some((chart, verdict)) = &written.convergence {
        crate::report!("{verdict}; chart in {}", chart.display())?;
    }
    Ok(())
}
