//! Ligand-field parameters from observed band maxima: assignment search and fit. (Being built.)
