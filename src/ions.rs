//! Ions, their dⁿ configurations and free-ion Racah parameters with sources. (Being built.)
