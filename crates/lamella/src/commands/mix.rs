//! `lamella mix DIR`: how far the phases have mixed, snapshot by snapshot: gridded volume
//! fractions, per-particle mixing entropy and finite-time Lyapunov exponent, and the global
//! Danckwerts intensity of segregation, Lacey index, mixing entropy index and mean FTLE (the
//! first three measured against the same particles at their initial positions); as CSV,
//! charts over time, VTK fields and PNG maps of the fields ([`maps`]).

use std::path::{Path, PathBuf};

use glam::{DVec2, DVec3};
use lamella_cells::Vector;
use lamella_post::grid::Grid;
use lamella_post::plot::{Chart, Series, Style};
use lamella_post::table::csv_document;
use lamella_post::vtk::{Field, image_document, points_document};

use crate::Failure;
use crate::commands::Globals;
use crate::commands::shared::parse_list;
use lamella_run::analysis::folder::Run;
use lamella_run::analysis::mixing::{Fields, MixingGrid, Scalars, analyse, phase_column};
use lamella_run::output::atomic::write_bytes;

mod maps;

/// Options of `lamella mix`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes into --out [default: DIR/analysis]: mixing.csv (the global measures \
    of every snapshot: Danckwerts' intensity of segregation, Lacey's index and the mixing \
    entropy index, each against the same particles at their initial positions on the same \
    grid, so the unmixed start measures exactly 1, 0 and 0 on any grid; and the mean FTLE), \
    mixing.png and mean_ftle.png (those measures over time); and, at the \
    last snapshot or the one closest to --time, mix_fields.vti (volume fraction of each phase \
    on the grid), mix_particles.vtp (phase, id, mixing_entropy and ftle of each fluid \
    particle) and the maps volume_fraction_<phase>.png (one per phase, on the grid), \
    mixing_entropy.png and ftle.png (the particles as small squares coloured by value), each \
    with a colour bar and the domain's aspect ratio; in 3D the maps show the middle z slice. \
    There is no FTLE at t = 0, so ftle.png is not drawn for that snapshot (nor mean_ftle.png \
    for a run with only t = 0; a note says so). On a grid with fewer than two particles per \
    cell the Lacey and entropy indices are left empty, with a note. Exit codes: 0 \
    done, 1 a file could not be written, 2 bad input."
)]
pub struct Args {
    /// The run folder written by `lamella run`.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Grid cells per axis, NX,NY[,NZ] [default: one cell per two particle spacings].
    #[arg(long, value_name = "NX,NY", value_parser = super::values::grid)]
    pub grid: Option<String>,
    /// Time of the snapshot whose fields and maps are written (s); the closest is taken, with
    /// a note when the time lies outside the run [default: the last].
    #[arg(long, value_name = "T", value_parser = super::values::time)]
    pub time: Option<f64>,
    /// Folder for the results [default: DIR/analysis].
    #[arg(long, value_name = "OUT")]
    pub out: Option<PathBuf>,
}

/// Runs `lamella mix`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let run = Run::open(&args.dir)?;
    match run.case.dimension {
        2 => mix::<DVec2>(&run, &args, globals),
        _ => mix::<DVec3>(&run, &args, globals),
    }
}

fn mix<V: Vector>(run: &Run, args: &Args, globals: Globals) -> Result<(), Failure> {
    let case = &run.case;
    let cells: Option<Vec<usize>> = match &args.grid {
        Some(text) => Some(parse_list(text, "--grid").map_err(Failure::BadInput)?),
        None => None,
    };
    let setting = MixingGrid::<V>::of(run, cells)?;
    let (grid, domain) = (&setting.grid, setting.domain);
    let (dim, dx) = (V::DIM, case.particles.spacing);
    let (field_entry, time_note) = run.entry_near(args.time);
    let field_entry = field_entry.file.clone();
    let out_dir = run.output_folder(args.out.as_deref())?;

    let mut rows: Vec<(f64, Scalars)> = Vec::new();
    let mut notes: Vec<String> = time_note.into_iter().collect();
    let mut start_boxes = None;
    for entry in &run.entries {
        let snap = run.read(entry)?;
        let (scalars, fields) = analyse::<V>(&snap, &setting, &mut start_boxes)
            .map_err(|e| Failure::BadInput(format!("{}: {e}", entry.file)))?;
        if entry.file == field_entry {
            write_vtk(&out_dir, case, grid, &fields)?;
            let layout = maps::Layout {
                time: snap.meta.time,
                grid,
                domain,
                spacing: dx,
            };
            notes.extend(maps::write_maps(&out_dir, case, &layout, &fields)?);
        }
        rows.push((snap.meta.time, scalars));
    }
    let col = |f: fn(&Scalars) -> f64| rows.iter().map(|(_, s)| f(s)).collect::<Vec<f64>>();
    let time: Vec<f64> = rows.iter().map(|(t, _)| *t).collect();
    let (i, m, s, l) = (
        col(|s| s.intensity),
        col(|s| s.lacey),
        col(|s| s.entropy),
        col(|s| s.ftle),
    );
    let csv = csv_document(
        &[
            "time_s",
            "intensity_of_segregation",
            "lacey_index",
            "mixing_entropy_index",
            "mean_ftle_per_s",
        ],
        &[&time, &i, &m, &s, &l],
    )
    .map_err(Failure::RunFailed)?;
    write_bytes(&out_dir.join("mixing.csv"), csv.as_bytes())?;
    let line = |label: &str, y: &[f64]| Series {
        label: label.into(),
        x: time.clone(),
        y: y.to_vec(),
        style: Style::Line,
    };
    let chart = Chart {
        title: format!("{}: mixing", case.title),
        x_label: "time (s)".into(),
        y_label: "measure (1)".into(),
        log_x: false,
        log_y: false,
        // A measure left undefined on this grid (all NaN) is not drawn.
        series: vec![
            line("intensity of segregation (Danckwerts)", &i),
            line("Lacey index", &m),
            line("mixing entropy index", &s),
        ]
        .into_iter()
        .filter(|series| series.y.iter().any(|v| v.is_finite()))
        .collect(),
    };
    let png = chart
        .to_png(900, 600)
        .map_err(|e| Failure::RunFailed(e.to_string()))?;
    write_bytes(&out_dir.join("mixing.png"), &png)?;
    let chart = Chart {
        title: format!("{}: mean finite-time Lyapunov exponent", case.title),
        x_label: "time (s)".into(),
        y_label: "mean FTLE (1/s)".into(),
        log_x: false,
        log_y: false,
        series: vec![line("mean FTLE since t = 0", &l)],
    };
    let ftle_path = out_dir.join("mean_ftle.png");
    if l.iter().any(|v| v.is_finite()) {
        let png = chart
            .to_png(900, 600)
            .map_err(|e| Failure::RunFailed(e.to_string()))?;
        write_bytes(&ftle_path, &png)?;
    } else {
        // Only t = 0 (or no FTLE anywhere): nothing to draw; an older chart is not left behind.
        notes.push(
            "mean_ftle.png not drawn: the FTLE needs time elapsed since t = 0, and the run has \
             no snapshot after it"
                .into(),
        );
        match std::fs::remove_file(&ftle_path) {
            Err(e) if e.kind() != std::io::ErrorKind::NotFound => {
                return Err(Failure::RunFailed(format!(
                    "cannot remove the outdated {}: {e}",
                    ftle_path.display()
                )));
            }
            _ => {}
        }
    }
    if let Some(per_box) = rows.iter().find_map(|(_, s)| s.unresolved) {
        notes.push(format!(
            "the grid {} puts {per_box:.2} particles in a cell on average, too few for the Lacey \
             and entropy indices (a cell of one particle is pure however well mixed): they are \
             left empty in mixing.csv; give a coarser --grid, e.g. {} (cells of two spacings, \
             the default)",
            grid.cells[..dim]
                .iter()
                .map(usize::to_string)
                .collect::<Vec<_>>()
                .join(","),
            setting
                .default_cells
                .iter()
                .map(usize::to_string)
                .collect::<Vec<_>>()
                .join(",")
        ));
    }
    for note in &notes {
        crate::note!("note: {note}");
    }
    if !globals.quiet {
        let (t, last) = rows.last().expect("a run has snapshots");
        let shown = |v: f64| {
            if v.is_nan() {
                "undefined on this grid".to_string()
            } else {
                format!("{v:.4}")
            }
        };
        crate::report!(
            "t = {t:.4} s: intensity of segregation {}, Lacey index {}, mixing entropy index {}, mean FTLE {:.4e} 1/s ({} snapshots, results in {})",
            shown(last.intensity),
            shown(last.lacey),
            shown(last.entropy),
            last.ftle,
            rows.len(),
            out_dir.display()
        )?;
    }
    Ok(())
}

/// Writes the gridded volume fractions (`mix_fields.vti`) and the per-particle fields
/// (`mix_particles.vtp`).
fn write_vtk<V: Vector>(
    out_dir: &Path,
    case: &lamella_case::Case,
    grid: &Grid<V>,
    fields: &Fields<V>,
) -> Result<(), Failure> {
    let phases = case.phases.len();
    let names: Vec<String> = case
        .phases
        .iter()
        .map(|p| format!("volume_fraction_{}", p.name))
        .collect();
    let columns: Vec<Vec<f64>> = (0..phases)
        .map(|k| phase_column(&fields.fractions, phases, k))
        .collect();
    let gridded: Vec<Field<'_>> = names
        .iter()
        .zip(&columns)
        .map(|(n, c)| Field {
            name: n,
            components: 1,
            values: c,
        })
        .collect();
    let vti = image_document(grid, &gridded).map_err(Failure::RunFailed)?;
    write_bytes(&out_dir.join("mix_fields.vti"), vti.as_bytes())?;
    let phase: Vec<f64> = fields.phase.iter().map(|&p| p as f64).collect();
    let id: Vec<f64> = fields.id.iter().map(|&i| i as f64).collect();
    let vtp = points_document(
        &fields.position,
        &[
            Field {
                name: "phase",
                components: 1,
                values: &phase,
            },
            Field {
                name: "id",
                components: 1,
                values: &id,
            },
            Field {
                name: "mixing_entropy",
                components: 1,
                values: &fields.entropy,
            },
            Field {
                name: "ftle",
                components: 1,
                values: &fields.ftle,
            },
        ],
    )
    .map_err(Failure::RunFailed)?;
    Ok(write_bytes(
        &out_dir.join("mix_particles.vtp"),
        vtp.as_bytes(),
    )?)
}
