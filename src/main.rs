//! The `airledger` binary: parses the command line and hands over to the library.

fn main() -> std::process::ExitCode {
    bounded_heap();
    airledger::cli::main()
}

/// glibc's malloc raises its mmap threshold each time a large block is freed, after which the
/// analysis' multi-megabyte vectors come from per-thread arenas that keep their pages: the server's
/// peak RSS then grows with every summary worked out on another thread (93-100 MB after the bench's
/// reports, against 60 MB with this). A fixed threshold of 256 kB (which also stops the adjustment,
/// mallopt(3)) hands every large block straight back to the system when it is freed.
///
/// glibc also gives each thread that meets a locked arena a new one, up to eight per core, and each
/// keeps its freed small blocks: under a mix of parallel uploads, summaries and reports the server
/// reached 69 MiB peak RSS with the default against 52 MiB with two arenas (one per core of the
/// target machine; the threads that allocate in bursts are the parse, encode and analysis threads,
/// which the import slots and summary locks already bound, so contention on two arenas is small).
#[cfg(all(target_os = "linux", target_env = "gnu"))]
#[allow(unsafe_code)]
fn bounded_heap() {
    // SAFETY: mallopt only sets an allocator parameter; it is called before any other thread runs.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, 256 * 1024);
        libc::mallopt(libc::M_ARENA_MAX, 2);
    }
}

#[cfg(not(all(target_os = "linux", target_env = "gnu")))]
fn bounded_heap() {}
