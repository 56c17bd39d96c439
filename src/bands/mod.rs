//! Band deconvolution in wavenumber space.
pub mod lm;
pub mod shapes;
pub mod stats;
