//! The `loopwright` binary: a thin shell over [`loopwright::cli`].

fn main() {
    keep_freed_memory();
    std::process::exit(loopwright::cli::main_with_args(std::env::args_os()));
}

/// A design builds and drops hundreds of path buffers, the full-fidelity ones over a megabyte.
/// glibc maps each buffer over 128 kB afresh and returns freed heap tops to the kernel, so every
/// evaluation faulted its pages in again (about a fifth of a whole `design` process). Keep freed
/// memory in the heap for reuse instead: the peak resident set is unchanged (it is the peak of
/// what is live), only the faults go.
#[cfg(all(target_os = "linux", target_env = "gnu"))]
fn keep_freed_memory() {
    const ONE_GIB: libc::c_int = 1 << 30;
    // SAFETY: mallopt only sets allocator parameters; it is called before any other thread
    // exists. A refusal (return 0) leaves glibc's defaults, which are only slower.
    unsafe {
        libc::mallopt(libc::M_MMAP_THRESHOLD, ONE_GIB);
        libc::mallopt(libc::M_TRIM_THRESHOLD, ONE_GIB);
    }
}

#[cfg(not(all(target_os = "linux", target_env = "gnu")))]
fn keep_freed_memory() {}
