//! The whole analysis in one function: import → preprocessing → bands → assignment → fit. (Being built.)
