//! Durability statistics of a time history: streaming moments and extremes,
//! distributions and histograms, level crossings and rainflow cycle counts
//! (ASTM E1049-85).
