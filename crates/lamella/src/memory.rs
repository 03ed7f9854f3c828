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

/// The machine's physical memory in bytes (`MemTotal` of `/proc/meminfo` on Linux); `None`
/// where the system does not say, and then no memory check is made.
pub fn machine_bytes() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    meminfo_total(&text)
}

/// `MemTotal` of a `/proc/meminfo` text, in bytes (the file gives kB, meaning KiB; see
/// proc(5) of the Linux man-pages).
fn meminfo_total(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("MemTotal:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    kib.checked_mul(1024)
}

/// Held by the tests that measure the heap, so that they do not run at the same time.
#[cfg(test)]
pub(crate) static MEASURING: std::sync::Mutex<()> = std::sync::Mutex::new(());

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn meminfo_total_is_read_in_bytes() {
        // The first lines of /proc/meminfo as proc(5) shows them.
        let text = "MemTotal:       23986124 kB\nMemFree:         1234567 kB\n";
        assert_eq!(meminfo_total(text), Some(23_986_124 * 1024));
        assert_eq!(meminfo_total("MemFree: 1 kB\n"), None);
        if cfg!(target_os = "linux") {
            assert!(machine_bytes().is_some_and(|b| b > 1 << 20));
        }
    }

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
