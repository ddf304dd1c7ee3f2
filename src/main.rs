//! The `lacuna` binary: everything happens in the library.

/// mimalloc frees memory allocated on another thread cheaply; checking a
/// large file allocates on the worker threads and frees on the reporting one.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    lacuna::app::cli::main()
}
