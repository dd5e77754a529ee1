//! Feature detectors on the data and its transformed views: plateaus,
//! intercepts, straight segments, peaks, periods, monotonicity and sign.
