//! The global mixing measures of a run's snapshots (Danckwerts' intensity of segregation,
//! Lacey's index, the mixing entropy index, each against the same particles at their initial
//! positions, and the mean finite-time Lyapunov exponent) and the per-particle fields `lamella
//! mix` writes, on a grid of the domain.

use lamella_cells::{Domain, Vector};
use lamella_post::ftle::{deformation_gradients, ftle};
use lamella_post::grid::Grid;
use lamella_post::mixing::{
    BoxCounts, MixingError, entropy_index, global_composition, intensity_of_segregation,
    lacey_index, normalised_mixing_entropy, phase_fractions,
};
use lamella_post::neighbours::Neighbours;
use lamella_sph::{Kernel, Kind};

use super::AnalysisError;
use super::folder::Run;
use crate::output::Snapshot;

/// The grid and kernel the measures of a case are taken on.
pub struct MixingGrid<V: Vector> {
    /// The grid of cells and nodes.
    pub grid: Grid<V>,
    /// The domain with its periodic axes.
    pub domain: Domain<V>,
    /// The case's kernel.
    pub kernel: Kernel,
    /// Its support radius (m).
    pub radius: f64,
    /// Number of phases.
    pub phases: usize,
    /// The default cell counts per axis: cells of two spacings.
    pub default_cells: Vec<usize>,
}

impl<V: Vector> MixingGrid<V> {
    /// The grid of `run`'s case with `cells` per axis [default: cells of two spacings]. A case
    /// of one phase, or cell counts that make no grid, are bad input.
    pub fn of(run: &Run, cells: Option<Vec<usize>>) -> Result<Self, AnalysisError> {
        let case = &run.case;
        let phases = case.phases.len();
        if phases < 2 {
            return Err(AnalysisError::BadInput(format!(
                "{}: the case has one phase; mixing needs at least two",
                run.folder.case().display()
            )));
        }
        let dim = V::DIM;
        let dx = case.particles.spacing;
        let lower = V::from_fn(|a| case.domain.lower[a]);
        let upper = V::from_fn(|a| case.domain.upper[a]);
        let default_cells: Vec<usize> = (0..dim)
            .map(|a| ((case.extent(a) / (2.0 * dx)).round() as usize).max(1))
            .collect();
        let cells = cells.unwrap_or_else(|| default_cells.clone());
        let grid = Grid::new(lower, upper, &cells).ok_or_else(|| {
            AnalysisError::BadInput(format!(
                "--grid needs {dim} positive cell counts separated by commas"
            ))
        })?;
        let mut periodic = [false; 3];
        for axis in &case.domain.periodic {
            periodic[axis.index()] = true;
        }
        let domain = Domain::new(lower, upper, periodic)
            .map_err(|e| AnalysisError::BadInput(e.to_string()))?;
        let kernel = crate::setup::kernel(case, dim);
        let radius = kernel.support_radius();
        Ok(MixingGrid {
            grid,
            domain,
            kernel,
            radius,
            phases,
            default_cells,
        })
    }
}

/// The global measures of `run`'s last snapshot on the default grid.
pub fn last_scalars<V: Vector>(run: &Run) -> Result<Scalars, AnalysisError> {
    let setting = MixingGrid::<V>::of(run, None)?;
    let entry = run.entry_at(None);
    let snap = run.read(entry)?;
    analyse(&snap, &setting, &mut None)
        .map(|(scalars, _)| scalars)
        .map_err(|e| AnalysisError::BadInput(format!("{}: {e}", entry.file)))
}

/// The global mixing scalars of one snapshot (see `lamella mix --help`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Scalars {
    /// Danckwerts' intensity of segregation over its value at the start (1).
    pub intensity: f64,
    /// Lacey's index against the start (1); NaN on a grid too fine for it.
    pub lacey: f64,
    /// The mixing entropy index against the start (1); NaN on a grid too fine for it.
    pub entropy: f64,
    /// Mean finite-time Lyapunov exponent since t = 0 (1/s).
    pub ftle: f64,
    /// Mean particles per grid cell when too few for the box-count indices (then NaN).
    pub unresolved: Option<f64>,
}

fn mean_finite(values: &[f64]) -> f64 {
    let finite: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
    if finite.is_empty() {
        f64::NAN
    } else {
        finite.iter().sum::<f64>() / finite.len() as f64
    }
}

/// What `lamella mix` computes at one snapshot on the fluid particles, besides the global scalars.
pub struct Fields<V: Vector> {
    /// Volume fractions at the grid nodes, phase fastest (`phases` per node).
    pub fractions: Vec<f64>,
    /// Particle positions (m).
    pub position: Vec<V>,
    /// Particle phase indices.
    pub phase: Vec<usize>,
    /// Particle identities.
    pub id: Vec<u64>,
    /// Normalised local mixing entropy per particle (1).
    pub entropy: Vec<f64>,
    /// Finite-time Lyapunov exponent per particle (1/s).
    pub ftle: Vec<f64>,
}

/// The mixing measures of `snap`. `start_boxes` holds the box counts of the particles at their
/// initial positions, which are the same in every snapshot of a run: the first call counts
/// them, later calls reuse them.
pub fn analyse<V: Vector>(
    snap: &Snapshot,
    setting: &MixingGrid<V>,
    start_boxes: &mut Option<BoxCounts>,
) -> Result<(Scalars, Fields<V>), String> {
    let MixingGrid {
        grid,
        domain,
        kernel,
        radius,
        phases,
        ..
    } = setting;
    let (domain, radius, phases) = (*domain, *radius, *phases);
    let fluid: Vec<usize> = (0..snap.len())
        .filter(|&i| snap.kind[i] == Kind::Fluid)
        .collect();
    let pos: Vec<V> = fluid
        .iter()
        .map(|&i| V::from_fn(|a| snap.position[i][a]))
        .collect();
    let init: Vec<V> = fluid
        .iter()
        .map(|&i| V::from_fn(|a| snap.initial_position[i][a]))
        .collect();
    let phase: Vec<usize> = fluid.iter().map(|&i| snap.phase[i] as usize).collect();
    let volume: Vec<f64> = fluid
        .iter()
        .map(|&i| snap.mass[i] / snap.density[i])
        .collect();
    if let Some(&p) = phase.iter().find(|&&p| p >= phases) {
        return Err(format!("phase index {p} but the case has {phases} phases"));
    }
    let w = |r: f64| kernel.value(r);
    let nodes = grid.nodes();
    let at_nodes =
        Neighbours::of_centres(&nodes, &pos, domain, radius).map_err(|e| e.to_string())?;
    let (frac, sums) = phase_fractions(&at_nodes, &volume, &phase, phases, w, None);
    // The same particles at their initial positions: the unmixed arrangement every measure is
    // taken against, so that the start measures exactly 1 (segregation) or 0 (mixing) on any
    // grid (see lamella_post::mixing::lacey_index).
    let at_start =
        Neighbours::of_centres(&nodes, &init, domain, radius).map_err(|e| e.to_string())?;
    let (start_frac, start_sums) = phase_fractions(&at_start, &volume, &phase, phases, w, None);
    let occupied = |sums: &[f64]| -> Vec<f64> {
        sums.iter()
            .map(|&s| if s > 0.0 { 1.0 } else { 0.0 })
            .collect()
    };
    let (occupied_now, occupied_start) = (occupied(&sums), occupied(&start_sums));
    // Box counts on the same grid for Lacey's index and the entropy index.
    let boxes = box_counts(&pos, &phase, grid, domain, phases);
    let start_boxes =
        &*start_boxes.get_or_insert_with(|| box_counts(&init, &phase, grid, domain, phases));
    let mut intensity = 0.0;
    for k in 0..phases {
        let now = intensity_of_segregation(&phase_column(&frac, phases, k), &occupied_now)
            .map_err(|e| e.to_string())?;
        let start =
            intensity_of_segregation(&phase_column(&start_frac, phases, k), &occupied_start)
                .map_err(|e| e.to_string())?;
        // A start with no contrast on this grid leaves the ratio undefined.
        intensity += if start > 0.0 { now / start } else { f64::NAN } / phases as f64;
    }
    // Too few particles per cell leaves the box-count indices undefined (NaN, with a note);
    // any other failure is an error.
    let box_index = |r: Result<f64, MixingError>| match r {
        Ok(v) => Ok(v),
        Err(MixingError::TooFewPerBox(_)) => Ok(f64::NAN),
        Err(e) => Err(e.to_string()),
    };
    let mut lacey = 0.0;
    for k in 0..phases {
        lacey += box_index(lacey_index(&boxes, start_boxes, k))? / phases as f64;
    }
    let entropy_idx = box_index(entropy_index(&boxes, start_boxes))?;
    let unresolved = (lacey.is_nan() || entropy_idx.is_nan()).then(|| boxes.per_box());
    let among = Neighbours::among(&pos, domain, radius).map_err(|e| e.to_string())?;
    let (local, _) = phase_fractions(&among, &volume, &phase, phases, w, Some(kernel.value(0.0)));
    let global = global_composition(&volume, &phase, phases);
    let entropy = normalised_mixing_entropy(&local, &global);
    let reference = Neighbours::among(&init, domain, radius).map_err(|e| e.to_string())?;
    let gradients = deformation_gradients(
        &reference,
        &pos,
        &volume,
        |a, b| domain.minimum_image(a - b),
        |r| kernel.gradient_factor(r),
    );
    let exponents = ftle(&gradients, V::DIM, snap.meta.time);
    let scalars = Scalars {
        intensity,
        lacey,
        entropy: entropy_idx,
        ftle: mean_finite(&exponents),
        unresolved,
    };
    let fields = Fields {
        fractions: frac,
        position: pos,
        phase,
        id: fluid.iter().map(|&i| snap.id[i]).collect(),
        entropy,
        ftle: exponents,
    };
    Ok((scalars, fields))
}

/// The particles at `points`, of phases `phase`, counted in the cells of `grid` (a particle
/// outside the grid in none).
fn box_counts<V: Vector>(
    points: &[V],
    phase: &[usize],
    grid: &Grid<V>,
    domain: Domain<V>,
    phases: usize,
) -> BoxCounts {
    let mut boxes = BoxCounts::new(grid.len(), phases);
    for (p, &k) in points.iter().zip(phase) {
        if let Some(c) = grid.cell_of(domain.wrap(*p)) {
            boxes.add(c, k);
        }
    }
    boxes
}

/// Column `k` of node-major values with `phases` per node.
pub fn phase_column(fractions: &[f64], phases: usize, k: usize) -> Vec<f64> {
    fractions.iter().skip(k).step_by(phases).copied().collect()
}
