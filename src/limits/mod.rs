//! Expected exclusion: the CLs upper limit on the signal strength mu expected
//! if there is no signal, asymptotically and from background-only
//! pseudo-experiments.

mod cls;
mod exact;
mod expected;

pub use cls::{asymptotic_cls, exclusion_threshold, expected_limit_significance};
pub use exact::{
    MAX_QUADRATURE_NODES, QUADRATURE_NODES, UncertainYield, poisson_cdf, poisson_cls,
    poisson_upper_limit, quadrature_nodes_for, standard_normal_nodes,
};
pub use expected::{
    AsymptoticLimits, asymptotic_limit_of, asymptotic_limits, asymptotic_median_limit,
    limit_ensemble, toy_limit_ensemble,
};
