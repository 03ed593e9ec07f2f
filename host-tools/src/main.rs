//! `semidrift`: the calibration-station command line.

fn main() {
    std::process::exit(host_tools::cli::main());
}
