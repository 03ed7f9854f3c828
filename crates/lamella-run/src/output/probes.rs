//! Point and line probes: the flow interpolated at fixed places, one CSV per probe in
//! `probes/<name>.csv`.
//!
//! Interpolation is the Shepard-normalised SPH sum over fluid particles,
//! f(x) = Σb fb W(|x − xb|) Vb / Σb W(|x − xb|) Vb with Vb = mb/ρb
//! (Shepard 1968, "A two-dimensional interpolation function for irregularly-spaced data",
//! Proc. ACM National Conference; its SPH use: Monaghan 2005, Rep. Prog. Phys. 68, §2),
//! which reproduces constants exactly even near free surfaces and walls, where the plain sum
//! is truncated. Wall particles are left out (their velocity is the wall's). Neighbours come
//! from the shared neighbour search (`lamella_post::neighbours`), periodic axes included: a
//! probe on a periodic seam sums over the particles on both sides.
//!
//! Columns: `time_s, step, sample, x_m, y_m[, z_m], u_x_m_per_s, u_y_m_per_s[, u_z_m_per_s],
//! pressure_Pa, density_kg_per_m3, viscosity_Pa_s, fluid_neighbours`; a place with no fluid
//! particle within the kernel support gets empty value cells and 0 neighbours.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use lamella_cells::{CellError, Domain, Vector};
use lamella_post::neighbours::Neighbours;
use lamella_sph::{Kernel, Kind, Particles};

use super::OutputError;
use super::series::{column_word, flush_and_sync, reopen_at};

/// A named set of sample places (one for a point probe, evenly spaced ones for a line).
#[derive(Clone, Debug, PartialEq)]
pub struct Probe<V: Vector> {
    /// Name, used for the file name `probes/<name>.csv`.
    pub name: String,
    /// The sample places (m).
    pub places: Vec<V>,
}

impl<V: Vector> Probe<V> {
    /// A point probe.
    pub fn point(name: impl Into<String>, at: V) -> Self {
        Probe {
            name: name.into(),
            places: vec![at],
        }
    }

    /// A line probe of `samples` (≥ 2) evenly spaced places from `from` to `to`, ends included.
    pub fn line(name: impl Into<String>, from: V, to: V, samples: usize) -> Self {
        let last = samples.max(2) - 1;
        Probe {
            name: name.into(),
            places: (0..=last)
                .map(|k| from + (to - from) * (k as f64 / last as f64))
                .collect(),
        }
    }

    /// The probe of a case's probe description (coordinates beyond the dimension ignored,
    /// missing ones taken as 0; the case loader has validated them).
    pub fn from_case(probe: &lamella_case::Probe) -> Self {
        let vector = |c: &[f64]| V::from_fn(|axis| c.get(axis).copied().unwrap_or(0.0));
        match probe {
            lamella_case::Probe::Point { name, at } => Probe::point(name.clone(), vector(at)),
            lamella_case::Probe::Line {
                name,
                from,
                to,
                samples,
            } => Probe::line(name.clone(), vector(from), vector(to), *samples as usize),
        }
    }
}

/// Interpolated values at one place.
#[derive(Clone, Debug, PartialEq)]
pub struct Sample<V: Vector> {
    /// Velocity (m/s).
    pub velocity: V,
    /// Pressure (Pa).
    pub pressure: f64,
    /// Density (kg/m³).
    pub density: f64,
    /// Viscosity (Pa·s).
    pub viscosity: f64,
    /// Fluid particles that contributed.
    pub neighbours: usize,
}

/// Shepard-normalised interpolation of the fluid state at a place from its `neighbours`
/// (particle index and separation, as listed by [`Neighbours`]); `None` when no fluid particle
/// lies within the kernel support.
fn interpolate<V: Vector>(
    particles: &Particles<V>,
    neighbours: impl Iterator<Item = (usize, V)>,
    kernel: &Kernel,
) -> Option<Sample<V>> {
    let mut weight = 0.0;
    let mut velocity = V::ZERO;
    let (mut pressure, mut density, mut viscosity) = (0.0, 0.0, 0.0);
    let mut count = 0;
    for (b, r) in neighbours {
        if particles.kind[b] != Kind::Fluid {
            continue;
        }
        let w = kernel.value(r.length()) * particles.mass[b] / particles.density[b];
        weight += w;
        velocity += particles.velocity[b] * w;
        pressure += particles.pressure[b] * w;
        density += particles.density[b] * w;
        viscosity += particles.viscosity[b] * w;
        count += 1;
    }
    (weight > 0.0).then(|| Sample {
        velocity: velocity / weight,
        pressure: pressure / weight,
        density: density / weight,
        viscosity: viscosity / weight,
        neighbours: count,
    })
}

/// Shepard-normalised samples of `particles` at each of `places`. The neighbours are searched
/// over the solver's `domain`, so a place next to a periodic seam sees the particles on both
/// sides; on the other axes the domain is widened by the kernel support, and a place beyond
/// that has no particle within reach (`None`).
fn interpolate_at<V: Vector>(
    particles: &Particles<V>,
    kernel: &Kernel,
    domain: Domain<V>,
    places: &[V],
) -> Result<Vec<Option<Sample<V>>>, CellError> {
    let radius = kernel.support_radius();
    let widen = V::from_fn(|axis| {
        if domain.is_periodic(axis) {
            0.0
        } else {
            radius
        }
    });
    let reach = Domain::new(domain.lower - widen, domain.upper + widen, domain.periodic)?;
    let within = |x: V| {
        (0..V::DIM).all(|axis| {
            domain.is_periodic(axis)
                || (reach.lower.get(axis)..=reach.upper.get(axis)).contains(&x.get(axis))
        })
    };
    let centres: Vec<V> = places.iter().copied().filter(|&x| within(x)).collect();
    let lists = Neighbours::of_centres(&centres, &particles.position, reach, radius)?;
    let mut listed = 0..lists.len();
    Ok(places
        .iter()
        .map(|&x| {
            if !within(x) {
                return None;
            }
            let c = listed.next()?;
            interpolate(particles, lists.of(c), kernel)
        })
        .collect())
}

/// The probes of a run with their open CSV files.
#[derive(Debug)]
pub struct ProbeFiles<V: Vector> {
    probes: Vec<(Probe<V>, PathBuf, BufWriter<File>)>,
}

impl<V: Vector> ProbeFiles<V> {
    /// Creates `folder/<name>.csv` with its header for every probe.
    pub fn create(folder: &Path, probes: Vec<Probe<V>>) -> Result<Self, OutputError> {
        if !probes.is_empty() {
            std::fs::create_dir_all(folder).map_err(|err| OutputError::write(folder, err))?;
        }
        let mut files = Vec::new();
        for probe in probes {
            let path = probe_path(folder, &probe.name);
            let file = File::create(&path).map_err(|err| OutputError::write(&path, err))?;
            let mut writer = BufWriter::new(file);
            writer
                .write_all(header::<V>().as_bytes())
                .map_err(|err| OutputError::write(&path, err))?;
            files.push((probe, path, writer));
        }
        Ok(ProbeFiles { probes: files })
    }

    /// Reopens the probe files, each cut back to the byte length in `lengths` (same order
    /// as `probes`) recorded at the checkpoint a run resumes from.
    pub fn reopen(
        folder: &Path,
        probes: Vec<Probe<V>>,
        lengths: &[u64],
    ) -> Result<Self, OutputError> {
        if lengths.len() != probes.len() {
            return Err(OutputError::Folder(format!(
                "the checkpoint records {} probe files but the case has {} probes",
                lengths.len(),
                probes.len()
            )));
        }
        let mut files = Vec::new();
        for (probe, &length) in probes.into_iter().zip(lengths) {
            let path = probe_path(folder, &probe.name);
            let writer = BufWriter::new(reopen_at(&path, length)?);
            files.push((probe, path, writer));
        }
        Ok(ProbeFiles { probes: files })
    }

    /// Samples every probe in `particles` at `time`/`step` and appends the rows; `domain` is
    /// the solver's search domain (its periodic axes wrap).
    pub fn sample(
        &mut self,
        particles: &Particles<V>,
        kernel: &Kernel,
        domain: Domain<V>,
        time: f64,
        step: u64,
    ) -> Result<(), OutputError> {
        if self.probes.is_empty() {
            return Ok(());
        }
        let places: Vec<V> = self
            .probes
            .iter()
            .flat_map(|(probe, _, _)| probe.places.iter().copied())
            .collect();
        let mut samples = interpolate_at(particles, kernel, domain, &places)?.into_iter();
        for (probe, path, writer) in &mut self.probes {
            let mut rows = String::new();
            for (k, &at) in probe.places.iter().enumerate() {
                rows.push_str(&format!("{time:e},{step},{k}"));
                for axis in 0..V::DIM {
                    rows.push_str(&format!(",{:e}", at.get(axis)));
                }
                match samples.next().flatten() {
                    Some(s) => {
                        for axis in 0..V::DIM {
                            rows.push_str(&format!(",{:e}", s.velocity.get(axis)));
                        }
                        rows.push_str(&format!(
                            ",{:e},{:e},{:e},{}\n",
                            s.pressure, s.density, s.viscosity, s.neighbours
                        ));
                    }
                    None => rows.push_str(&format!("{}0\n", ",".repeat(V::DIM + 4))),
                }
            }
            writer
                .write_all(rows.as_bytes())
                .map_err(|err| OutputError::write(path, err))?;
        }
        Ok(())
    }

    /// Flushes and syncs every file; returns their lengths in bytes (probe order).
    pub fn flush(&mut self) -> Result<Vec<u64>, OutputError> {
        self.probes
            .iter_mut()
            .map(|(_, path, writer)| flush_and_sync(writer, path))
            .collect()
    }
}

/// `folder/<name>.csv`, the name reduced to letters, digits and `_`.
pub fn probe_path(folder: &Path, name: &str) -> PathBuf {
    folder.join(format!("{}.csv", column_word(name)))
}

fn header<V: Vector>() -> String {
    let axes = ["x", "y", "z"];
    let mut header = String::from("time_s,step,sample");
    for axis in &axes[..V::DIM] {
        header.push_str(&format!(",{axis}_m"));
    }
    for axis in &axes[..V::DIM] {
        header.push_str(&format!(",u_{axis}_m_per_s"));
    }
    header.push_str(",pressure_Pa,density_kg_per_m3,viscosity_Pa_s,fluid_neighbours\n");
    header
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;
    use lamella_sph::KernelKind;

    /// A fluid lattice of spacing dx with velocity u = (a + b·y, 0), pressure = 3.
    fn lattice(dx: f64) -> Particles<DVec2> {
        let mut p = Particles::default();
        for i in 0..20 {
            for j in 0..20 {
                let x = DVec2::new(i as f64 * dx, j as f64 * dx);
                p.position.push(x);
                p.initial_position.push(x);
                p.velocity.push(DVec2::new(0.5 + 2.0 * x.y, 0.0));
                p.density.push(1000.0);
                p.pressure.push(3.0);
                p.mass.push(1000.0 * dx * dx);
                p.viscosity.push(0.1);
                p.phase.push(0);
                p.kind.push(Kind::Fluid);
                p.id.push((i * 20 + j) as u64);
            }
        }
        p
    }

    /// The Shepard sample at one place.
    fn at(
        p: &Particles<DVec2>,
        kernel: &Kernel,
        domain: Domain<DVec2>,
        x: DVec2,
    ) -> Option<Sample<DVec2>> {
        interpolate_at(p, kernel, domain, &[x])
            .unwrap()
            .pop()
            .unwrap()
    }

    /// The box of [`lattice`] (spacing 0.01), periodic along x when asked.
    fn lattice_box(periodic_x: bool) -> Domain<DVec2> {
        Domain::new(DVec2::ZERO, DVec2::splat(0.2), [periodic_x, false, false]).unwrap()
    }

    #[test]
    fn shepard_interpolation_reproduces_constants_and_linear_fields_inside() {
        let dx = 0.01;
        let particles = lattice(dx);
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let domain = lattice_box(false);
        // On an interior node the neighbourhood is symmetric: a linear field comes out exact.
        let node = particles.position[9 * 20 + 10];
        let s = at(&particles, &kernel, domain, node).unwrap();
        assert!((s.pressure - 3.0).abs() < 1e-12);
        assert!((s.density - 1000.0).abs() < 1e-9);
        assert!(
            (s.velocity.x - (0.5 + 2.0 * node.y)).abs() < 1e-12,
            "{:?}",
            s.velocity
        );
        // Between nodes Shepard's sum is a weighted mean: within one support of the exact value.
        let between = DVec2::new(0.0937, 0.1013);
        let s = at(&particles, &kernel, domain, between).unwrap();
        let reach = 2.0 * kernel.support_radius();
        assert!(
            (s.velocity.x - (0.5 + 2.0 * between.y)).abs() < reach,
            "{:?}",
            s.velocity
        );
        // At the corner the support is truncated; constants stay exact thanks to Shepard.
        let corner = at(&particles, &kernel, domain, DVec2::ZERO).unwrap();
        assert!((corner.pressure - 3.0).abs() < 1e-12);
        // Far outside the box: nothing within reach, and no error.
        assert!(at(&particles, &kernel, domain, DVec2::new(5.0, 5.0)).is_none());
    }

    #[test]
    fn a_probe_on_a_periodic_seam_sums_over_both_sides() {
        // Particles at x = (i + ½) dx on [0, L), x periodic, u = (0.5 + 0.2 sin kx, 0.3) with
        // k = 2π/L, pressure 3. The seam x = 0 lies midway between the columns x = L − dx/2 and
        // x = dx/2, as x = L/2 lies midway between two inner columns.
        let (dx, length) = (0.01, 0.2);
        let k = std::f64::consts::TAU / length;
        let field = |x: f64| 0.5 + 0.2 * (k * x).sin();
        let mut particles = lattice(dx);
        for (x, v) in particles.position.iter_mut().zip(&mut particles.velocity) {
            *x += DVec2::splat(0.5 * dx);
            *v = DVec2::new(field(x.x), 0.3);
        }
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let domain = lattice_box(true);
        let y = 0.1;
        let seam = at(&particles, &kernel, domain, DVec2::new(0.0, y)).unwrap();
        let middle = at(&particles, &kernel, domain, DVec2::new(0.5 * length, y)).unwrap();
        // As many fluid neighbours as inside: the columns beyond the seam take part.
        assert_eq!(seam.neighbours, middle.neighbours);
        // A uniform field comes out exact.
        assert!((seam.pressure - 3.0).abs() < 1e-12);
        assert!((seam.velocity.y - 0.3).abs() < 1e-12);
        // The sine is odd about the seam and the neighbourhood symmetric: exactly 0.5 there
        // (a one-sided sum would give more than 0.5).
        assert!((seam.velocity.x - 0.5).abs() < 1e-12, "{:?}", seam.velocity);
        // x = L is the seam too.
        let end = at(&particles, &kernel, domain, DVec2::new(length, y)).unwrap();
        assert!((end.velocity - seam.velocity).length() < 1e-12);
        // Just past the seam the sample mirrors the one just past L/2 (the field is odd about
        // both points) and is close to the field itself.
        let offset = 0.3 * dx;
        let near = at(&particles, &kernel, domain, DVec2::new(offset, y)).unwrap();
        let mirror = at(
            &particles,
            &kernel,
            domain,
            DVec2::new(0.5 * length + offset, y),
        )
        .unwrap();
        assert!(
            ((near.velocity.x - 0.5) + (mirror.velocity.x - 0.5)).abs() < 1e-12,
            "{:?} {:?}",
            near.velocity,
            mirror.velocity
        );
        assert!(
            (near.velocity.x - field(offset)).abs() < 0.1 * 0.2,
            "{:?}",
            near.velocity
        );
        assert!(near.velocity.x > 0.5);
    }

    #[test]
    fn probe_files_have_one_row_per_place_and_reopen_cleanly() {
        let dir = tempfile::tempdir().unwrap();
        let dx = 0.01;
        let particles = lattice(dx);
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let probes = vec![
            Probe::point("centre", DVec2::new(0.1, 0.1)),
            Probe::line("across y", DVec2::new(0.1, 0.0), DVec2::new(0.1, 0.3), 4),
        ];
        let mut files = ProbeFiles::create(dir.path(), probes.clone()).unwrap();
        files
            .sample(&particles, &kernel, lattice_box(false), 0.5, 10)
            .unwrap();
        let lengths = files.flush().unwrap();
        files
            .sample(&particles, &kernel, lattice_box(false), 0.6, 11)
            .unwrap();
        files.flush().unwrap();
        drop(files);
        let mut again = ProbeFiles::reopen(dir.path(), probes, &lengths).unwrap();
        again.flush().unwrap();
        let line = std::fs::read_to_string(dir.path().join("across_y.csv")).unwrap();
        let rows: Vec<&str> = line.lines().collect();
        assert_eq!(rows.len(), 1 + 4);
        assert_eq!(
            rows[0],
            "time_s,step,sample,x_m,y_m,u_x_m_per_s,u_y_m_per_s,pressure_Pa,density_kg_per_m3,viscosity_Pa_s,fluid_neighbours"
        );
        // The last place (y = 0.3) lies outside the lattice: empty values, 0 neighbours.
        assert_eq!(rows[4], "5e-1,10,3,1e-1,3e-1,,,,,,0");
        assert_eq!(rows[4].split(',').count(), rows[0].split(',').count());
    }
}
