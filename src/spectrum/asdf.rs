//! ASDF. (Being built.)
