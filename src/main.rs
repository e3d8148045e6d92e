//! The `tidemark` binary: all behaviour lives in the library's `cli` module.

/// The analysis allocates many small, short-lived values per note; mimalloc serves them
/// with less locking and fragmentation than the system allocator, on every thread.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() {
    std::process::exit(tidemark::cli::run());
}
