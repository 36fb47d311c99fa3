//! The `pavestrat` binary: everything lives in the library; see `pavestrat::cli`.

fn main() -> std::process::ExitCode {
    std::process::ExitCode::from(pavestrat::cli::main(std::env::args_os()))
}
