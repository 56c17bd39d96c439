//! ddlens: a ligand-field analysis workbench for d–d absorption spectra.
//!
//! The numeric core (every module here except `web`) is plain Rust: it never
//! imports wasm-bindgen, web-sys or js-sys, and runs under `cargo test`.
//! See DEVELOPERS.md for the code map and the invariants.

pub mod analysis;
pub mod bands;
pub mod estimate;
pub mod figures;
pub mod ions;
pub mod lf_fit;
pub mod ligand_field;
pub mod preprocess;
pub mod solver;
pub mod spectrum;
pub mod stats;

#[cfg(target_arch = "wasm32")]
pub mod web;

/// The program version, as in Cargo.toml.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
