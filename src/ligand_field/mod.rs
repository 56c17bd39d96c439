//! Exact dⁿ energy levels in cubic (octahedral and tetrahedral) fields. (Being built.)
