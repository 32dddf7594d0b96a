//! Invented projections for the report tests: a hypothetical counting search,
//! not any real experiment. Only the report formatting is under test here, so
//! the toy quantiles, toy limits and toy p-values are made up around the
//! asymptotic curves, not simulated.

use crate::asymptotic::{p_value, probability_to_reach, significance};
use crate::limits::expected_limit_significance;
use crate::projection::{
    Calibration, DaysToExclusion, DaysToTarget, ExposurePoint, Projection, TargetProbability,
};
use crate::scenario::{Scenario, Spacing};

/// An invented Gaussian peak on a flat background in 40 bins, the scenario
/// behind the spectrum and binning report tests.
pub(crate) fn invented_peak() -> Scenario {
    Scenario::from_yaml(INVENTED_PEAK).expect("the invented peak scenario is valid")
}

/// The text of [`invented_peak`], for tests that add to it.
pub(crate) const INVENTED_PEAK: &str = "title: Invented peak\n\
     observable: {name: mass, unit: MeV, range: [0.0, 20.0], bin_width: 0.5}\n\
     signal: {events_per_day: 5.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}}\n\
     backgrounds:\n  - {name: flat, events_per_day: 40.0, shape: {flat: {}}}\n\
     plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n";

/// Two hand-written points and two targets. Point 1 carries no toy results and
/// the 5σ target is never reached (Z saturates at 4.5σ), to exercise nulls.
pub(crate) fn tiny() -> Projection {
    Projection {
        start: None,
        day_spacing: Spacing::Log,
        rate_stretches: Vec::new(),
        title: "Invented counting search".to_string(),
        seed: 7,
        toys: 200,
        targets: vec![3.0, 5.0],
        cl: None,
        calibration_toys: 0,
        scan: None,
        days_to_exclusion: DaysToExclusion::default(),
        solving_points: 6,
        at: Vec::new(),
        points: vec![
            ExposurePoint {
                days: 10.0,
                live_days: 8.0,
                signal: 16.0,
                background: 80.0,
                z_asimov: 1.75,
                channels: Vec::new(),
                z_asimov_band: [0.0, 0.75, 2.75, 3.75],
                z_median: Some(1.625),
                z_band: Some([0.125, 0.75, 2.5, 3.5]),
                probability: vec![
                    TargetProbability {
                        target: 3.0,
                        toys: Some(0.105),
                        asimov: 0.0885,
                    },
                    TargetProbability {
                        target: 5.0,
                        toys: Some(0.0),
                        asimov: 0.0005,
                    },
                ],
                failed_fits: 0,
                limit_median: None,
                limit_band: None,
                limit_asimov: None,
                limit_asimov_band: None,
                limit_failed_fits: 0,
                calibration: None,
                global: None,
            },
            ExposurePoint {
                days: 100.0,
                live_days: 80.0,
                signal: 160.0,
                background: 800.0,
                z_asimov: 3.875,
                channels: Vec::new(),
                z_asimov_band: [1.875, 2.875, 4.875, 5.875],
                z_median: None,
                z_band: None,
                probability: vec![
                    TargetProbability {
                        target: 3.0,
                        toys: None,
                        asimov: 0.8125,
                    },
                    TargetProbability {
                        target: 5.0,
                        toys: None,
                        asimov: 0.125,
                    },
                ],
                failed_fits: 2,
                limit_median: None,
                limit_band: None,
                limit_asimov: None,
                limit_asimov_band: None,
                limit_failed_fits: 0,
                calibration: None,
                global: None,
            },
        ],
        days_to_target: vec![
            DaysToTarget {
                target: 3.0,
                asimov_days: Some(41.5),
                median_days: Some(44.0),
                p50_days: Some(44.25),
                p90_days: Some(98.0),
                saturation_z: Some(4.5),
                global: None,
                withheld: Vec::new(),
            },
            DaysToTarget {
                target: 5.0,
                asimov_days: None,
                median_days: None,
                p50_days: None,
                p90_days: None,
                saturation_z: Some(4.5),
                global: None,
                withheld: Vec::new(),
            },
        ],
    }
}

/// Invented search: 2 signal and 10 background events per live day, 80% of
/// calendar days live, background known to `relative_uncertainty`.
struct InventedSearch {
    relative_uncertainty: f64,
    /// Confidence level of the expected limits; None for no limits.
    cl: Option<f64>,
    /// Background-only pseudo-experiments per point for the q0 calibration.
    calibration_toys: usize,
}

impl InventedSearch {
    const SIGNAL_PER_LIVE_DAY: f64 = 2.0;
    const BACKGROUND_PER_LIVE_DAY: f64 = 10.0;
    const LIVE_FRACTION: f64 = 0.8;

    /// Z_A with background uncertainty σ_b (Cowan et al., EPJC 71 (2011) 1554;
    /// G. Cowan, "Discovery sensitivity for a counting experiment with
    /// background uncertainty", 2012).
    fn z_asimov(&self, days: f64) -> f64 {
        let live_days = days * Self::LIVE_FRACTION;
        let s = Self::SIGNAL_PER_LIVE_DAY * live_days;
        let b = Self::BACKGROUND_PER_LIVE_DAY * live_days;
        let variance = (self.relative_uncertainty * b).powi(2);
        let first = (s + b) * ((s + b) * (b + variance) / (b * b + (s + b) * variance)).ln();
        let second = b * b / variance * (1.0 + variance * s / (b * (b + variance))).ln();
        (2.0 * (first - second)).sqrt()
    }

    /// s / (δ b): where Z_A saturates as exposure grows (common practice).
    fn saturation_z(&self) -> f64 {
        Self::SIGNAL_PER_LIVE_DAY / (self.relative_uncertainty * Self::BACKGROUND_PER_LIVE_DAY)
    }

    /// σ of the fitted signal strength, sqrt(b + (δ b)²) / s, for a counting
    /// search whose background is known to a relative δ (common practice).
    fn sigma_mu(&self, days: f64) -> f64 {
        let live_days = days * Self::LIVE_FRACTION;
        let s = Self::SIGNAL_PER_LIVE_DAY * live_days;
        let b = Self::BACKGROUND_PER_LIVE_DAY * live_days;
        (b + (self.relative_uncertainty * b).powi(2)).sqrt() / s
    }

    /// Asymptotic expected CLs limit on mu at N σ of the background-only
    /// distribution: σ (Φ⁻¹(1 − α Φ(N)) + N) (Cowan et al., EPJC 71 (2011)
    /// 1554, eqs. 88-89); N = 0 is the median.
    fn asymptotic_limit(&self, days: f64, alpha: f64, n_sigma: f64) -> f64 {
        self.sigma_mu(days) * expected_limit_significance(alpha, n_sigma)
    }

    /// Calendar days where `z(days)` reaches `target` within `[1, 1000]`, by bisection.
    fn days_to(z: impl Fn(f64) -> f64, target: f64) -> Option<f64> {
        let (mut low, mut high) = (1.0_f64, 1000.0_f64);
        if z(high) < target {
            return None;
        }
        for _ in 0..60 {
            let middle = (low * high).sqrt();
            if z(middle) < target {
                low = middle;
            } else {
                high = middle;
            }
        }
        Some(high)
    }

    /// 31 log-spaced calendar days from 1 to 1000.
    fn grid() -> impl Iterator<Item = f64> {
        (0..=30).map(|step| 10f64.powf(f64::from(step) / 10.0))
    }

    /// A point whose invented toy median sits 2% below Z_A with a slightly
    /// skewed band; with `toys` false it is Asimov-only.
    fn point(&self, days: f64, targets: &[f64], toys: bool) -> ExposurePoint {
        let live_days = days * Self::LIVE_FRACTION;
        let z_asimov = self.z_asimov(days);
        let z_median = 0.98 * z_asimov;
        let probability = targets
            .iter()
            .map(|&target| TargetProbability {
                target,
                toys: toys.then(|| probability_to_reach(z_median, target)),
                asimov: probability_to_reach(z_asimov, target),
            })
            .collect();
        let mut point = ExposurePoint {
            days,
            live_days,
            signal: Self::SIGNAL_PER_LIVE_DAY * live_days,
            background: Self::BACKGROUND_PER_LIVE_DAY * live_days,
            z_asimov,
            channels: Vec::new(),
            z_asimov_band: crate::asymptotic::significance_band(z_asimov),
            z_median: toys.then_some(z_median),
            z_band: toys.then(|| {
                [
                    (z_median - 1.9).max(0.0),
                    (z_median - 0.95).max(0.0),
                    z_median + 1.05,
                    z_median + 2.1,
                ]
            }),
            probability,
            failed_fits: if toys && days < 2.0 { 3 } else { 0 },
            limit_median: None,
            limit_band: None,
            limit_asimov: None,
            limit_asimov_band: None,
            limit_failed_fits: 0,
            calibration: (self.calibration_toys > 0).then(|| self.calibration(z_asimov)),
            global: None,
        };
        if let Some(cl) = self.cl {
            self.add_limits(&mut point, 1.0 - cl, toys);
        }
        point
    }

    /// Asymptotic limits, and invented toy limits: a median 2% above the
    /// asymptotic one and a band slightly narrower than the asymptotic band.
    fn add_limits(&self, point: &mut ExposurePoint, alpha: f64, toys: bool) {
        let days = point.days;
        let limit = |n_sigma| self.asymptotic_limit(days, alpha, n_sigma);
        let asymptotic_band = [-2.0, -1.0, 1.0, 2.0].map(limit);
        point.limit_asimov = Some(limit(0.0));
        point.limit_asimov_band = Some(asymptotic_band);
        if toys {
            point.limit_median = Some(1.02 * limit(0.0));
            let widths = [1.05, 1.02, 0.97, 0.93];
            point.limit_band = Some(std::array::from_fn(|quantile| {
                widths[quantile] * asymptotic_band[quantile]
            }));
            point.limit_failed_fits = if days < 2.0 { 1 } else { 0 };
        }
    }

    /// An invented calibration in which 25% more background-only toys than
    /// the half chi-square law predicts reach the Asimov q0.
    fn calibration(&self, z_asimov: f64) -> Calibration {
        let toys = self.calibration_toys;
        let p_asymptotic = p_value(z_asimov);
        let exceeding = (1.25 * p_asymptotic * toys as f64).round() as usize;
        let p_toys = (exceeding > 0).then(|| exceeding as f64 / toys as f64);
        Calibration {
            converged_toys: toys,
            failed_fits: 0,
            q0_asimov: z_asimov * z_asimov,
            exceeding,
            p_asymptotic,
            z_asymptotic: z_asimov,
            p_toys,
            z_toys: p_toys.map(significance),
            tail_reach_z: Calibration::tail_reach(toys),
        }
    }

    fn projection(&self, title: &str, toys: usize) -> Projection {
        let targets = vec![3.0, 5.0];
        let with_toys = toys > 0;
        let saturation_z = (self.relative_uncertainty > 0.0).then(|| self.saturation_z());
        let days_to_target = targets
            .iter()
            .map(|&target| {
                let asimov_days = Self::days_to(|days| self.z_asimov(days), target);
                let median_days = Self::days_to(|days| 0.98 * self.z_asimov(days), target);
                DaysToTarget {
                    target,
                    asimov_days,
                    median_days: median_days.filter(|_| with_toys),
                    p50_days: median_days.filter(|_| with_toys),
                    p90_days: Self::days_to(|days| 0.98 * self.z_asimov(days) - 1.2816, target)
                        .filter(|_| with_toys),
                    saturation_z,
                    global: None,
                    withheld: Vec::new(),
                }
            })
            .collect();
        Projection {
            title: title.to_string(),
            start: None,
            day_spacing: Spacing::Log,
            rate_stretches: Vec::new(),
            seed: 20240611,
            toys,
            at: Vec::new(),
            points: Self::grid()
                .map(|days| self.point(days, &targets, with_toys))
                .collect(),
            targets,
            days_to_target,
            days_to_exclusion: self.days_to_exclusion(with_toys),
            solving_points: 0,
            cl: self.cl,
            calibration_toys: self.calibration_toys,
            scan: None,
        }
    }

    /// Where the asymptotic median limit, and the invented toy median 2%
    /// above it, fall to mu = 1.
    fn days_to_exclusion(&self, with_toys: bool) -> DaysToExclusion {
        let Some(cl) = self.cl else {
            return DaysToExclusion::default();
        };
        let sensitivity =
            |scale: f64| move |days| 1.0 / (scale * self.asymptotic_limit(days, 1.0 - cl, 0.0));
        DaysToExclusion {
            asimov_days: Self::days_to(sensitivity(1.0), 1.0),
            median_days: Self::days_to(sensitivity(1.02), 1.0).filter(|_| with_toys),
            withheld: Vec::new(),
        }
    }
}

/// 2000 invented toys per point, 2% background uncertainty (Z saturates at 10σ).
pub(crate) fn with_toys() -> Projection {
    InventedSearch {
        relative_uncertainty: 0.02,
        cl: None,
        calibration_toys: 0,
    }
    .projection(
        "Invented search: 2 signal, 10 background events per live day",
        2000,
    )
}

/// Asimov-only, 5% background uncertainty: Z saturates at 4σ, 5σ is never reached.
pub(crate) fn asimov_only() -> Projection {
    InventedSearch {
        relative_uncertainty: 0.05,
        cl: None,
        calibration_toys: 0,
    }
    .projection("Invented search, Asimov only, 5% background uncertainty", 0)
}

/// As [`with_toys`], with expected 95% CL limits and a q0 calibration by
/// 5000 background-only pseudo-experiments per point.
pub(crate) fn with_limits() -> Projection {
    InventedSearch {
        relative_uncertainty: 0.02,
        cl: Some(0.95),
        calibration_toys: 5000,
    }
    .projection(
        "Invented search: 2 signal, 10 background events per live day",
        2000,
    )
}

/// Asimov-only with expected 95% CL limits, 5% background uncertainty.
pub(crate) fn asimov_only_with_limits() -> Projection {
    InventedSearch {
        relative_uncertainty: 0.05,
        cl: Some(0.95),
        calibration_toys: 0,
    }
    .projection("Invented search, Asimov only, 5% background uncertainty", 0)
}

/// [`with_limits`] with its third grid day also asked for with `--at`, at a
/// nominal signal of 2.5 events per live day.
pub(crate) fn with_at_day() -> Projection {
    let mut projection = with_limits();
    projection.at = vec![crate::projection::AtDay::new(
        projection.points[2].clone(),
        2.5,
        None,
    )];
    projection
}

/// The provenance of an invented run, for rendering in tests.
pub(crate) fn provenance() -> crate::provenance::Provenance {
    crate::provenance::Provenance::new(
        vec![crate::provenance::ScenarioFile::new(
            "invented.yaml",
            "invented",
        )],
        serde_json::Map::new(),
    )
}
