//! Work that runs beside the critical path of the films job at a lower priority.
//!
//! After the films are rendered, the sheets and the PDF (mostly one thread of compression)
//! and the process check with its proof picture (parallel) run at the same time. On a small
//! machine the check's threads would take turns with the sheets' thread and slow it down,
//! although the sheets are what the job waits for at the end. The check therefore runs on
//! its own thread pool whose threads ask the system for a lower priority (a higher nice
//! value; Linux keeps one per thread): the sheets keep a core, the check takes what is left
//! and both cores once the sheets are written. Results never depend on this.

/// Nice value of the background threads (0 is normal, 19 the lowest priority).
const BACKGROUND_NICE: i32 = 10;

/// Runs `f` on a pool of lower-priority threads, as many as rayon's own; on the caller's
/// pool when such a pool cannot be made.
pub fn in_background<T: Send>(f: impl FnOnce() -> T + Send) -> T {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(rayon::current_num_threads())
        .thread_name(|i| format!("umbra-check-{i}"))
        .start_handler(|_| lower_this_threads_priority())
        .build();
    match pool {
        Ok(pool) => pool.install(f),
        Err(_) => f(),
    }
}

/// Raises the calling thread's nice value; a failure only leaves the priority as it was.
fn lower_this_threads_priority() {
    #[cfg(target_os = "linux")]
    // SAFETY: gettid has no arguments and cannot fail; setpriority only reads its integer
    // arguments (setpriority(2): on Linux the nice value is a per-thread attribute, and
    // PRIO_PROCESS with a thread id sets that thread's own).
    unsafe {
        let tid = libc::syscall(libc::SYS_gettid) as libc::id_t;
        libc::setpriority(libc::PRIO_PROCESS, tid, BACKGROUND_NICE);
    }
}
