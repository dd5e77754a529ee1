//! Student-t quantiles (placeholder, filled below).
