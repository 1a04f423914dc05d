//! How the C library's allocator treats freed memory (glibc on Linux; elsewhere nothing changes).
//!
//! Loading a level and building its ray index allocate and free many buffers of one to tens of
//! megabytes. By default glibc hands such a block back to the system when it is freed (blocks over
//! its mmap threshold are unmapped, and the heap is trimmed as soon as 128 KiB lie free at its top),
//! so the next buffer of that size is faulted in again, page by page, and a page fault costs several
//! microseconds on a virtual machine. Kept for reuse instead, they are not: `plumbline info` on the
//! 1M-triangle benchmark level went from 52,600 page faults to 26,700 and from 0.30–0.32 s to 0.26 s,
//! a 200,000-ray check from 91,000 faults to 69,000–73,000, with the same peak memory (README).

/// Blocks up to 32 MiB (glibc's own ceiling for the threshold it adjusts by itself) come from the
/// heap, and up to 256 MiB may lie free at the heap's top before it is trimmed. Called first thing,
/// before any thread starts.
#[cfg(all(target_os = "linux", target_env = "gnu"))]
pub fn keep_freed_memory() {
    const MMAP_THRESHOLD: libc::c_int = 32 << 20;
    const TRIM_THRESHOLD: libc::c_int = 256 << 20;
    // SAFETY: `mallopt` sets two of the allocator's parameters under the allocator's own lock and
    // touches no memory of ours. A refused setting (it returns 0) leaves glibc's default: fine.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, MMAP_THRESHOLD);
        libc::mallopt(libc::M_TRIM_THRESHOLD, TRIM_THRESHOLD);
    }
}

/// Nothing to change outside glibc.
#[cfg(not(all(target_os = "linux", target_env = "gnu")))]
pub fn keep_freed_memory() {}
