//! The `ddlens` command line: a thin face over the library's engines.
fn main() {
    std::process::exit(ddlens::cli::main(std::env::args().skip(1).collect()));
}
