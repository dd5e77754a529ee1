//! The `foothold` command: a thin edge over the engine (`foothold`) and the
//! report (`foothold_report`); errors are rendered once, here.

mod cli;

fn main() {
    std::process::exit(cli::run());
}
