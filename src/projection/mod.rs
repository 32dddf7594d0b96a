//! Projection: the exposure scan, quantiles and days to each target.

mod result;

pub use result::{DaysToTarget, ExposurePoint, Projection, TargetProbability};
