//! The `lacuna` binary: everything happens in the library.

fn main() -> std::process::ExitCode {
    lacuna::cli::main()
}
