//! The PNG maps `lamella mix` draws at the analysed snapshot: the volume fraction of each phase
//! on the grid (`volume_fraction_<phase>.png`), and the fluid particles coloured by local
//! mixing entropy (`mixing_entropy.png`) and by FTLE (`ftle.png`). A 3D run shows the grid
//! layer at the middle of the z range and the particles within half a spacing of it.

use std::path::Path;

use lamella_case::Case;
use lamella_cells::{Domain, Vector};
use lamella_post::grid::Grid;
use lamella_post::plot::{MapFrame, PlotError, field_map, scatter_map};

use crate::Failure;
use lamella_run::analysis::mixing::Fields;
use lamella_run::output::atomic::write_bytes;

/// Pixels along the longer side of each map's plot area.
pub const LONG_SIDE: u32 = 640;

/// Where and when the maps are drawn.
pub struct Layout<'a, V: Vector> {
    /// Time of the snapshot (s).
    pub time: f64,
    /// The grid the volume fractions are on.
    pub grid: &'a Grid<V>,
    /// The domain, to wrap periodic positions.
    pub domain: Domain<V>,
    /// Particle spacing (m): the side of each particle's square.
    pub spacing: f64,
}

/// Draws every map of `fields` into `out_dir`. Returns a note for each map with nothing to
/// draw (no FTLE at t = 0), whose file is then removed rather than left from an earlier call.
pub fn write_maps<V: Vector>(
    out_dir: &Path,
    case: &Case,
    layout: &Layout<'_, V>,
    fields: &Fields<V>,
) -> Result<Vec<String>, Failure> {
    let phases = case.phases.len();
    let grid = layout.grid;
    let (nx, ny) = (grid.cells[0], grid.cells[1]);
    let layer = grid.cells[2] / 2;
    let slice =
        (V::DIM == 3).then(|| grid.lower.get(2) + (layer as f64 + 0.5) * grid.spacing().get(2));
    let place = slice.map_or(String::new(), |z| format!(", slice z = {z:.3e} m"));
    let frame = |what: &str, value_label: &str, range| MapFrame {
        title: format!("{}, t = {:.4} s{place}", what, layout.time),
        x_label: "x (m)".into(),
        y_label: "y (m)".into(),
        value_label: value_label.into(),
        lower: [grid.lower.get(0), grid.lower.get(1)],
        upper: [grid.upper.get(0), grid.upper.get(1)],
        range,
    };
    let mut notes = Vec::new();
    let stems = file_stems(case.phases.iter().map(|p| p.name.as_str()));
    for (k, (phase, stem)) in case.phases.iter().zip(&stems).enumerate() {
        let values: Vec<f64> = (0..nx * ny)
            .map(|n| fields.fractions[(layer * nx * ny + n) * phases + k])
            .collect();
        let f = frame(
            &format!("volume fraction of {}", phase.name),
            "volume fraction (1)",
            Some([0.0, 1.0]),
        );
        let png = field_map(&f, [nx, ny], &values, LONG_SIDE);
        let file = format!("volume_fraction_{stem}.png");
        write_map(
            out_dir,
            &file,
            png,
            "no fluid near any grid node",
            &mut notes,
        )?;
    }
    let wrapped: Vec<V> = fields
        .position
        .iter()
        .map(|&x| layout.domain.wrap(x))
        .collect();
    let shown: Vec<usize> = (0..wrapped.len())
        .filter(|&i| slice.is_none_or(|z| (wrapped[i].get(2) - z).abs() <= 0.5 * layout.spacing))
        .collect();
    let points: Vec<[f64; 2]> = shown
        .iter()
        .map(|&i| [wrapped[i].get(0), wrapped[i].get(1)])
        .collect();
    let pick = |values: &[f64]| shown.iter().map(|&i| values[i]).collect::<Vec<f64>>();
    let f = frame(
        "local mixing entropy",
        "normalised mixing entropy (1)",
        None,
    );
    let png = scatter_map(
        &f,
        &points,
        &pick(&fields.entropy),
        layout.spacing,
        LONG_SIDE,
    );
    let why = "no fluid particle in the slice";
    write_map(out_dir, "mixing_entropy.png", png, why, &mut notes)?;
    let f = frame("finite-time Lyapunov exponent", "FTLE (1/s)", None);
    let png = scatter_map(&f, &points, &pick(&fields.ftle), layout.spacing, LONG_SIDE);
    let why = "the FTLE needs time elapsed since t = 0";
    write_map(out_dir, "ftle.png", png, why, &mut notes)?;
    Ok(notes)
}

/// Writes a drawn map; a map with no data becomes a note (saying `why`) and its file is removed.
fn write_map(
    out_dir: &Path,
    file: &str,
    png: Result<Vec<u8>, PlotError>,
    why: &str,
    notes: &mut Vec<String>,
) -> Result<(), Failure> {
    let path = out_dir.join(file);
    match png {
        Ok(bytes) => Ok(write_bytes(&path, &bytes)?),
        Err(PlotError::NoData(_)) => {
            notes.push(format!("{file} not drawn: no finite values ({why})"));
            match std::fs::remove_file(&path) {
                Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(Failure::RunFailed(
                    format!("cannot remove the outdated {}: {e}", path.display()),
                )),
                _ => Ok(()),
            }
        }
        Err(e) => Err(Failure::RunFailed(e.to_string())),
    }
}

/// File-name forms of phase names: ASCII letters, digits, '-' and '_' kept, anything else
/// replaced by '_'; a form that repeats an earlier one (ignoring case, for file systems that
/// do) gets `_<phase index>` appended.
fn file_stems<'a>(names: impl Iterator<Item = &'a str>) -> Vec<String> {
    let mut stems: Vec<String> = Vec::new();
    for (k, name) in names.enumerate() {
        let stem: String = name
            .chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                    c
                } else {
                    '_'
                }
            })
            .collect();
        let taken = stems.iter().any(|s| s.eq_ignore_ascii_case(&stem));
        stems.push(if taken { format!("{stem}_{k}") } else { stem });
    }
    stems
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn phase_names_become_distinct_safe_file_stems() {
        let names = ["water", "corn syrup", "corn/syrup", "Water", "oil-2"];
        assert_eq!(
            file_stems(names.into_iter()),
            ["water", "corn_syrup", "corn_syrup_2", "Water_3", "oil-2"]
        );
    }
}
