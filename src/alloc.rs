//! Memory settings of the process, applied by the command-line tool (and the benchmarks) at
//! start: with glibc, blocks of 128 KiB and more are always taken from and returned to the
//! system (`mallopt(M_MMAP_THRESHOLD, 128 KiB)`).
//!
//! Why: glibc raises that threshold by itself, up to 32 MiB, each time a large block is freed;
//! from then on the many arrays of 0.1–32 MiB of a large run (multigrid levels, post-processing
//! fields, file buffers) come from the heap, and the heap keeps what they free, so the peak
//! memory of a 10⁶-triangle solve was 780–880 MiB. With the threshold fixed it is 615–620 MiB
//! (README "Performance"). Results do not change: only where memory comes from.
//!
//! Elsewhere (other C libraries, other systems) this is a no-op.

/// Fixes the mmap threshold (see the module documentation). Call once at the start of the
/// process, before any large allocation; calling it again is harmless.
pub fn fix_mmap_threshold() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    {
        // glibc's mallopt parameter number for the mmap threshold (malloc.h).
        const M_MMAP_THRESHOLD: i32 = -3;
        unsafe extern "C" {
            fn mallopt(param: i32, value: i32) -> i32;
        }
        // SAFETY: mallopt is glibc's documented, thread-safe tuning call; it takes two ints
        // and only changes the allocator's policy for later allocations. A failure (return 0)
        // leaves the default policy, which is correct, only larger.
        let _ = unsafe { mallopt(M_MMAP_THRESHOLD, 128 * 1024) };
    }
}
