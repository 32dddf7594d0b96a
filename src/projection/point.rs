//! Everything computed at one grid day.

use super::crossing::quantile;
use super::ensembles::{
    CalibrationCount, CalibrationRequest, LimitRequest, LookElsewhereCount, LookElsewhereRequest,
    PointRequest, ToySource,
};
use super::{
    Calibration, ChannelPoint, ExposurePoint, GlobalSignificance, LookElsewhere, ProjectionError,
    ProjectionSettings, TargetProbability,
};
use crate::asymptotic::{
    AsimovSignificance, p_value, probability_to_reach, significance, significance_band,
};
use crate::ensemble::EnsembleOutcome;
use crate::likelihood::{FitFailure, Likelihood};
use crate::limits::{AsymptoticLimits, asymptotic_limits};
use crate::look_elsewhere::{
    REFERENCE_LEVEL, global_significance, mean_upcrossings, trials_factor,
};
use crate::upcrossings::GeometryTable;

/// The quantiles reported as bands: the normal-distribution probabilities of
/// -2, -1, +1 and +2 sigma (common practice).
pub const BAND_QUANTILES: [f64; 4] = [0.02275, 0.158655, 0.841345, 0.97725];

/// One channel of a model with several, alone: its own rates and Asimov fits.
pub(super) struct ChannelAlone<'l, 'm> {
    name: String,
    /// Expected (signal, background) events per live day in the channel.
    rates: (f64, f64),
    asimov: AsimovSignificance<'l, 'm>,
}

impl<'l, 'm> ChannelAlone<'l, 'm> {
    /// `likelihood` is that of the channel's model alone (`Model::channel_alone`).
    pub fn new(likelihood: &'l Likelihood<'m>) -> Self {
        let model = likelihood.model();
        ChannelAlone {
            name: model.channels[0].name.clone(),
            rates: model.nominal_rates(),
            asimov: AsimovSignificance::new(likelihood),
        }
    }

    /// The channel after `live_days`; Z_A = 0 without live time.
    fn point(&mut self, live_days: f64) -> Result<ChannelPoint, FitFailure> {
        let z_asimov = if live_days > 0.0 {
            self.asimov.at_live_days(live_days)?
        } else {
            0.0
        };
        Ok(ChannelPoint {
            name: self.name.clone(),
            signal: self.rates.0 * live_days,
            background: self.rates.1 * live_days,
            z_asimov,
        })
    }
}

/// What a point computes beyond Z_A: its ensembles of pseudo-experiments
/// (each of the size the settings ask for) and, with a scan, the global
/// significances. A grid or `--at` point computes all the settings ask for
/// ([`PointParts::ALL`]); a point added to solve a day only what that day
/// needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub(super) struct PointParts {
    pub discovery: bool,
    /// The asymptotic limits and, with toys, the limit pseudo-experiments.
    pub limits: bool,
    pub calibration: bool,
    pub look_elsewhere: bool,
    /// The global significances of a scan (the Asimov geometry's N(u0)).
    pub global: bool,
}

impl PointParts {
    pub const ALL: PointParts = PointParts {
        discovery: true,
        limits: true,
        calibration: true,
        look_elsewhere: true,
        global: true,
    };

    /// Z_A alone.
    pub const NONE: PointParts = PointParts {
        discovery: false,
        limits: false,
        calibration: false,
        look_elsewhere: false,
        global: false,
    };
}

/// Computes exposure points for one projection.
pub(super) struct PointRunner<'a, 'l, 'm> {
    likelihood: &'l Likelihood<'m>,
    settings: &'a ProjectionSettings,
    /// With a scan: its Asimov geometry at any exposure, made once for the
    /// grid, `--at` and day-solving points alike ([`GeometryTable`]).
    geometry: Option<GeometryTable<'l, 'm, 'a>>,
}

impl<'a, 'l, 'm> PointRunner<'a, 'l, 'm> {
    /// The runner of `settings`, with the geometry table of its scan.
    pub fn new(likelihood: &'l Likelihood<'m>, settings: &'a ProjectionSettings) -> Self {
        PointRunner {
            likelihood,
            settings,
            geometry: (settings.scan.as_ref()).map(|scan| GeometryTable::of_scan(likelihood, scan)),
        }
    }

    /// N(u0) from the Asimov geometry of the scan at `live_days`; None
    /// without a scan or where the geometry is degenerate.
    fn reference_upcrossings(&self, live_days: f64) -> Option<f64> {
        let geometry = self.geometry.as_ref()?.at(live_days).ok()?;
        Some(geometry.reference_upcrossings())
    }

    pub fn settings(&self) -> &'a ProjectionSettings {
        self.settings
    }

    pub fn likelihood(&self) -> &'l Likelihood<'m> {
        self.likelihood
    }

    /// The exposure point at calendar day `days`, exposure index `index`
    /// (which keys its random streams), computing `parts`, with its
    /// pseudo-experiments from `source`.
    pub fn point<S: ToySource>(
        &self,
        asimov: &mut AsimovSignificance,
        channels: &mut [ChannelAlone],
        index: usize,
        days: f64,
        parts: PointParts,
        source: &mut S,
    ) -> Result<ExposurePoint, S::Error> {
        let settings = self.settings;
        let live_days = self.likelihood.model().live_time.live_days(days);
        let toys = |asked: bool, toys: usize| if asked { toys } else { 0 };
        if live_days <= 0.0 {
            source.skip(toys(parts.discovery, settings.toys));
            if settings.cl.is_some() {
                source.skip(toys(parts.limits, settings.toys));
            }
            source.skip(toys(parts.calibration, settings.calibration_toys));
            source.skip(toys(parts.look_elsewhere, settings.look_elsewhere_toys));
            return Ok(self.without_exposure(days, channels, parts));
        }
        let failed = |what| {
            move |failure| ProjectionError {
                live_days,
                what,
                failure,
            }
        };
        let z_asimov = asimov
            .at_live_days(live_days)
            .map_err(failed("Asimov discovery fit"))?;
        let channel_points = channels
            .iter_mut()
            .map(|channel| channel.point(live_days))
            .collect::<Result<Vec<_>, _>>()
            .map_err(failed("Asimov discovery fit of one channel alone"))?;
        let limit_toys = toys(parts.limits, settings.toys);
        let limits = settings
            .cl
            .filter(|_| parts.limits)
            .map(|cl| asymptotic_limits(self.likelihood, live_days, 1.0 - cl))
            .transpose()
            .map_err(failed("background-only Asimov fit for expected limits"))?;
        // An unbounded median limit leaves no sigma_A to run the toys with:
        // nothing can be excluded at this exposure, and its toys are skipped.
        let bounded = limits.filter(|limits| limits.median.is_finite());
        if limits.is_some() && bounded.is_none() {
            source.skip(limit_toys);
        }
        let calibration_toys = toys(parts.calibration, settings.calibration_toys);
        let look_elsewhere_toys = toys(parts.look_elsewhere, settings.look_elsewhere_toys);
        let request = PointRequest {
            index,
            live_days,
            discovery_toys: toys(parts.discovery, settings.toys),
            limits: bounded
                .filter(|_| limit_toys > 0)
                .map(|limits| LimitRequest {
                    toys: limit_toys,
                    alpha: 1.0 - settings.cl.unwrap_or_default(),
                    sigma: limits.sigma,
                }),
            calibration: (calibration_toys > 0).then_some(CalibrationRequest {
                toys: calibration_toys,
                q0_asimov: z_asimov * z_asimov,
            }),
            look_elsewhere: (settings.scan.is_some() && look_elsewhere_toys > 0).then_some(
                LookElsewhereRequest {
                    toys: look_elsewhere_toys,
                    reference_level: REFERENCE_LEVEL,
                    q0_asimov: z_asimov * z_asimov,
                },
            ),
        };
        let outcomes = source.toys(self.likelihood, &request)?;
        let mut point = self.discovery_point(days, live_days, z_asimov, outcomes.discovery);
        point.channels = channel_points;
        add_limits(&mut point, limits, outcomes.limits);
        point.calibration = outcomes
            .calibration
            .map(|count| calibration(count, z_asimov));
        if settings.scan.is_some() && parts.global {
            // A degenerate geometry leaves N(u0) to the toys (see `GlobalSignificance`).
            let asymptotic = self.reference_upcrossings(live_days);
            point.global = Some(global(
                z_asimov,
                point.z_median,
                outcomes.look_elsewhere,
                asymptotic,
            ));
        }
        Ok(point)
    }

    /// A grid day before any live time: nothing can be seen or excluded.
    fn without_exposure(
        &self,
        days: f64,
        channels: &mut [ChannelAlone],
        parts: PointParts,
    ) -> ExposurePoint {
        let toys = if parts.discovery {
            self.settings.toys
        } else {
            0
        };
        let discovery = (toys > 0).then(|| EnsembleOutcome {
            values: vec![0.0; toys],
            failed_fits: 0,
        });
        let mut point = self.discovery_point(days, 0.0, 0.0, discovery);
        point.channels = channels
            .iter_mut()
            .map(|channel| channel.point(0.0).expect("no fit without live time"))
            .collect();
        if self.settings.scan.is_some() && parts.global {
            point.global = Some(global(0.0, None, None, None));
        }
        point
    }

    fn discovery_point(
        &self,
        days: f64,
        live_days: f64,
        z_asimov: f64,
        discovery: Option<EnsembleOutcome>,
    ) -> ExposurePoint {
        let failed_fits = discovery.as_ref().map_or(0, |e| e.failed_fits);
        let sorted = discovery.and_then(sorted_values);
        let probability = self
            .settings
            .targets
            .iter()
            .map(|&target| TargetProbability {
                target,
                toys: sorted.as_ref().map(|z| fraction_at_or_above(z, target)),
                asimov: probability_to_reach(z_asimov, target),
            })
            .collect();
        let (signal, background) = self.likelihood.model().nominal_events(live_days);
        ExposurePoint {
            days,
            live_days,
            signal,
            background,
            z_asimov,
            channels: Vec::new(),
            z_asimov_band: significance_band(z_asimov),
            z_median: sorted.as_ref().map(|z| quantile(z, 0.5)),
            z_band: sorted
                .as_ref()
                .map(|z| BAND_QUANTILES.map(|p| quantile(z, p))),
            probability,
            failed_fits,
            limit_median: None,
            limit_band: None,
            limit_asimov: None,
            limit_asimov_band: None,
            limit_failed_fits: 0,
            calibration: None,
            global: None,
        }
    }
}

/// The global significances of a point: N(u0) from the Asimov geometry
/// (`asymptotic`) and from the background-only scans (upcrossings per
/// converged scan), each into the global p-value of Gross and Vitells (see
/// [`crate::look_elsewhere`]): Z_A with the asymptotic N (the toys' where the
/// geometry gave none), the toy median with the toys' N; the direct fraction
/// of scans whose largest q0 reaches Z_A^2 beside them.
fn global(
    z_asimov: f64,
    z_median: Option<f64>,
    count: Option<LookElsewhereCount>,
    asymptotic: Option<f64>,
) -> GlobalSignificance {
    let toy_upcrossings = count.as_ref().and_then(|count| match count.converged {
        0 => None,
        scans => Some(mean_upcrossings(
            count.upcrossings,
            count.upcrossings_squared,
            scans,
        )),
    });
    let toy_mean = toy_upcrossings.map(|(mean, _)| mean);
    let asimov_upcrossings = asymptotic.or(toy_mean);
    let measured = (count.is_some() || asymptotic.is_some()).then(|| LookElsewhere {
        reference_level: REFERENCE_LEVEL,
        mean_upcrossings: toy_mean,
        mean_upcrossings_error: toy_upcrossings.and_then(|(_, error)| error),
        toys: count.map_or(0, |count| count.converged),
        failed_fits: count.map_or(0, |count| count.failed_fits),
        direct_global_p: count
            .filter(|count| count.exceeding > 0)
            .map(|count| count.exceeding as f64 / count.converged as f64),
        trials_factor: asimov_upcrossings
            .map(|mean| trials_factor(z_asimov, REFERENCE_LEVEL, mean))
            .filter(|factor| factor.is_finite()),
        mean_upcrossings_asimov: asymptotic,
    });
    // Beyond about 37 sigma both p-values underflow to 0: no global Z there.
    let convert = |z: f64, upcrossings: Option<f64>| {
        upcrossings
            .map(|n| global_significance(z, REFERENCE_LEVEL, n))
            .filter(|z| z.is_finite())
    };
    GlobalSignificance {
        z_global_asimov: convert(z_asimov, asimov_upcrossings),
        z_global_median: z_median.and_then(|z| convert(z, toy_mean)),
        look_elsewhere: measured,
    }
}

/// Stores the limits of a point. A limit that is unbounded (no mu can be
/// excluded at that exposure and quantile) is reported as absent, and so is a
/// band with an unbounded edge; JSON and CSV have no infinity.
fn add_limits(
    point: &mut ExposurePoint,
    limits: Option<AsymptoticLimits>,
    toys: Option<EnsembleOutcome>,
) {
    point.limit_asimov = limits.map(|l| l.median).filter(|mu| mu.is_finite());
    point.limit_asimov_band = limits.map(|l| l.band).filter(bounded);
    point.limit_failed_fits = toys.as_ref().map_or(0, |t| t.failed_fits);
    let sorted = toys.and_then(sorted_values);
    point.limit_median = sorted
        .as_ref()
        .map(|l| quantile(l, 0.5))
        .filter(|mu| mu.is_finite());
    point.limit_band = sorted
        .as_ref()
        .map(|l| BAND_QUANTILES.map(|p| quantile(l, p)))
        .filter(bounded);
}

fn bounded(band: &[f64; 4]) -> bool {
    band.iter().all(|mu| mu.is_finite())
}

/// The toy p-value of the Asimov q0 = Z_A^2 against its asymptotic value
/// 1 - Phi(Z_A), from the half chi-square law of q0 under the background
/// (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eq. 49).
fn calibration(count: CalibrationCount, z_asimov: f64) -> Calibration {
    let CalibrationCount {
        converged,
        exceeding,
        failed_fits,
    } = count;
    let p_toys = (exceeding > 0).then(|| exceeding as f64 / converged as f64);
    Calibration {
        converged_toys: converged,
        failed_fits,
        q0_asimov: z_asimov * z_asimov,
        exceeding,
        p_asymptotic: p_value(z_asimov),
        z_asymptotic: z_asimov,
        p_toys,
        z_toys: p_toys.map(|p| significance(p).max(0.0)),
        tail_reach_z: Calibration::tail_reach(converged),
    }
}

/// The converged values in increasing order; None when there are none.
fn sorted_values(outcome: EnsembleOutcome) -> Option<Vec<f64>> {
    let mut values = outcome.values;
    values.sort_by(f64::total_cmp);
    (!values.is_empty()).then_some(values)
}

/// Fraction of sorted significances at or above `target`.
fn fraction_at_or_above(sorted: &[f64], target: f64) -> f64 {
    let below = sorted.partition_point(|&z| z < target);
    (sorted.len() - below) as f64 / sorted.len() as f64
}
