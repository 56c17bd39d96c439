//! The `ddlens` command line: a thin face over the library's engines.
//!
//! The command line lives in this binary only (`src/cli/`); the library and
//! its wasm build do not contain it.

mod cli;

fn main() {
    std::process::exit(cli::main(&std::env::args().skip(1).collect::<Vec<_>>()));
}
