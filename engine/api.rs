//! The library surface: fit, infer and rank on in-memory columns.
