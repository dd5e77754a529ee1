//! Multistart global search: candidates, parallel refinement, clustering of
//! minima and their ranking by convergence.
