//! Band deconvolution in wavenumber space. (Being built.)
