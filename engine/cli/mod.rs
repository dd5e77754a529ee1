//! The command line: argument parsing, and the one place errors are rendered.

/// Runs the command line and returns the process exit code.
pub fn run() -> i32 {
    eprintln!("foothold: not yet implemented");
    2
}
