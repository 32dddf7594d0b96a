//! Expected exclusion: the CLs upper limit on the signal strength mu expected
//! if there is no signal, asymptotically and from background-only
//! pseudo-experiments.

mod cls;
mod exact;
mod expected;

pub use cls::{asymptotic_cls, exclusion_threshold, expected_limit_significance};
pub use exact::{poisson_cdf, poisson_cls, poisson_upper_limit};
pub use expected::{AsymptoticLimits, asymptotic_limits, toy_limit_ensemble};
