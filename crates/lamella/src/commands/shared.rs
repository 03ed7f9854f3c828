//! What several subcommands share on the command line: number lists, the options of the growth
//! fit (`growth`, `stability --run`), how a measured growth is reported and drawn, and the
//! particle counts of a case and the warning about its expected speed (`check`, `sweep check`).

use glam::{DVec2, DVec3};
use lamella_case::{Case, Generated, generate};
use lamella_post::growth::{self, ModeFit, Window};
use lamella_post::number::{significant, with_uncertainty};
use lamella_post::plot::{Chart, Series, Style};
use lamella_run::analysis::growth::{DEFAULT_MIN_R2, FitSettings, Measurement};
use lamella_run::reference::channel_reference;

use crate::Failure;

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

/// The options of the growth fit, shared with `lamella stability --run`.
#[derive(Debug, clap::Args)]
pub struct FitArgs {
    /// Fit window START,END (s) [default: chosen from the data, see `lamella growth --help`];
    /// refused if it starts inside the start-up or reaches under 3 times the noise floor.
    #[arg(long, value_name = "START,END")]
    pub window: Option<String>,
    /// Smallest R² of ln(amplitude) against time, in (0, 1] (common practice: 0.98).
    #[arg(long, value_name = "R2", value_parser = super::values::r_squared, default_value_t = DEFAULT_MIN_R2)]
    pub min_r2: f64,
    /// How long the base flow takes to settle (s); no fit starts before it [default: from the
    /// case, 0 when it starts from the steady profile].
    #[arg(long, value_name = "SECONDS", value_parser = super::values::time)]
    pub start_up: Option<f64>,
}

impl FitArgs {
    /// Whether any option differs from its default.
    pub fn given(&self) -> bool {
        self.window.is_some() || self.start_up.is_some() || self.min_r2 != DEFAULT_MIN_R2
    }

    /// The fit settings these options ask for; a `--window` that is not START,END with
    /// START < END is bad input.
    pub fn settings(&self) -> Result<FitSettings, Failure> {
        let window = match self.window.as_deref() {
            None => Window::Automatic,
            Some(text) => match parse_list::<f64>(text, "--window").map_err(Failure::BadInput)?[..]
            {
                [start, end] if start < end => Window::Times { start, end },
                _ => {
                    return Err(Failure::BadInput(format!(
                        "--window {text}: give START,END in seconds with START < END"
                    )));
                }
            },
        };
        Ok(FitSettings {
            window,
            min_r_squared: self.min_r2,
            start_up: self.start_up,
        })
    }
}

/// One line on the wave period T = 2π/(k|c|) and the growth rate over each whole period of the
/// window (with the difference from `predicted`, 1/s, when given): the rate of a simulated
/// wave can change from one period to the next, and one number hides that.
pub fn period_line(measured: &Measurement, fit: &ModeFit, predicted: Option<f64>) -> String {
    let rates = growth::period_rates(&measured.mode_series(), fit);
    let head = format!(
        "wave period {:.4} s; the window spans {:.2} periods",
        fit.wave_period,
        fit.periods()
    );
    if rates.is_empty() {
        return format!(
            "{head}: too short to tell whether the rate changes from one period to the next \
             (run at least two periods)"
        );
    }
    let listed: Vec<String> = rates
        .iter()
        .map(|p| match predicted {
            Some(theory) => format!("{:.3} ({:+.1} %)", p.rate, 100.0 * (p.rate / theory - 1.0)),
            None => format!("{:.3}", p.rate),
        })
        .collect();
    format!(
        "{head}; growth rate over each whole period: {} 1/s",
        listed.join(", ")
    )
}

/// Amplitude against time on a log axis, with the noise floor, the fitted exponential over the
/// window and, when given, the exponential of a predicted rate (1/s) from the fitted amplitude
/// at the start of the window to the end of the record.
pub fn growth_chart(title: &str, measured: &Measurement, predicted: Option<f64>) -> Chart {
    // The noise floor of a seeded lattice starts near zero; drawn from there it would stretch
    // the log axis over decades the amplitude never visits, so only the part above 1/1000 of
    // the smallest amplitude is drawn.
    let smallest = measured
        .amplitude
        .iter()
        .copied()
        .filter(|a| *a > 0.0)
        .fold(f64::INFINITY, f64::min);
    let (floor_time, floor): (Vec<f64>, Vec<f64>) = measured
        .time
        .iter()
        .zip(&measured.noise)
        .filter(|&(_, &n)| n >= 1e-3 * smallest)
        .map(|(&t, &n)| (t, n))
        .unzip();
    let mut series = vec![
        Series {
            label: "mode amplitude".into(),
            x: measured.time.clone(),
            y: measured.amplitude.clone(),
            style: Style::Points,
        },
        Series {
            label: "noise floor".into(),
            x: floor_time,
            y: floor,
            style: Style::Line,
        },
    ];
    let mut heading = format!("{title}: no fit");
    if let Ok(fit) = &measured.fit {
        let inside: Vec<f64> = measured
            .time
            .iter()
            .copied()
            .filter(|&t| t >= fit.start && t <= fit.end)
            .collect();
        series.push(Series {
            label: format!("fit, {} 1/s", with_uncertainty(fit.rate, fit.rate_ci95)),
            x: inside.clone(),
            y: inside.iter().map(|&t| fit.amplitude(t)).collect(),
            style: Style::Dashed,
        });
        heading = format!("{title}: growth rate {} 1/s", significant(fit.rate, 3));
        if let Some(rate) = predicted {
            let anchor = fit.amplitude(fit.start);
            let (x, y): (Vec<f64>, Vec<f64>) = measured
                .time
                .iter()
                .filter(|&&t| t >= fit.start)
                .map(|&t| (t, anchor * (rate * (t - fit.start)).exp()))
                .unzip();
            series.push(Series {
                label: format!("theory, {} 1/s", significant(rate, 4)),
                x,
                y,
                style: Style::Line,
            });
            heading = format!("{title}: measured against predicted growth");
        }
    }
    Chart {
        title: heading,
        x_label: "time (s)".into(),
        y_label: "interface mode amplitude (m)".into(),
        log_x: false,
        log_y: true,
        series,
    }
}

/// Largest particle count `check` and `sweep check` generate to count exactly; above it, counts are estimated.
const COUNT_BY_GENERATION_LIMIT: f64 = 2.0e7;

/// Particle counts of a case.
pub(crate) struct Counts {
    /// Fluid particles per phase.
    pub per_phase: Vec<usize>,
    /// Wall particles.
    pub walls: usize,
    /// Lattice sites no region covers.
    pub uncovered: usize,
    /// False when the counts are estimated from the lattice size (very large cases).
    pub exact: bool,
}

impl Counts {
    /// All particles, fluid and wall.
    pub fn total(&self) -> usize {
        self.per_phase.iter().sum::<usize>() + self.walls
    }
}

/// Generates the particles of a validated case in its dimension.
pub(crate) fn generate_counted(case: &Case) -> (Counts, usize) {
    fn counted<V: lamella_cells::Vector>(case: &Case, g: &Generated<V>) -> Counts {
        Counts {
            per_phase: g.fluid_count_per_phase(case.phases.len()),
            walls: g.wall_count(),
            uncovered: g.uncovered_sites,
            exact: true,
        }
    }
    if case.dimension == 3 {
        let g = generate::<DVec3>(case);
        (counted(case, &g), g.len())
    } else {
        let g = generate::<DVec2>(case);
        (counted(case, &g), g.len())
    }
}

pub(crate) fn counts(case: &Case) -> Counts {
    let sites: f64 = case.lattice_counts().iter().map(|&n| n as f64).product();
    if sites <= COUNT_BY_GENERATION_LIMIT {
        return generate_counted(case).0;
    }
    // Too many to generate for a check: all fluid in phase 0's count, walls from the box faces.
    let dx = case.particles.spacing;
    let walls: f64 = case
        .walls
        .iter()
        .map(|w| {
            let axis = w.side.axis().index();
            f64::from(w.layers) * sites * dx / case.extent(axis)
        })
        .sum();
    let mut per_phase = vec![0; case.phases.len()];
    per_phase[0] = sites as usize;
    Counts {
        per_phase,
        walls: walls as usize,
        uncovered: 0,
        exact: false,
    }
}

/// The factor by which the expected peak speed may differ from a channel's steady peak before
/// `check` and `sweep check` warn.
const SPEED_MISMATCH: f64 = 2.0;

/// A warning when a channel's drive (body force or wall speed) and viscosities give a steady
/// peak speed far from `scales.expected_max_speed`, from which the sound speed and with it the
/// time step are derived: a drive 1000 times too strong outruns them and the run goes bad.
pub(crate) fn drive_warning(case: &Case) -> Option<String> {
    let reference = channel_reference(case)?;
    let peak = reference.steady_peak_speed();
    let expected = case.scales.expected_max_speed;
    let ratio = peak / expected;
    if !(peak > 0.0 && expected > 0.0) || (1.0 / SPEED_MISMATCH..=SPEED_MISMATCH).contains(&ratio) {
        return None;
    }
    let drive = if case.body_force_magnitude() > 0.0 {
        "body_force (per unit mass, m/s²)"
    } else {
        "wall speed"
    };
    let consequence = if ratio > 1.0 {
        "the sound speed and the time step follow the expected speed, so a flow this much \
         faster compresses the liquid and the run is likely to go bad"
    } else {
        "the sound speed follows the expected speed, so the run takes more steps than it needs"
    };
    Some(format!(
        "scales.expected_max_speed: {} m/s, but this channel's {drive} and viscosities give a \
         steady peak speed of {} m/s, {}× {} ({}); {consequence}. Set expected_max_speed to \
         about {} m/s, or check the {drive} and the viscosities",
        significant4(expected),
        significant4(peak),
        significant4(ratio.max(1.0 / ratio)),
        if ratio > 1.0 { "faster" } else { "slower" },
        reference.name(),
        significant4(peak)
    ))
}

fn significant4(x: f64) -> String {
    significant(x, 4)
}
