//! The `pavestrat` binary: the command line, one module per subcommand (`cli`); the work is the
//! library's (`pavestrat`).

#![deny(clippy::float_cmp)]

mod cli;

fn main() -> std::process::ExitCode {
    std::process::ExitCode::from(cli::main(std::env::args_os()))
}
