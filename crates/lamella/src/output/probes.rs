//! Point and line probes: the flow interpolated at fixed places, one CSV per probe in
//! `probes/<name>.csv`.
//!
//! Interpolation is the Shepard-normalised SPH sum over fluid particles,
//! f(x) = Σb fb W(|x − xb|) Vb / Σb W(|x − xb|) Vb with Vb = mb/ρb
//! (Shepard 1968, "A two-dimensional interpolation function for irregularly-spaced data",
//! Proc. ACM National Conference; its SPH use: Monaghan 2005, Rep. Prog. Phys. 68, §2),
//! which reproduces constants exactly even near free surfaces and walls, where the plain sum
//! is truncated. Wall particles are left out (their velocity is the wall's).
//!
//! Columns: `time_s, step, sample, x_m, y_m[, z_m], u_x_m_per_s, u_y_m_per_s[, u_z_m_per_s],
//! pressure_Pa, density_kg_per_m3, viscosity_Pa_s, fluid_neighbours`; a place with no fluid
//! particle within the kernel support gets empty value cells and 0 neighbours.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use lamella_cells::Vector;
use lamella_sph::{Kernel, Kind, Particles};

use super::OutputError;
use super::nearby::Buckets;
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

/// Shepard-normalised interpolation of the fluid state at `at`; `None` when no fluid particle
/// lies within the kernel support.
fn interpolate<V: Vector>(
    particles: &Particles<V>,
    buckets: &Buckets,
    kernel: &Kernel,
    at: V,
) -> Option<Sample<V>> {
    let mut weight = 0.0;
    let mut velocity = V::ZERO;
    let (mut pressure, mut density, mut viscosity) = (0.0, 0.0, 0.0);
    let mut neighbours = 0;
    buckets.for_each_within(&particles.position, at, |b, r| {
        if particles.kind[b] != Kind::Fluid {
            return;
        }
        let w = kernel.value(r) * particles.mass[b] / particles.density[b];
        weight += w;
        velocity += particles.velocity[b] * w;
        pressure += particles.pressure[b] * w;
        density += particles.density[b] * w;
        viscosity += particles.viscosity[b] * w;
        neighbours += 1;
    });
    (weight > 0.0).then(|| Sample {
        velocity: velocity / weight,
        pressure: pressure / weight,
        density: density / weight,
        viscosity: viscosity / weight,
        neighbours,
    })
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

    /// Samples every probe in `particles` at `time`/`step` and appends the rows.
    pub fn sample(
        &mut self,
        particles: &Particles<V>,
        kernel: &Kernel,
        time: f64,
        step: u64,
    ) -> Result<(), OutputError> {
        if self.probes.is_empty() {
            return Ok(());
        }
        let buckets = Buckets::new(&particles.position, kernel.support_radius());
        for (probe, path, writer) in &mut self.probes {
            let mut rows = String::new();
            for (k, &at) in probe.places.iter().enumerate() {
                rows.push_str(&format!("{time:e},{step},{k}"));
                for axis in 0..V::DIM {
                    rows.push_str(&format!(",{:e}", at.get(axis)));
                }
                match interpolate(particles, &buckets, kernel, at) {
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

    #[test]
    fn shepard_interpolation_reproduces_constants_and_linear_fields_inside() {
        let dx = 0.01;
        let particles = lattice(dx);
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let buckets = Buckets::new(&particles.position, kernel.support_radius());
        // On an interior node the neighbourhood is symmetric: a linear field comes out exact.
        let node = particles.position[9 * 20 + 10];
        let s = interpolate(&particles, &buckets, &kernel, node).unwrap();
        assert!((s.pressure - 3.0).abs() < 1e-12);
        assert!((s.density - 1000.0).abs() < 1e-9);
        assert!(
            (s.velocity.x - (0.5 + 2.0 * node.y)).abs() < 1e-12,
            "{:?}",
            s.velocity
        );
        // Between nodes Shepard's sum is a weighted mean: within one support of the exact value.
        let between = DVec2::new(0.0937, 0.1013);
        let s = interpolate(&particles, &buckets, &kernel, between).unwrap();
        let reach = 2.0 * kernel.support_radius();
        assert!(
            (s.velocity.x - (0.5 + 2.0 * between.y)).abs() < reach,
            "{:?}",
            s.velocity
        );
        // At the corner the support is truncated; constants stay exact thanks to Shepard.
        let corner = interpolate(&particles, &buckets, &kernel, DVec2::ZERO).unwrap();
        assert!((corner.pressure - 3.0).abs() < 1e-12);
        assert!(interpolate(&particles, &buckets, &kernel, DVec2::new(5.0, 5.0)).is_none());
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
        files.sample(&particles, &kernel, 0.5, 10).unwrap();
        let lengths = files.flush().unwrap();
        files.sample(&particles, &kernel, 0.6, 11).unwrap();
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
