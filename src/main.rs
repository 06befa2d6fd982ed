//! The `attest` binary: parse the command line, run, exit with a documented code.

fn main() {
    std::process::exit(attest::cli::main());
}
