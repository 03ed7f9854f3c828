//! `series.csv`: one row per sample of the run's global quantities.
//!
//! Columns (units in the names): `time_s, step, dt_s, dt_limit`, the kinetic energy of each
//! phase (`kinetic_energy_<phase>_J`, per metre of depth in 2D: `_J_per_m`),
//! `max_speed_m_per_s`, `max_density_deviation` (largest |ρ − ρ0|/ρ0 of a fluid particle),
//! `mean_density_deviation` (mean of (ρ − ρ0)/ρ0 over the fluid: the drift of the whole),
//! `interface_particles` (fluid particles with a fluid neighbour of another phase within the
//! kernel support, across periodic seams too) and `interface_rms_displacement_m` (root mean
//! square of those particles' displacement from their initial position across the layers,
//! along y, minimum image on a periodic y).
//! When the case records `InterfaceAmplitude` and has a tracked interface
//! ([`lamella_case::Case::tracked_interface`]), three more columns follow:
//! `interface_mode_amplitude_m` and `interface_mode_phase_rad`, the amplitude A and phase φ
//! of the tracked Fourier mode of the interface height (η ≈ A cos(k (x − x_lower) + φ),
//! k = 2π/λ with λ = [`lamella_case::Case::tracked_wavelength`]; see
//! [`lamella_post::interface`]), and `interface_noise_m`, the root mean square of the other
//! resolved modes' amplitudes.
//! Numbers are written in the shortest form that reads back to the same bits.

use std::fs::{File, OpenOptions};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use lamella_case::{Analysis, Axis, Case};
use lamella_cells::{CellError, Domain, Vector};
use lamella_post::interface::{InterfaceWave, Strip, interface_wave};
use lamella_sph::{Kind, Particles};
use rayon::prelude::*;

use super::OutputError;
use super::cell_order::CellOrdered;

/// The axis across the layers: y, as in every layered case (the channel walls are y planes).
pub const LAYER_NORMAL_AXIS: usize = 1;

/// Global quantities of one state.
#[derive(Clone, Debug, PartialEq)]
pub struct FlowStatistics {
    /// Σ ½ m |v|² of the fluid particles of each phase (J, or J/m in 2D).
    pub kinetic_energy: Vec<f64>,
    /// Largest fluid speed (m/s).
    pub max_speed: f64,
    /// Largest |ρ − ρ0|/ρ0 of a fluid particle.
    pub max_density_deviation: f64,
    /// Mean of (ρ − ρ0)/ρ0 over the fluid particles: the drift of the density as a whole.
    pub mean_density_deviation: f64,
    /// Fluid particles with a fluid neighbour of another phase within `radius`.
    pub interface_particles: u64,
    /// RMS displacement of the interface particles along [`LAYER_NORMAL_AXIS`] (m).
    pub interface_rms_displacement: f64,
    /// The tracked interface wave, when the case records it.
    pub interface_wave: Option<InterfaceWave>,
}

/// Most Fourier modes of the interface height a sample resolves (the noise measure's reach).
const MAX_INTERFACE_MODES: usize = 64;

/// Which particles lie below the tracked interface, and which of its modes to record.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InterfaceTracker {
    /// Phase of the layer under the interface.
    lower_phase: u16,
    /// A particle of that phase counts when its initial height is below this (m): halfway to
    /// the next layer boundary above, so a third layer of the same phase does not count.
    below_height: f64,
    strip: Strip,
    /// Mode number of the tracked wave (wavelengths per period).
    tracked: usize,
    /// Modes resolved for the noise: up to one per two spacings, at most 64.
    modes: usize,
}

impl InterfaceTracker {
    /// The tracker of a case that lists `InterfaceAmplitude` in `output.analyses`, has a
    /// tracked interface and is periodic along x; `None` otherwise.
    pub fn of(case: &Case) -> Option<Self> {
        if !case.output.analyses.contains(&Analysis::InterfaceAmplitude) {
            return None;
        }
        let pair = case.tracked_interface()?;
        if !case.is_periodic(Axis::X) {
            return None;
        }
        let below_height = case
            .interior_layer_boundaries()
            .into_iter()
            .find(|&y| y > pair.interface * (1.0 + 1e-12) + 1e-12 * case.extent(1))
            .map_or(f64::INFINITY, |next| 0.5 * (pair.interface + next));
        let length = case.extent(0);
        let tracked = (length / case.tracked_wavelength()).round().max(1.0) as usize;
        let columns = (length / case.particles.spacing).round() as usize;
        let modes = (columns / 2).clamp(tracked, MAX_INTERFACE_MODES.max(tracked));
        Some(InterfaceTracker {
            lower_phase: pair.lower as u16,
            below_height,
            strip: Strip {
                x0: case.domain.lower[0],
                length,
                depth: if case.dimension == 3 {
                    case.extent(2)
                } else {
                    1.0
                },
            },
            tracked,
            modes,
        })
    }

    /// The tracked wave of `particles`.
    pub fn measure<V: Vector>(&self, particles: &Particles<V>) -> InterfaceWave {
        let axis = LAYER_NORMAL_AXIS.min(V::DIM - 1);
        let below: Vec<bool> = (0..particles.len())
            .map(|i| {
                particles.kind[i] == Kind::Fluid
                    && particles.phase[i] == self.lower_phase
                    && particles.initial_position[i].get(axis) < self.below_height
            })
            .collect();
        let x: Vec<f64> = particles.position.iter().map(|p| p.get(0)).collect();
        let volume: Vec<f64> = particles
            .mass
            .iter()
            .zip(&particles.density)
            .map(|(m, rho)| m / rho)
            .collect();
        interface_wave(&x, &volume, &below, self.strip, self.tracked, self.modes)
    }
}

impl FlowStatistics {
    /// The statistics of `particles` with `reference_density[phase]` (kg/m³), the solver's
    /// search `domain` (its periodic axes wrap, so the interface is found across a seam) and the
    /// interface neighbourhood `radius` (m, the kernel support).
    ///
    /// Sums run serially in particle order, so the result is the same for any thread count.
    pub fn of<V: Vector>(
        particles: &Particles<V>,
        reference_density: &[f64],
        domain: Domain<V>,
        radius: f64,
        tracker: Option<&InterfaceTracker>,
    ) -> Result<Self, CellError> {
        let mut kinetic_energy = vec![0.0; reference_density.len()];
        let mut max_speed: f64 = 0.0;
        let mut max_density_deviation: f64 = 0.0;
        let (mut deviation_sum, mut fluid_count) = (0.0, 0usize);
        let fluid = |i: usize| particles.kind[i] == Kind::Fluid;
        for i in (0..particles.len()).filter(|&i| fluid(i)) {
            let phase = particles.phase[i] as usize;
            let speed_squared = particles.velocity[i].length_squared();
            if let Some(energy) = kinetic_energy.get_mut(phase) {
                *energy += 0.5 * particles.mass[i] * speed_squared;
            }
            max_speed = max_speed.max(speed_squared.sqrt());
            if let Some(&rho0) = reference_density.get(phase) {
                let deviation = particles.density[i] / rho0 - 1.0;
                max_density_deviation = max_density_deviation.max(deviation.abs());
                deviation_sum += deviation;
                fluid_count += 1;
            }
        }
        let on_interface = interface_flags(particles, domain, radius)?;
        let mut interface_particles = 0u64;
        let mut displacement_squared = 0.0;
        let axis = LAYER_NORMAL_AXIS.min(V::DIM - 1);
        for i in (0..particles.len()).filter(|&i| on_interface[i]) {
            interface_particles += 1;
            let moved = particles.position[i] - particles.initial_position[i];
            let d = domain.minimum_image(moved).get(axis);
            displacement_squared += d * d;
        }
        let interface_rms_displacement = if interface_particles > 0 {
            (displacement_squared / interface_particles as f64).sqrt()
        } else {
            0.0
        };
        Ok(FlowStatistics {
            kinetic_energy,
            max_speed,
            max_density_deviation,
            mean_density_deviation: deviation_sum / fluid_count.max(1) as f64,
            interface_particles,
            interface_rms_displacement,
            interface_wave: tracker.map(|t| t.measure(particles)),
        })
    }
}

/// For each particle: is it a fluid particle with a fluid neighbour of another phase closer
/// than `radius`? (In the order of `particles`.)
fn interface_flags<V: Vector>(
    particles: &Particles<V>,
    domain: Domain<V>,
    radius: f64,
) -> Result<Vec<bool>, CellError> {
    let ordered = CellOrdered::new(particles, domain, radius)?;
    let p = &ordered.particles;
    let fluid = |k: usize| p.kind[k] == Kind::Fluid;
    let flags: Vec<bool> = (0..p.len())
        .into_par_iter()
        .map(|k| {
            let mut other_phase = false;
            if fluid(k) {
                ordered
                    .cells()
                    .for_each_neighbour(&p.position, k, |j, _, _| {
                        other_phase |= fluid(j) && p.phase[j] != p.phase[k];
                    });
            }
            other_phase
        })
        .collect();
    Ok(ordered.to_given_order(&flags))
}

/// One row of `series.csv`.
#[derive(Clone, Debug, PartialEq)]
pub struct SeriesRow {
    /// Simulated time (s).
    pub time: f64,
    /// Step number.
    pub step: u64,
    /// Last time step (s).
    pub dt: f64,
    /// The criterion that limited it (`acoustic`, `viscous`, `force`, or `start`).
    pub dt_limit: String,
    /// The state's global quantities.
    pub statistics: FlowStatistics,
}

/// The open `series.csv` of a run, appended row by row.
#[derive(Debug)]
pub struct SeriesFile {
    path: PathBuf,
    writer: BufWriter<File>,
    phases: usize,
    /// True when the interface wave columns are written.
    interface: bool,
}

impl SeriesFile {
    /// Creates `path` with the header for `phase_names` in `dimension` 2 or 3, with the
    /// interface wave columns when `interface` is true.
    pub fn create(
        path: &Path,
        phase_names: &[String],
        dimension: usize,
        interface: bool,
    ) -> Result<Self, OutputError> {
        let file = File::create(path).map_err(|err| OutputError::write(path, err))?;
        let mut series = SeriesFile {
            path: path.to_path_buf(),
            writer: BufWriter::new(file),
            phases: phase_names.len(),
            interface,
        };
        let header = header(phase_names, dimension, interface);
        series
            .writer
            .write_all(header.as_bytes())
            .map_err(|err| OutputError::write(path, err))?;
        series.flush()?;
        Ok(series)
    }

    /// Reopens `path` for appending after cutting it back to `length` bytes (the length it
    /// had at the checkpoint a run resumes from, so no row is doubled).
    pub fn reopen(
        path: &Path,
        length: u64,
        phases: usize,
        interface: bool,
    ) -> Result<Self, OutputError> {
        let file = reopen_at(path, length)?;
        Ok(SeriesFile {
            path: path.to_path_buf(),
            writer: BufWriter::new(file),
            phases,
            interface,
        })
    }

    /// Appends a row.
    pub fn append(&mut self, row: &SeriesRow) -> Result<(), OutputError> {
        if row.statistics.kinetic_energy.len() != self.phases {
            return Err(OutputError::invalid(
                &self.path,
                "series row",
                format!(
                    "{} kinetic energies for {} phases",
                    row.statistics.kinetic_energy.len(),
                    self.phases
                ),
            ));
        }
        let s = &row.statistics;
        let mut line = format!("{:e},{},{:e},{}", row.time, row.step, row.dt, row.dt_limit);
        for energy in &s.kinetic_energy {
            line.push_str(&format!(",{energy:e}"));
        }
        line.push_str(&format!(
            ",{:e},{:e},{:e},{},{:e}",
            s.max_speed,
            s.max_density_deviation,
            s.mean_density_deviation,
            s.interface_particles,
            s.interface_rms_displacement
        ));
        match (self.interface, &s.interface_wave) {
            (false, _) => {}
            (true, Some(wave)) => line.push_str(&format!(
                ",{:e},{:e},{:e}",
                wave.amplitude, wave.phase, wave.noise
            )),
            (true, None) => {
                return Err(OutputError::invalid(
                    &self.path,
                    "series row",
                    "no interface wave for the interface columns".to_string(),
                ));
            }
        }
        line.push('\n');
        self.writer
            .write_all(line.as_bytes())
            .map_err(|err| OutputError::write(&self.path, err))
    }

    /// Flushes buffered rows and syncs the file; returns its length in bytes.
    pub fn flush(&mut self) -> Result<u64, OutputError> {
        flush_and_sync(&mut self.writer, &self.path)
    }
}

/// Opens `path` for appending after truncating it to `length` bytes; refuses a file shorter
/// than `length` (rows the checkpoint counts on are missing).
pub(crate) fn reopen_at(path: &Path, length: u64) -> Result<File, OutputError> {
    let file = OpenOptions::new()
        .append(true)
        .open(path)
        .map_err(|err| OutputError::read(path, err))?;
    let actual = file
        .metadata()
        .map_err(|err| OutputError::read(path, err))?
        .len();
    if actual < length {
        return Err(OutputError::invalid(
            path,
            "table of this run",
            format!("it has {actual} bytes but the checkpoint recorded {length}"),
        ));
    }
    file.set_len(length)
        .map_err(|err| OutputError::write(path, err))?;
    Ok(file)
}

/// Flushes and syncs a table; returns its length in bytes.
pub(crate) fn flush_and_sync(
    writer: &mut BufWriter<File>,
    path: &Path,
) -> Result<u64, OutputError> {
    writer
        .flush()
        .map_err(|err| OutputError::write(path, err))?;
    let file = writer.get_ref();
    file.sync_data()
        .map_err(|err| OutputError::write(path, err))?;
    Ok(file
        .metadata()
        .map_err(|err| OutputError::read(path, err))?
        .len())
}

fn header(phase_names: &[String], dimension: usize, interface: bool) -> String {
    let energy_unit = if dimension == 2 { "J_per_m" } else { "J" };
    let mut header = String::from("time_s,step,dt_s,dt_limit");
    for name in phase_names {
        header.push_str(&format!(
            ",kinetic_energy_{}_{energy_unit}",
            column_word(name)
        ));
    }
    header.push_str(
        ",max_speed_m_per_s,max_density_deviation,mean_density_deviation,interface_particles,\
         interface_rms_displacement_m",
    );
    if interface {
        header.push_str(",interface_mode_amplitude_m,interface_mode_phase_rad,interface_noise_m");
    }
    header.push('\n');
    header
}

/// A phase name made safe as part of a column name: letters, digits and `_` only.
pub(crate) fn column_word(name: &str) -> String {
    name.chars()
        .map(|c| if c.is_ascii_alphanumeric() { c } else { '_' })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    /// Two fluid columns of phases 0 and 1 side by side at spacing 1, plus a wall particle.
    fn two_phases() -> Particles<DVec2> {
        let mut p = Particles::default();
        for (i, x) in [0.0, 1.0, 2.0, 3.0].into_iter().enumerate() {
            let phase = u16::from(x >= 2.0);
            p.position.push(DVec2::new(x, 0.0));
            p.initial_position
                .push(DVec2::new(x, if i == 1 { 0.5 } else { 0.0 }));
            p.velocity.push(DVec2::new(1.0 + x, 0.0));
            p.density.push(1000.0 + 10.0 * x);
            p.pressure.push(0.0);
            p.mass.push(2.0);
            p.viscosity.push(1.0);
            p.phase.push(phase);
            p.kind.push(Kind::Fluid);
            p.id.push(i as u64);
        }
        p.position.push(DVec2::new(1.5, 0.1));
        p.initial_position.push(DVec2::new(1.5, 0.1));
        p.velocity.push(DVec2::new(100.0, 0.0));
        p.density.push(5000.0);
        p.pressure.push(0.0);
        p.mass.push(2.0);
        p.viscosity.push(1.0);
        p.phase.push(1);
        p.kind.push(Kind::Wall);
        p.id.push(4);
        p
    }

    /// A box holding [`two_phases`], periodic on the axes asked for.
    fn domain(periodic: [bool; 3]) -> Domain<DVec2> {
        Domain::new(DVec2::new(-0.5, -1.0), DVec2::new(3.5, 1.0), periodic).unwrap()
    }

    #[test]
    fn statistics_count_fluid_only_and_find_the_interface_pair() {
        let s = FlowStatistics::of(
            &two_phases(),
            &[1000.0, 1000.0],
            domain([false; 3]),
            1.1,
            None,
        )
        .unwrap();
        // ½·2·(1² + 2²) and ½·2·(3² + 4²); the wall particle's 100 m/s is ignored.
        assert_eq!(s.kinetic_energy, vec![5.0, 25.0]);
        assert_eq!(s.max_speed, 4.0);
        assert!((s.max_density_deviation - 0.03).abs() < 1e-15);
        // (0 + 0.01 + 0.02 + 0.03)/4: the wall particle's density does not count.
        assert!((s.mean_density_deviation - 0.015).abs() < 1e-15);
        // Only x = 1 (phase 0) and x = 2 (phase 1) touch the other phase within 1.1.
        assert_eq!(s.interface_particles, 2);
        // Displacements along y: −0.5 and 0.
        assert!((s.interface_rms_displacement - (0.125f64).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn the_interface_is_found_across_a_periodic_seam() {
        // x periodic with period 4: x = 3 (phase 1) and x = 0 (phase 0) are 1 apart across the
        // seam, so every fluid particle now touches the other phase.
        let mut p = two_phases();
        let s = FlowStatistics::of(
            &p,
            &[1000.0, 1000.0],
            domain([true, false, false]),
            1.1,
            None,
        )
        .unwrap();
        assert_eq!(s.interface_particles, 4);
        // y periodic on [−0.05, 2.95): a particle that left through the top (2.9 → 0) has
        // moved 0.1, not −2.9. Displacements along y: 0.1, −0.5, 0, 0.
        p.initial_position[0].y = 2.9;
        let both = Domain::new(DVec2::new(-0.5, -0.05), DVec2::new(3.5, 2.95), [true; 3]).unwrap();
        let s = FlowStatistics::of(&p, &[1000.0, 1000.0], both, 1.1, None).unwrap();
        assert_eq!(s.interface_particles, 4);
        let expected = ((0.01 + 0.25) / 4.0f64).sqrt();
        assert!(
            (s.interface_rms_displacement - expected).abs() < 1e-12,
            "{}",
            s.interface_rms_displacement
        );
    }

    #[test]
    fn a_particle_outside_the_domain_is_an_error_not_a_panic() {
        let mut p = two_phases();
        p.position[2].y = 5.0;
        assert!(FlowStatistics::of(&p, &[1000.0, 1000.0], domain([false; 3]), 1.1, None).is_err());
    }

    #[test]
    fn rows_append_after_a_reopen_without_doubling() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("series.csv");
        let names = vec!["light oil".to_string(), "syrup".to_string()];
        let row = |step| SeriesRow {
            time: 0.1 * step as f64,
            step,
            dt: 1e-4,
            dt_limit: "viscous".into(),
            statistics: FlowStatistics::of(
                &two_phases(),
                &[1000.0, 1000.0],
                domain([false; 3]),
                1.1,
                None,
            )
            .unwrap(),
        };
        let mut series = SeriesFile::create(&path, &names, 2, false).unwrap();
        series.append(&row(1)).unwrap();
        let at_checkpoint = series.flush().unwrap();
        series.append(&row(2)).unwrap();
        series.flush().unwrap();
        drop(series);
        let mut resumed = SeriesFile::reopen(&path, at_checkpoint, 2, false).unwrap();
        resumed.append(&row(2)).unwrap();
        resumed.flush().unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 3);
        assert!(
            lines[0].starts_with("time_s,step,dt_s,dt_limit,kinetic_energy_light_oil_J_per_m,")
        );
        assert!(
            lines[2].starts_with("2e-1,2,1e-4,viscous,5e0,2.5e1,"),
            "{}",
            lines[2]
        );
        assert!(SeriesFile::reopen(&path, 1 << 20, 2, false).is_err());
    }
}
