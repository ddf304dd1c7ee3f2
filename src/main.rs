//! The `lacuna` binary: the command line and the workbench, doorways over
//! the library. They live in this crate, not the library's, so nothing of
//! theirs is part of the library's interface.

mod app;

/// mimalloc frees memory allocated on another thread cheaply; checking a
/// large file allocates on the worker threads and frees on the reporting one.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> std::process::ExitCode {
    app::cli::main()
}
