//! The `lamella` binary: a thin shell over the `lamella` library.

fn main() -> std::process::ExitCode {
    lamella::cli::main()
}
