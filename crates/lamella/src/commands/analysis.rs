//! What the analysis commands (`profile`, `growth`, `mix`, `stability --run`) share: opening a
//! run folder, choosing snapshots, reading columns of `series.csv`, the analytical reference of
//! a case, and writing result files atomically.

use std::path::{Path, PathBuf};

use lamella_case::Case;
use lamella_post::reference::layered::LayeredChannel;
use lamella_post::reference::startup::PlateGap;

use crate::Failure;
use crate::output::atomic::write_atomically;
use crate::output::collection::{Collection, Entry};
use crate::output::{RunFolder, Snapshot, read_snapshot};

/// A finished (or running) run folder with its case and snapshot list.
pub struct Run {
    /// The folder.
    pub folder: RunFolder,
    /// The case copied into it.
    pub case: Case,
    /// The snapshots, in time order.
    pub entries: Vec<Entry>,
}

impl Run {
    /// Opens `dir`: it must hold `case.ron` and at least one snapshot.
    pub fn open(dir: &Path) -> Result<Self, Failure> {
        let folder = RunFolder::open(dir).map_err(|e| Failure::BadInput(e.to_string()))?;
        let case =
            lamella_case::load(&folder.case()).map_err(|e| Failure::BadInput(e.to_string()))?;
        let collection = Collection::read(&folder.collection()).map_err(|e| {
            Failure::BadInput(format!(
                "{e}; the run folder {} has no snapshots yet",
                dir.display()
            ))
        })?;
        let entries = collection.entries().to_vec();
        if entries.is_empty() {
            return Err(Failure::BadInput(format!(
                "the run folder {} lists no snapshot in {}",
                dir.display(),
                folder.collection().display()
            )));
        }
        Ok(Run {
            folder,
            case,
            entries,
        })
    }

    /// Reads snapshot `entry`.
    pub fn read(&self, entry: &Entry) -> Result<Snapshot, Failure> {
        let path = self.folder.snapshots().join(&entry.file);
        read_snapshot(&path).map_err(|e| Failure::BadInput(e.to_string()))
    }

    /// The snapshot closest in time to `time`, or the last one.
    pub fn entry_at(&self, time: Option<f64>) -> &Entry {
        match time {
            None => self
                .entries
                .last()
                .expect("a run has at least one snapshot"),
            Some(t) => self
                .entries
                .iter()
                .min_by(|a, b| (a.time - t).abs().total_cmp(&(b.time - t).abs()))
                .expect("a run has at least one snapshot"),
        }
    }

    /// Where analysis results go: `out`, or `DIR/analysis` (created).
    pub fn output_folder(&self, out: Option<&Path>) -> Result<PathBuf, Failure> {
        let dir = out.map_or_else(|| self.folder.root().join("analysis"), Path::to_path_buf);
        std::fs::create_dir_all(&dir).map_err(|e| {
            Failure::BadInput(format!(
                "cannot create the output folder {}: {e}",
                dir.display()
            ))
        })?;
        Ok(dir)
    }
}

/// Opens the run folder `dir` and reads its case copy; unlike [`Run::open`] it needs no
/// snapshot (for the analyses of `series.csv`).
pub fn open_case(dir: &Path) -> Result<(RunFolder, Case), Failure> {
    let folder = RunFolder::open(dir).map_err(|e| Failure::BadInput(e.to_string()))?;
    let case = lamella_case::load(&folder.case()).map_err(|e| Failure::BadInput(e.to_string()))?;
    Ok((folder, case))
}

/// Reads the columns `names` of the CSV table `path` (header row, numbers in the rows; an empty
/// cell is NaN). A column missing from the header is bad input whose message ends with `hint`.
pub fn read_columns(path: &Path, names: &[&str], hint: &str) -> Result<Vec<Vec<f64>>, Failure> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Failure::BadInput(format!("cannot read {}: {e}", path.display())))?;
    let mut lines = text.lines();
    let header: Vec<&str> = lines
        .next()
        .unwrap_or_default()
        .split(',')
        .map(str::trim)
        .collect();
    let missing: Vec<&str> = names
        .iter()
        .copied()
        .filter(|n| !header.contains(n))
        .collect();
    if !missing.is_empty() {
        return Err(Failure::BadInput(format!(
            "{} has no column {}; {hint}",
            path.display(),
            missing.join(", ")
        )));
    }
    let index: Vec<usize> = names
        .iter()
        .map(|n| header.iter().position(|h| h == n).unwrap_or(0))
        .collect();
    let mut columns = vec![Vec::new(); names.len()];
    for (row, line) in lines.enumerate().filter(|(_, l)| !l.trim().is_empty()) {
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        for ((column, &i), name) in columns.iter_mut().zip(&index).zip(names) {
            let value = match cells.get(i) {
                Some(&"") => f64::NAN,
                Some(cell) => cell.parse::<f64>().map_err(|_| {
                    Failure::BadInput(format!(
                        "{} line {}, column {name}: cannot read {cell:?} as a number; the file \
                         is damaged, or was not written by `lamella run`",
                        path.display(),
                        row + 2
                    ))
                })?,
                None => {
                    return Err(Failure::BadInput(format!(
                        "{} line {} has {} cells, the header {}; the file is cut short or damaged",
                        path.display(),
                        row + 2,
                        cells.len(),
                        header.len()
                    )));
                }
            };
            column.push(value);
        }
    }
    Ok(columns)
}

/// Writes `bytes` to `path` atomically (never a half-written file).
pub fn write_file(path: &Path, bytes: &[u8]) -> Result<(), Failure> {
    write_atomically(path, |w| std::io::Write::write_all(w, bytes))
        .map_err(|e| Failure::RunFailed(e.to_string()))
}

/// The analytical profile u_x(y, t) a case is validated against, when it has one.
pub enum Reference {
    /// Two stacked layers driven by a body force (Bird, Stewart & Lightfoot §2.5), steady.
    Layered(LayeredChannel),
    /// One fluid driven by a body force between fixed plates, from rest (Morris et al. 1997).
    Poiseuille {
        /// Plate gap and kinematic viscosity.
        gap: PlateGap,
        /// Body force per unit mass (m/s²).
        force: f64,
    },
    /// One fluid between a fixed and a moving plate, from rest (Morris et al. 1997).
    Couette {
        /// Plate gap and kinematic viscosity.
        gap: PlateGap,
        /// Speed of the upper plate (m/s).
        wall_speed: f64,
    },
}

impl Reference {
    /// Streamwise velocity at height `y` above the lower wall and time `t` (m/s).
    pub fn velocity(&self, y: f64, t: f64) -> f64 {
        match self {
            Reference::Layered(c) => c.velocity(y),
            Reference::Poiseuille { gap, force } => gap.poiseuille_startup(*force, y, t),
            Reference::Couette { gap, wall_speed } => gap.couette_startup(*wall_speed, y, t),
        }
    }

    /// Short name for titles and messages.
    pub fn name(&self) -> &'static str {
        match self {
            Reference::Layered(_) => "layered Poiseuille (Bird, Stewart & Lightfoot §2.5)",
            Reference::Poiseuille { .. } => "start-up Poiseuille (Morris, Fox & Zhu 1997)",
            Reference::Couette { .. } => "start-up Couette (Morris, Fox & Zhu 1997)",
        }
    }
}

/// Recognises a channel across y, walled at the bottom and top and periodic along x, flowing
/// along x: two layers of equal density under a body force, one fluid under a body force, or
/// one fluid under a moving top wall. `None` for anything else.
pub fn channel_reference(case: &Case) -> Option<Reference> {
    use lamella_case::schema::{Axis, Side};
    // A 3D channel periodic in z with nothing driving along z has the 2D profile.
    let plane = case.dimension == 2
        || (case.dimension == 3
            && case.is_periodic(Axis::Z)
            && case
                .body_force
                .as_ref()
                .is_none_or(|f| f.get(2).is_none_or(|&g| g == 0.0))
            && case.walls.iter().all(|w| {
                w.velocity
                    .as_ref()
                    .is_none_or(|v| v.get(2).is_none_or(|&u| u == 0.0))
            }));
    if !plane || !case.is_periodic(Axis::X) {
        return None;
    }
    let wall = |side: Side| case.walls.iter().find(|w| w.side == side);
    let (bottom, top) = (wall(Side::Bottom)?, wall(Side::Top)?);
    let speed =
        |w: &lamella_case::schema::Wall| w.velocity.as_ref().map_or([0.0, 0.0], |v| [v[0], v[1]]);
    if speed(bottom) != [0.0, 0.0] || speed(top)[1] != 0.0 {
        return None;
    }
    let force = case
        .body_force
        .as_ref()
        .map_or([0.0, 0.0], |f| [f[0], f[1]]);
    if force[1] != 0.0 {
        return None;
    }
    let (lo, hi) = (case.domain.lower[1], case.domain.upper[1]);
    let mu = |p: usize| case.phases[p].viscosity_law.reference_viscosity();
    let bands = case.layer_bands();
    let pairs = case.layer_pairs();
    if pairs.len() == 1 && bands.len() == 2 && speed(top)[0] == 0.0 {
        let (a, b) = (&bands[0], &bands[1]);
        let tol = 1e-9 * (hi - lo);
        let covers = (a.bottom - lo).abs() <= tol && (b.top - hi).abs() <= tol;
        let rho = case.phases[a.phase].density;
        if !covers || case.phases[b.phase].density != rho {
            return None;
        }
        return Some(Reference::Layered(LayeredChannel {
            lower_width: a.top - a.bottom,
            upper_width: b.top - b.bottom,
            lower_viscosity: mu(a.phase),
            upper_viscosity: mu(b.phase),
            force_density: rho * force[0],
        }));
    }
    if case.phases.len() != 1 {
        return None;
    }
    let gap = PlateGap {
        gap: hi - lo,
        nu: mu(0) / case.phases[0].density,
    };
    match (force[0] != 0.0, speed(top)[0] != 0.0) {
        (true, false) => Some(Reference::Poiseuille {
            gap,
            force: force[0],
        }),
        (false, true) => Some(Reference::Couette {
            gap,
            wall_speed: speed(top)[0],
        }),
        _ => None,
    }
}

/// Parses "a,b,c" into numbers, naming the option on failure.
pub fn parse_list<T: std::str::FromStr>(text: &str, option: &str) -> Result<Vec<T>, String> {
    text.split(',')
        .map(|s| {
            s.trim()
                .parse::<T>()
                .map_err(|_| format!("{option}: cannot read {s:?} as a number"))
        })
        .collect()
}
