//! Command-line interface of `semidrift` (a thin layer over the library).

/// Runs the command line with the process arguments and returns the exit code:
/// 0 on success, 1 when a check fails, 2 on bad input or usage.
pub fn main() -> i32 {
    0
}
