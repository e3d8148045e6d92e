//! The `tidemark` binary: all behaviour lives in the library's `cli` module.

fn main() {
    std::process::exit(tidemark::cli::run());
}
