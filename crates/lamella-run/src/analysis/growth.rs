//! The growth of the interface mode a run recorded in `series.csv` (amplitude, phase and noise
//! floor of the tracked interface's Fourier mode at the seeded wavelength), fitted by
//! [`lamella_post::growth::fit_mode`].

use std::path::PathBuf;

use lamella_case::Case;
use lamella_post::growth::{
    self, FitOptions, GrowthError, ModeFit, ModeSeries, Window, linear_amplitude_limit,
};

use super::AnalysisError;
use super::folder::read_columns;
use crate::output::RunFolder;

/// Smallest R² of ln A against t (common practice: 0.98).
pub const DEFAULT_MIN_R2: f64 = 0.98;

/// The `series.csv` columns the fit reads: time, and the recorded mode of the interface.
pub const COLUMNS: [&str; 4] = [
    "time_s",
    "interface_mode_amplitude_m",
    "interface_mode_phase_rad",
    "interface_noise_m",
];

/// How to fit the growth of a recorded mode.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FitSettings {
    /// The fit window, or [`Window::Automatic`].
    pub window: Window,
    /// Smallest R² of ln(amplitude) against time, in (0, 1].
    pub min_r_squared: f64,
    /// How long the base flow takes to settle (s); `None`: [`Case::start_up_time`].
    pub start_up: Option<f64>,
}

impl Default for FitSettings {
    fn default() -> Self {
        Self {
            window: Window::Automatic,
            min_r_squared: DEFAULT_MIN_R2,
            start_up: None,
        }
    }
}

/// The recorded mode of a run and the fit of its growth.
pub struct Measurement {
    /// `series.csv` of the run.
    pub series: PathBuf,
    /// Sample times (s).
    pub time: Vec<f64>,
    /// Mode amplitude (m).
    pub amplitude: Vec<f64>,
    /// Unwrapped mode phase (rad).
    pub phase: Vec<f64>,
    /// Noise floor (m).
    pub noise: Vec<f64>,
    /// Wavelength of the recorded mode (m).
    pub wavelength: f64,
    /// End of the start-up used (s).
    pub start_up: f64,
    /// Whether the settings gave the start-up (otherwise it is the case's).
    pub start_up_given: bool,
    /// Whether the settings gave the window (otherwise it was chosen from the data).
    pub window_given: bool,
    /// The fit, or why there is none.
    pub fit: Result<ModeFit, GrowthError>,
}

impl Measurement {
    /// The recorded mode as the fit reads it.
    pub fn mode_series(&self) -> ModeSeries<'_> {
        ModeSeries {
            time: &self.time,
            amplitude: &self.amplitude,
            phase: &self.phase,
            noise: &self.noise,
        }
    }
}

/// Reads the recorded mode of the run in `folder` (case copy `case`) and fits its growth. The
/// error is bad input (no interface, no recorded mode, bad settings); a refusal of the fit is
/// in [`Measurement::fit`].
pub fn measure(
    folder: &RunFolder,
    case: &Case,
    settings: &FitSettings,
) -> Result<Measurement, AnalysisError> {
    let bad = AnalysisError::BadInput;
    let case_path = folder.case();
    let Some(pair) = case.tracked_interface() else {
        return Err(bad(format!(
            "{}: the case has no interface between two layers, so there is no interface mode to \
             fit",
            case_path.display()
        )));
    };
    let start_up = settings.start_up.unwrap_or_else(|| case.start_up_time());
    let series = folder.series();
    let listed = case
        .output
        .analyses
        .contains(&lamella_case::Analysis::InterfaceAmplitude);
    let hint = if listed {
        format!(
            "the run did not record the interface mode although {} lists InterfaceAmplitude \
             (a run made by an older Lamella?); run the case again",
            case_path.display()
        )
    } else {
        format!(
            "the run did not record the interface mode: add InterfaceAmplitude to \
             output.analyses in {} and run the case again",
            case_path.display()
        )
    };
    let columns = read_columns(&series, &COLUMNS, &hint)?;
    let [time, amplitude, phase, noise] = <[Vec<f64>; 4]>::try_from(columns)
        .map_err(|_| bad(format!("{}: columns missing", series.display())))?;
    if time.is_empty() {
        return Err(bad(format!("{} holds no samples yet", series.display())));
    }
    let wavelength = case.tracked_wavelength();
    let wavenumber = growth::wavenumber(wavelength);
    let bands = case.layer_bands();
    let tol = 1e-9 * case.extent(1);
    let thinner = bands
        .iter()
        .filter(|b| {
            (b.top - pair.interface).abs() <= tol || (b.bottom - pair.interface).abs() <= tol
        })
        .map(|b| b.top - b.bottom)
        .fold(f64::INFINITY, f64::min);
    let options = FitOptions {
        wavenumber,
        start_up,
        min_r_squared: settings.min_r_squared,
        linear_limit: linear_amplitude_limit(wavenumber, thinner),
        window: settings.window,
    };
    let result = growth::fit_mode(
        &ModeSeries {
            time: &time,
            amplitude: &amplitude,
            phase: &phase,
            noise: &noise,
        },
        &options,
    );
    if let Err(GrowthError::Malformed(why) | GrowthError::InvalidOption(why)) = &result {
        return Err(bad(format!("{}: {why}", series.display())));
    }
    let phase = growth::unwrap_phase(&phase);
    Ok(Measurement {
        series,
        time,
        amplitude,
        phase,
        noise,
        wavelength,
        start_up,
        start_up_given: settings.start_up.is_some(),
        window_given: settings.window != Window::Automatic,
        fit: result,
    })
}
