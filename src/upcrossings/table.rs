//! The Asimov geometry of a scan at any exposure, from one table of inner
//! products per quadrature node.
//!
//! Within a channel whose backgrounds all share one exposure function e(T)
//! (`Component::exposure`), every expectation of the background-only Asimov
//! point and every derivative of one grow with e: after T live days the
//! weight 1/nu_j(T) = (1/nu_j(R)) / g and each nuisance direction
//! dnu_j/deta_k(T) = g dnu_j/deta_k(R), with g = e(T)/e(R) the channel's
//! background exposure relative to that at a reference R; the signal
//! template t_j(T) = s t_j(R) grows with the signal's exposure alike, s its
//! own ratio. The parts of the profiled inner products (module docs of
//! `likelihood::information`) of the template t and its slope t' then scale
//! channel by channel,
//!
//!   sum_j a_j b_j / nu_j = sum_ch (s²/g)_ch U_ch(a, b),  c_k(a) = sum_ch s_ch c_ch,k(a),
//!
//! U_ch and c_ch,k being sums over the channel's bins at R, and only the
//! nuisance parameters' information I_eta(T) changes otherwise (its
//! constraint, control-region and gauge parts do not grow with the data):
//! a K x K matrix, taken from the metric at T itself. So each node of the
//! quadrature holds, per channel, U(t, t), U(t, t'), U(t', t'), c_k(t) and
//! c_k(t') for the K nuisance parameters, computed once at R, and
//! sqrt(lambda2) at any exposure costs O(channels K + K²) per node instead
//! of new signal shapes and passes over the bins.
//!
//! The nodes are those of one composite Gauss-Legendre rule
//! (`quadrature::common_rule`), halved until it integrates sqrt(lambda2) to
//! the tolerance of [`scan_geometry`] at every decade of live days of
//! [`REFERENCE_LIVE_DAYS`]: lambda2 moves with the exposure only as the
//! balance of the data's information against the constraints' shifts,
//! smoothly between its limits of no data and of data alone, so a rule fine
//! at every decade is fine between them and beyond (checked against
//! [`scan_geometry`] in the tests). The rice length at an exposure is the
//! weighted sum over the nodes: that of [`scan_geometry`] to about its
//! tolerance, not bit for bit.
//!
//! A schedule period that scales some backgrounds of a channel and not
//! others breaks the scaling; the table then computes every exposure as
//! [`scan_geometry`] does.

use super::{
    INTEGRATION_TOLERANCE, MAX_PANELS, PeakPath, ScanGeometry, UpcrossingError, background_only,
    quadrature, root_lambda2_of, scan_geometry, scan_path,
};
use crate::likelihood::{Likelihood, ProfiledMetric};
use crate::model::{Exposure, Model};
use crate::scenario::SignalScan;
use std::ops::Range;

/// The exposures at which the rule must integrate sqrt(lambda2) to the
/// tolerance: every decade of live days from 1e-6 to 1e12, far beyond where
/// the constraints or the data alone decide the metric in any scenario.
const REFERENCE_LIVE_DAYS: [f64; 19] = [
    1e-6, 1e-5, 1e-4, 1e-3, 1e-2, 1e-1, 1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
    1e11, 1e12,
];

/// Peak widths per panel in the first cut of the scan interval. lambda2
/// has no feature narrower than about half a width (the template's own
/// scale), and the halving test compares each panel's rule with that of its
/// halves, whose nodes lie at most 0.37 width apart from panels of four
/// widths: a feature seen by neither is impossible, so the rule refines
/// wherever one lies, with a quarter of the nodes of [`scan_geometry`]'s
/// finer first cut (which is kept there, so that its numbers stay as they
/// were).
const WIDTHS_PER_PANEL: f64 = 4.0;

/// Parts of a node per channel before the nuisance projections: U(t, t),
/// U(t, t'), U(t', t').
const UNPROFILED_PARTS: usize = 3;

/// The Asimov geometry of a scan at any exposure (module docs).
pub struct GeometryTable<'l, 'm, 'p> {
    likelihood: &'l Likelihood<'m>,
    path: PeakPath<'p>,
    /// None where a channel's backgrounds do not share their exposure:
    /// every exposure is then computed directly.
    tabulated: Option<Tabulated<'m>>,
}

/// The nodes of the rule with their parts at the reference exposure.
struct Tabulated<'m> {
    channels: Channels<'m>,
    /// Each node's position (to name it when the nuisance parameters absorb
    /// the template there) and weight.
    positions: Vec<f64>,
    weights: Vec<f64>,
    /// Each node's parts, channel after channel: U(t, t), U(t, t'),
    /// U(t', t'), c_k(t) and c_k(t') for each nuisance parameter k.
    parts: Vec<f64>,
}

/// The channels' exposures and the number of nuisance parameters the table
/// was made with.
struct Channels<'m> {
    exposures: Vec<ChannelExposure<'m>>,
    nuisances: usize,
}

/// A channel's exposures: that of all its backgrounds and that of its
/// signal (the same when no period scales the signal alone), each with its
/// value at the reference live days.
#[derive(Clone, Copy)]
struct ChannelExposure<'m> {
    background: (&'m Exposure, f64),
    signal: (&'m Exposure, f64),
}

/// The metric at one exposure in the terms of the table: each channel's
/// factors s²/g on its unprofiled parts and s on its projections (module
/// docs), and I_eta^-1 (row-major).
struct Weighing {
    scales: Vec<(f64, f64)>,
    inverse: Vec<f64>,
}

impl<'l, 'm, 'p> GeometryTable<'l, 'm, 'p> {
    /// The table of the scan `scan` of the model's signal.
    pub fn of_scan(likelihood: &'l Likelihood<'m>, scan: &'p SignalScan) -> Self {
        GeometryTable::new(likelihood, scan_path(scan))
    }

    /// The table of `path`: the rule and each node's parts, when every
    /// channel's backgrounds share their exposure.
    fn new(likelihood: &'l Likelihood<'m>, path: PeakPath<'p>) -> Self {
        let tabulated = shared_exposures(likelihood.model())
            .and_then(|exposures| Tabulated::build(likelihood, &path, exposures));
        GeometryTable {
            likelihood,
            path,
            tabulated,
        }
    }

    /// The geometry after `live_days`: the weighted sum of sqrt(lambda2)
    /// over the nodes, or [`scan_geometry`] where the table does not apply.
    pub fn at(&self, live_days: f64) -> Result<ScanGeometry, UpcrossingError> {
        let Some(table) = &self.tabulated else {
            return scan_geometry(self.likelihood, &self.path, live_days);
        };
        let metric = self
            .likelihood
            .profiled_metric(&background_only(self.likelihood), live_days)
            .map_err(UpcrossingError::Metric)?;
        match table.channels.weighing(&metric, live_days) {
            Some(weighing) => Ok(ScanGeometry {
                rice_length: table.rice_length(&weighing)?,
            }),
            None => scan_geometry(self.likelihood, &self.path, live_days),
        }
    }
}

impl<'m> Tabulated<'m> {
    /// The rule for `path` and its nodes' parts, at the smallest of
    /// [`REFERENCE_LIVE_DAYS`] with a metric and exposure in every channel;
    /// None without one.
    fn build(
        likelihood: &Likelihood<'m>,
        path: &PeakPath,
        exposures: Vec<[&'m Exposure; 2]>,
    ) -> Option<Tabulated<'m>> {
        let theta = background_only(likelihood);
        let metrics: Vec<Option<ProfiledMetric>> = REFERENCE_LIVE_DAYS
            .iter()
            .map(|&live_days| likelihood.profiled_metric(&theta, live_days).ok())
            .collect();
        let (reference_live_days, reference) = REFERENCE_LIVE_DAYS
            .iter()
            .zip(&metrics)
            .filter(|(live_days, _)| exposures.iter().flatten().all(|e| e.at(**live_days) > 0.0))
            .find_map(|(&live_days, metric)| Some((live_days, metric.as_ref()?)))?;
        let channels = Channels {
            exposures: exposures
                .into_iter()
                .map(|[background, signal]| ChannelExposure {
                    background: (background, background.at(reference_live_days)),
                    signal: (signal, signal.at(reference_live_days)),
                })
                .collect(),
            nuisances: reference.weighted_directions().len(),
        };
        let weighings: Vec<Option<Weighing>> = REFERENCE_LIVE_DAYS
            .iter()
            .zip(&metrics)
            .map(|(&live_days, metric)| channels.weighing(metric.as_ref()?, live_days))
            .collect();
        let ranges = channel_bins(likelihood.model());
        let (mut template, mut slope) = (vec![0.0; reference.bins()], vec![0.0; reference.bins()]);
        let node = |m: f64| {
            let shapes = likelihood.signal_shapes(&(path.parameters_at)(m));
            shapes.template_along(
                likelihood,
                &theta,
                reference_live_days,
                &(path.direction_at)(m),
                &mut template,
                &mut slope,
            );
            (m, node_parts(reference, &ranges, &template, &slope))
        };
        let mut scratch = vec![0.0; 2 * channels.nuisances];
        let value = |(_, parts): &(f64, Vec<f64>), lane: usize| {
            weighings[lane].as_ref()?.root_lambda2(parts, &mut scratch)
        };
        let [from, to] = path.interval;
        let panels = ((to - from) / (path.narrowest_width * WIDTHS_PER_PANEL)).ceil();
        let panels = (panels as usize).clamp(1, MAX_PANELS);
        let rule = quadrature::common_rule(
            from,
            to,
            panels,
            INTEGRATION_TOLERANCE,
            REFERENCE_LIVE_DAYS.len(),
            node,
            value,
        );
        let mut table = Tabulated {
            channels,
            positions: Vec::with_capacity(rule.len()),
            weights: Vec::with_capacity(rule.len()),
            parts: Vec::new(),
        };
        for ((position, parts), weight) in rule {
            table.positions.push(position);
            table.weights.push(weight);
            table.parts.extend(parts);
        }
        Some(table)
    }

    /// The integral of sqrt(lambda2) at the exposure of `weighing`; an error
    /// at the first node where the nuisance parameters absorb the template.
    fn rice_length(&self, weighing: &Weighing) -> Result<f64, UpcrossingError> {
        let stride = self.parts.len() / self.weights.len().max(1);
        let mut scratch = vec![0.0; 2 * self.channels.nuisances];
        let mut total = 0.0;
        for ((&position, &weight), parts) in self
            .positions
            .iter()
            .zip(&self.weights)
            .zip(self.parts.chunks_exact(stride.max(1)))
        {
            let root = weighing
                .root_lambda2(parts, &mut scratch)
                .ok_or(UpcrossingError::SignalAbsorbed { position })?;
            total += weight * root;
        }
        Ok(total)
    }
}

impl Channels<'_> {
    /// The metric `metric` at `live_days` in the terms of the table; None
    /// when it profiles other nuisance parameters than the table's (a
    /// channel without exposure) or its I_eta cannot be inverted.
    fn weighing(&self, metric: &ProfiledMetric, live_days: f64) -> Option<Weighing> {
        let k = self.nuisances;
        if metric.weighted_directions().len() != k {
            return None;
        }
        let ratio =
            |(exposure, at_reference): (&Exposure, f64)| exposure.at(live_days) / at_reference;
        let scales = self
            .exposures
            .iter()
            .map(|channel| {
                let (background, signal) = (ratio(channel.background), ratio(channel.signal));
                (signal * signal / background, signal)
            })
            .collect();
        let mut inverse = vec![0.0; k * k];
        // Column j of the inverse is I_eta^-1 e_j; I_eta is symmetric, so
        // it is row j too.
        for (j, row) in inverse.chunks_exact_mut(k.max(1)).enumerate().take(k) {
            row[j] = 1.0;
            if !metric.solve(row) {
                return None;
            }
        }
        Some(Weighing { scales, inverse })
    }
}

impl Weighing {
    /// sqrt(lambda2) at a node from its parts (module docs); `scratch`
    /// holds 2K numbers. None where the profiled template vanishes.
    fn root_lambda2(&self, parts: &[f64], scratch: &mut [f64]) -> Option<f64> {
        let k = scratch.len() / 2;
        let stride = UNPROFILED_PARTS + 2 * k;
        scratch.fill(0.0);
        let mut unprofiled = [0.0; UNPROFILED_PARTS];
        for (&(own_scale, projection_scale), channel) in
            self.scales.iter().zip(parts.chunks_exact(stride))
        {
            let (own, projections) = channel.split_at(UNPROFILED_PARTS);
            for (total, part) in unprofiled.iter_mut().zip(own) {
                *total += own_scale * part;
            }
            for (total, part) in scratch.iter_mut().zip(projections) {
                *total += projection_scale * part;
            }
        }
        let (template, slope) = scratch.split_at(k);
        let profiled = |a: &[f64], b: &[f64]| -> f64 {
            a.iter()
                .zip(self.inverse.chunks_exact(k.max(1)))
                .map(|(a_i, row)| a_i * row.iter().zip(b).map(|(x, b_j)| x * b_j).sum::<f64>())
                .sum()
        };
        root_lambda2_of(
            unprofiled[0] - profiled(template, template),
            unprofiled[1] - profiled(template, slope),
            unprofiled[2] - profiled(slope, slope),
        )
    }
}

/// Each channel's background exposure and signal exposure, when all its
/// backgrounds share theirs (module docs); a channel without a signal
/// component has the backgrounds' for both.
fn shared_exposures(model: &Model) -> Option<Vec<[&Exposure; 2]>> {
    model
        .channels
        .iter()
        .map(|channel| {
            let mut backgrounds = channel.components.iter().filter(|c| !c.is_signal);
            let background = &backgrounds.next()?.exposure;
            if !backgrounds.all(|c| c.exposure == *background) {
                return None;
            }
            let signal = channel.components.iter().find(|c| c.is_signal);
            Some([background, signal.map_or(background, |c| &c.exposure)])
        })
        .collect()
}

/// The bins of each channel in the concatenated bin vector.
fn channel_bins(model: &Model) -> Vec<Range<usize>> {
    let mut start = 0;
    model
        .channels
        .iter()
        .map(|channel| {
            let end = start + channel.edges.len() - 1;
            let range = start..end;
            start = end;
            range
        })
        .collect()
}

/// A node's parts at the reference (module docs): per channel, the
/// unprofiled inner products of the template and its slope, then each
/// nuisance direction's with the template, then with the slope.
fn node_parts(
    metric: &ProfiledMetric,
    ranges: &[Range<usize>],
    template: &[f64],
    slope: &[f64],
) -> Vec<f64> {
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let weighted = |a: &[f64], b: &[f64], w: &[f64]| {
        a.iter()
            .zip(b)
            .zip(w)
            .map(|((x, y), w)| x * y * w)
            .sum::<f64>()
    };
    let mut parts = Vec::new();
    for range in ranges {
        let (t, s) = (&template[range.clone()], &slope[range.clone()]);
        let w = &metric.weights()[range.clone()];
        parts.extend([weighted(t, t, w), weighted(t, s, w), weighted(s, s, w)]);
        parts.extend(
            metric
                .weighted_directions()
                .map(|d| dot(&d[range.clone()], t)),
        );
        parts.extend(
            metric
                .weighted_directions()
                .map(|d| dot(&d[range.clone()], s)),
        );
    }
    parts
}
