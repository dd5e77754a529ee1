//! Starting values when none are given with `--start`: the one hook through
//! which the commands reach inference (and, later, the multistart search).
//!
//! LEAD: wire `crate::infer::infer` (and the search) in here; every command
//! (`fit`, `fit --by`, `infer`, `report`) and `api::fit` call only this.

use crate::error::Error;
use crate::fit::problem::Problem;

/// Starting values for every parameter of `problem`, in parameter order.
/// Not available yet: returns a usage error that tells how to give them.
pub fn starts_for(problem: &Problem) -> Result<Vec<f64>, Error> {
    let params = &problem.model.params;
    let example = params
        .iter()
        .map(|p| format!("{p}=1"))
        .collect::<Vec<_>>()
        .join(",");
    Err(Error::Usage(format!(
        "no starting values given: inference is not available yet, so give one for every parameter with --start, e.g. --start {example} (parameters: {})",
        params.join(", ")
    )))
}
