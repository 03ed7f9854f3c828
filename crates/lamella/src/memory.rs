//! Heap use of the process, counted by the `peak_alloc` global allocator (a thin counter
//! over the system allocator), so `lamella bench` and `lamella estimate` report measured
//! bytes rather than estimates. The counts are heap bytes requested by the program; the
//! resident size the operating system reports also holds the code, stacks and allocator slack.

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

/// Held by the tests that measure the heap, so that they do not run at the same time.
#[cfg(test)]
pub(crate) static MEASURING: std::sync::Mutex<()> = std::sync::Mutex::new(());

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_large_allocation_raises_the_peak_by_its_size() {
        let _measuring = MEASURING.lock().unwrap_or_else(|e| e.into_inner());
        reset_peak();
        let before = peak_bytes();
        let block = vec![1u8; 64 << 20];
        std::hint::black_box(&block);
        let during = peak_bytes();
        drop(block);
        // Other test threads allocate too, so only a lower bound is certain.
        assert!(during >= before + (64 << 20), "{before} -> {during}");
    }
}
