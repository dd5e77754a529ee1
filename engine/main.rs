//! The `foothold` command: everything lives in the library; errors are rendered once, here.

fn main() {
    std::process::exit(foothold::cli::run());
}
