//! Range checks of command-line values, run by clap while it parses (`value_parser`): a value
//! out of range is refused with exit code 2 and a message naming the option and what would be
//! valid, before any work starts.

/// Heap bytes one benchmark particle needs, rounded up from the measured 272–280 (README,
/// Performance), for the memory check of `bench --particles`.
const BENCH_BYTES_PER_PARTICLE: f64 = 300.0;
/// Most grid nodes `mix --grid` accepts (each holds a volume fraction per phase and box counts).
pub const MAX_GRID_NODES: f64 = 1.0e7;
/// Most Chebyshev points per layer of `stability --points` (the solve is dense, cubic in them).
pub const MAX_STABILITY_POINTS: usize = 512;
/// Fewest Chebyshev points per layer the stability solver takes.
pub const MIN_STABILITY_POINTS: usize = 8;
/// Most bins of `profile --bins`.
pub const MAX_PROFILE_BINS: usize = 100_000;

fn number(text: &str) -> Result<f64, String> {
    text.trim()
        .parse::<f64>()
        .map_err(|_| format!("{text:?} is not a number"))
}

/// A finite real number (not NaN or infinite).
pub fn finite(text: &str) -> Result<f64, String> {
    let x = number(text)?;
    if x.is_finite() {
        Ok(x)
    } else {
        Err(format!("{text} is not a finite number"))
    }
}

/// A finite number greater than zero.
pub fn positive(text: &str) -> Result<f64, String> {
    let x = finite(text)?;
    if x > 0.0 {
        Ok(x)
    } else {
        Err(format!("{text} is not greater than zero"))
    }
}

/// A simulated time (s): finite and not negative.
pub fn time(text: &str) -> Result<f64, String> {
    let x = finite(text)?;
    if x >= 0.0 {
        Ok(x)
    } else {
        Err(format!("{text} is negative; give a time of 0 s or later"))
    }
}

/// A coefficient of determination floor: in (0, 1] (1 only for an exact fit; 0 would accept
/// any fit).
pub fn r_squared(text: &str) -> Result<f64, String> {
    let x = finite(text)?;
    if x > 0.0 && x <= 1.0 {
        Ok(x)
    } else {
        Err(format!(
            "{text} is not in (0, 1] (R² is at most 1, and a floor of 0 accepts any fit; 0.98 \
             is usual)"
        ))
    }
}

/// Calibration seconds of `estimate`: more than zero, at most a day.
pub fn calibration_seconds(text: &str) -> Result<f64, String> {
    let x = positive(text)?;
    if x <= 86_400.0 {
        Ok(x)
    } else {
        Err(format!(
            "{text} s is longer than a day; a few seconds are enough"
        ))
    }
}

fn count_in(text: &str, low: usize, high: usize) -> Result<usize, String> {
    let n: usize = text
        .trim()
        .parse()
        .map_err(|_| format!("{text:?} is not a whole number"))?;
    if (low..=high).contains(&n) {
        Ok(n)
    } else {
        Err(format!("{n} is not between {low} and {high}"))
    }
}

/// Chebyshev points per layer of `stability --points`.
pub fn stability_points(text: &str) -> Result<usize, String> {
    count_in(text, MIN_STABILITY_POINTS, MAX_STABILITY_POINTS)
}

/// Bins of `profile --bins`.
pub fn profile_bins(text: &str) -> Result<usize, String> {
    count_in(text, 1, MAX_PROFILE_BINS)
}

/// Parallel runs of `converge --jobs`.
pub fn jobs(text: &str) -> Result<usize, String> {
    count_in(text, 1, 256)
}

/// `mix --grid NX,NY[,NZ]`: whole positive counts whose product is at most
/// [`MAX_GRID_NODES`]. Kept as text: the run's dimension, known later, says how many.
pub fn grid(text: &str) -> Result<String, String> {
    let mut nodes = 1.0;
    for part in text.split(',') {
        let n: u32 = part.trim().parse().ok().filter(|&n| n > 0).ok_or_else(|| {
            format!("{part:?} is not a whole number of cells from 1 to 4294967295")
        })?;
        nodes *= f64::from(n);
    }
    if nodes > MAX_GRID_NODES {
        return Err(format!(
            "{text} makes {nodes:.3e} grid cells; at most {MAX_GRID_NODES:e} are allowed \
             (e.g. 200,100)"
        ));
    }
    Ok(text.to_string())
}

/// `bench --particles N,N,...`: counts from 100 to 1e8 that fit in this machine's memory.
pub fn bench_particles(text: &str) -> Result<String, String> {
    let total = lamella_run::feasibility::machine_bytes();
    for part in text.split(',') {
        let n = finite(part)?;
        if !(100.0..=1.0e8).contains(&n) {
            return Err(format!("{part} is not a count between 100 and 1e8"));
        }
        if let Some(total) = total
            && n * BENCH_BYTES_PER_PARTICLE > 0.8 * total as f64
        {
            return Err(format!(
                "{part} particles need about {:.1} GB, more than 80 % of this machine's \
                 {:.1} GB of memory; use fewer",
                n * BENCH_BYTES_PER_PARTICLE / 1e9,
                total as f64 / 1e9
            ));
        }
    }
    Ok(text.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn absurd_values_are_refused_and_ordinary_ones_kept() {
        assert!(finite("NaN").is_err() && finite("inf").is_err() && finite("1e400").is_err());
        assert_eq!(time("0.5"), Ok(0.5));
        assert!(time("-1").is_err() && time("nan").is_err());
        assert_eq!(r_squared("0.98"), Ok(0.98));
        assert!(r_squared("2").is_err() && r_squared("NaN").is_err());
        assert!(grid("4294967296,4294967296").is_err());
        assert!(grid("100000,100000").is_err());
        assert!(grid("0,10").is_err());
        assert_eq!(grid("200,100").as_deref(), Ok("200,100"));
        assert!(stability_points("100000").is_err() && stability_points("4").is_err());
        assert_eq!(stability_points("64"), Ok(64));
        assert!(profile_bins("100000000").is_err() && profile_bins("0").is_err());
        assert!(bench_particles("1e4,NaN").is_err() && bench_particles("1e9").is_err());
        assert!(bench_particles("1e4,1e5").is_ok());
    }
}
