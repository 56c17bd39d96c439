//! Spectrum import, units and preprocessing. (Being built.)
