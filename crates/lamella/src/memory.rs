//! Heap use of the process, counted by the `peak_alloc` global allocator (a thin counter
//! over the system allocator), so `lamella bench` and `lamella estimate` report measured
//! bytes rather than estimates. The counts are heap bytes requested by the program; the
//! resident size the operating system reports also holds the code, stacks and allocator slack.

use lamella_run::benchmark::HeapMeter;
use peak_alloc::PeakAlloc;

#[global_allocator]
static COUNTING_ALLOCATOR: PeakAlloc = PeakAlloc;

/// Heap bytes in use now.
pub fn current_bytes() -> usize {
    COUNTING_ALLOCATOR.current_usage()
}

/// The most heap bytes in use at once since the start or the last [`reset_peak`].
pub fn peak_bytes() -> usize {
    COUNTING_ALLOCATOR.peak_usage()
}

/// Starts a new peak measurement from the heap in use now.
pub fn reset_peak() {
    COUNTING_ALLOCATOR.reset_peak_usage();
}

/// The counting allocator seen by the library's benchmark ([`lamella_run::benchmark`]).
pub struct Counter;

impl HeapMeter for Counter {
    fn current_bytes(&self) -> usize {
        current_bytes()
    }
    fn peak_bytes(&self) -> usize {
        peak_bytes()
    }
    fn reset_peak(&self) {
        reset_peak();
    }
}

/// Held by the tests that measure the heap, and by the tests of this binary that allocate and
/// free much (stability solves), so that none runs while the heap is measured.
#[cfg(test)]
pub(crate) static MEASURING: std::sync::Mutex<()> = std::sync::Mutex::new(());

#[cfg(test)]
mod tests {
    use super::*;
    use lamella_run::benchmark::{standard_case, time_steps};

    #[test]
    fn a_large_allocation_raises_the_peak_by_its_size() {
        let _measuring = MEASURING.lock().unwrap_or_else(|e| e.into_inner());
        reset_peak();
        let block = vec![1u8; 64 << 20];
        std::hint::black_box(&block);
        let during = peak_bytes();
        drop(block);
        // The block is in use when the peak is read, so the peak holds at least its size
        // whatever other test threads allocate or free meanwhile (the thread-local buffers of
        // the stability solves are freed when their threads end, after any lock is released).
        assert!(
            during >= 64 << 20,
            "peak {during} bytes with a 64 MiB block in use"
        );
    }

    #[test]
    fn timing_reports_steps_and_memory() {
        let _measuring = MEASURING.lock().unwrap_or_else(|e| e.into_inner());
        let case = standard_case(1_000).unwrap();
        let timing = time_steps::<glam::DVec2>(&case, 3, 2, &Counter).unwrap();
        assert_eq!(timing.seconds_per_step.len(), 2);
        assert!(timing.particles > 1_000);
        assert!(timing.mean_time_step > 0.0);
        // The particle arrays alone hold more than 100 bytes per particle.
        assert!(timing.peak_bytes_per_particle() > 100.0);
    }

    #[test]
    fn measured_memory_agrees_with_the_case_estimate() {
        let _measuring = MEASURING.lock().unwrap_or_else(|e| e.into_inner());
        let case = standard_case(20_000).unwrap();
        let timing = time_steps::<glam::DVec2>(&case, 1, 1, &Counter).unwrap();
        let estimate = lamella_run::setup::heap_bytes_per_particle(&case) as f64;
        let measured = timing.peak_bytes_per_particle();
        // Set-up transients and other test threads' allocations only add to the peak.
        assert!(
            measured > 0.95 * estimate && measured < 1.25 * estimate,
            "measured {measured:.0} B/particle, estimated {estimate}"
        );
    }
}
