//! A dataset: what one pseudo-experiment (or the Asimov dataset) observes.

/// Observed counts per bin (all channels concatenated, in model order) and one
/// global observable per constraint term (in model order).
#[derive(Debug, Clone, PartialEq)]
pub struct Dataset {
    pub counts: Vec<f64>,
    pub global_observables: Vec<f64>,
}
