//! The C library allocator's settings for the command (process-wide; call once at startup).
//!
//! The films job and the process check allocate and drop film-sized bitmaps (megabytes
//! each) on several threads while the sheets are written. By default the GNU C library
//! serves blocks that large with fresh memory mappings and hands them back to the kernel
//! when freed, so every bitmap is faulted in and zeroed page by page again, and the threads'
//! page faults slow each other down: on the bench board the sheets took twice as long beside
//! the check as alone. Keeping such blocks in the heap lets freed bitmaps be reused; the
//! peak memory stays what it was (`cargo bench --bench films`).

/// Blocks up to this size come from the heap rather than their own mapping.
#[cfg(all(target_os = "linux", target_env = "gnu"))]
const MMAP_THRESHOLD: i32 = 256 << 20;
/// Free memory kept at the top of the heap before it is handed back to the kernel.
#[cfg(all(target_os = "linux", target_env = "gnu"))]
const TRIM_THRESHOLD: i32 = 1 << 30;

/// Asks the allocator to keep freed large blocks for reuse (GNU C library on Linux; does
/// nothing elsewhere). Results never depend on it.
pub fn keep_freed_memory() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: mallopt only sets the allocator's parameters (mallopt(3)); called before the
    // program starts other threads.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, MMAP_THRESHOLD);
        libc::mallopt(libc::M_TRIM_THRESHOLD, TRIM_THRESHOLD);
    }
}
