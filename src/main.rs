//! The `ddlens` command line: a thin face over the library's engines.
fn main() {
    // `ddlens levels | head` closes stdout early; end quietly instead of panicking.
    let default_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        if info.to_string().contains("Broken pipe") {
            std::process::exit(0);
        }
        default_hook(info);
    }));
    std::process::exit(ddlens::cli::main(std::env::args().skip(1).collect()));
}
