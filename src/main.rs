//! The `cleave` binary: runs the command line and maps its outcome to the exit status.

use cleave::cli::{self, Outcome};

fn main() {
    let status = match cli::run(std::env::args_os()) {
        Outcome::Success => 0,
        Outcome::Infeasible => 1,
        Outcome::BadInput => 2,
    };
    std::process::exit(status);
}
