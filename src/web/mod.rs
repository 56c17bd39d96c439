//! The browser facade: the only code compiled with wasm-bindgen. (Being built.)
