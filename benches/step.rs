//! Solver step speed: one whole step and its parts, on the standard case of `lamella bench`
//! (2D two-layer channel, Wendland C2, h = 1.3 dx, all physics on) at 1e4 and 1e5 particles,
//! on one thread and on all cores.
//!
//! Parts, in the order a step runs them: the neighbour-list rebuild with the reordering of
//! every particle array, the wall states (Adami et al. 2012), and the rates (continuity,
//! pressure, viscosity); the rest of a step is the time-step choice, the update and the checks.
//!
//! Run: `cargo bench --bench step`.

use std::time::Duration;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use glam::DMat3;
use glam::DVec2;
use lamella_cells::CellList;
use lamella_run::benchmark::standard_case;
use lamella_sph::forces::{ParticleMotion, RateParameters, Rates, density_rates, particle_rates};
use lamella_sph::shear_rate::velocity_gradients;
use lamella_sph::walls::{InteractionState, interaction_states};
use lamella_sph::{ReorderScratch, Simulation};

fn step_and_parts(c: &mut Criterion) {
    let all_cores = rayon::current_num_threads();
    let mut thread_counts = vec![1];
    if all_cores > 1 {
        thread_counts.push(all_cores);
    }
    for target in [10_000usize, 100_000] {
        let case = standard_case(target).expect("standard case");
        let mut sim: Simulation<DVec2> = lamella_run::setup::simulation(&case).expect("set-up");
        for _ in 0..2 {
            sim.step(f64::INFINITY).expect("warm-up step");
        }
        let config = sim.config().clone();
        let inverse_reference_density: Vec<f64> =
            config.reference_density.iter().map(|r| 1.0 / r).collect();
        let particles = sim.particles().clone();
        let n = particles.len();
        let mut cells =
            CellList::new(config.search_domain, config.kernel.support_radius()).expect("cell list");
        cells.rebuild(&particles.position).expect("rebuild");

        let mut group = c.benchmark_group(format!("step_2d_n{n}"));
        group
            .sample_size(10)
            .warm_up_time(Duration::from_millis(500))
            .measurement_time(Duration::from_secs(if n > 50_000 { 6 } else { 2 }))
            .throughput(Throughput::Elements(n as u64));
        for &threads in &thread_counts {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("thread pool");
            let label = format!("{threads}t");
            group.bench_function(BenchmarkId::new("whole_step", &label), |b| {
                let mut sim = sim.clone();
                b.iter(|| pool.install(|| sim.step(f64::INFINITY).expect("step")))
            });
            group.bench_function(BenchmarkId::new("rebuild_and_reorder", &label), |b| {
                let mut cells = cells.clone();
                let mut state = particles.clone();
                let mut scratch = ReorderScratch::default();
                b.iter(|| {
                    pool.install(|| {
                        cells.rebuild(&state.position).expect("rebuild");
                        state.reorder(cells.permutation(), &mut scratch);
                    })
                })
            });
            let mut seen = vec![InteractionState::default(); n];
            group.bench_function(BenchmarkId::new("wall_states", &label), |b| {
                b.iter(|| {
                    pool.install(|| {
                        interaction_states(
                            &config.kernel,
                            &config.state_law,
                            config.body_force,
                            &config.reference_density,
                            &particles,
                            &cells,
                            None,
                            &mut seen,
                        )
                    })
                })
            });
            let params = RateParameters {
                kernel: config.kernel,
                body_force: config.body_force,
                pair_viscosity: config.pair_viscosity,
                density_diffusion: config.density_diffusion,
                sound_speed: config.state_law.sound_speed,
                reference_density: &config.reference_density,
                inverse_reference_density: &inverse_reference_density,
                viscous_normalisation: config.viscous_normalisation,
                wall_suction: config.wall_suction,
            };
            // The velocity gradients the full viscous stress needs (the standard case has two
            // viscosities); their pass is part of the rates here.
            let mut gradients = vec![DMat3::ZERO; if config.full_viscous_stress { n } else { 0 }];
            let mut rates = vec![Rates::default(); n];
            group.bench_function(BenchmarkId::new("rates", &label), |b| {
                b.iter(|| {
                    pool.install(|| {
                        if config.full_viscous_stress {
                            velocity_gradients(
                                &cells,
                                &particles,
                                |k| seen[k].volume,
                                &config.kernel,
                                &mut gradients,
                            );
                        }
                        particle_rates(&params, &particles, &seen, &gradients, &cells, &mut rates)
                    })
                })
            });
            let mut density = vec![0.0; n];
            group.bench_function(BenchmarkId::new("density_rates", &label), |b| {
                b.iter(|| {
                    pool.install(|| {
                        density_rates(
                            &params,
                            &particles,
                            ParticleMotion {
                                velocity: &particles.velocity,
                                shift: &[],
                            },
                            &seen,
                            &cells,
                            &mut density,
                        )
                    })
                })
            });
        }
        group.finish();
    }
}

criterion_group!(benches, step_and_parts);
criterion_main!(benches);
