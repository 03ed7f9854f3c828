//! Wall time to the steady state of a layered channel at a large viscosity ratio, implicit
//! against explicit viscosity on the same case and machine, with the accuracy each reached
//! (Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5, for the exact profile).
//!
//! Run: `cargo bench --bench viscous` (m = 1000, n = 5, 36 rows, both treatments; at n = 0.2
//! the explicit run takes 3.4 million steps);
//! `cargo bench --bench viscous -- ROWS RATIO WIDTH_RATIO [TOLERANCE]` for one other case
//! (the viscous layer below, or above with `--viscous-above`); `--implicit-only` skips the
//! explicit run.

use lamella_case::ViscosityTreatment;
use lamella_suite::viscous_layers::Layers;

fn main() {
    let implicit_only = std::env::args().any(|a| a == "--implicit-only");
    let viscous_below = !std::env::args().any(|a| a == "--viscous-above");
    let args: Vec<f64> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let tolerance = args.get(3).copied().unwrap_or(1.0e-9);
    let cases: Vec<Layers> = if args.len() >= 3 {
        vec![Layers {
            rows: args[0] as usize,
            ratio: args[1],
            width_ratio: args[2],
            viscous_below,
        }]
    } else {
        vec![Layers {
            rows: 36,
            ratio: 1000.0,
            width_ratio: 5.0,
            viscous_below: true,
        }]
    };
    println!("threads: {}", rayon::current_num_threads());
    for layers in cases {
        let implicit = ViscosityTreatment::Implicit {
            tolerance,
            max_iterations: 10_000,
        };
        let mut treatments = vec![implicit];
        if !implicit_only {
            treatments.insert(0, ViscosityTreatment::Explicit);
        }
        let mut seconds = Vec::new();
        for treatment in treatments {
            let m = layers.run(treatment);
            println!(
                "rows {} m {} n {} viscous {} {treatment:?}: {} steps, {} solver iterations ({:.1} a step), \
                 {:.2} s; L2 {:.3} %, runny flow rate {:+.3} %, interface row {:+.3} %",
                layers.rows,
                layers.ratio,
                layers.width_ratio,
                if layers.viscous_below {
                    "below"
                } else {
                    "above"
                },
                m.steps,
                m.iterations,
                m.iterations as f64 / m.steps as f64,
                m.seconds,
                100.0 * m.relative_l2,
                100.0 * m.runny_flow_rate_error,
                100.0 * m.interface_row_error,
            );
            seconds.push(m.seconds);
        }
        if !implicit_only {
            println!("implicit is {:.1}× faster", seconds[0] / seconds[1]);
        }
    }
}
