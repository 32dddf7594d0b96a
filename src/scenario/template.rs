//! The commented scenario written by `runcast new FILE`: a valid starting point
//! that explains every key, its unit and its default.

use crate::shapes::SHAPE_KINDS;
use std::sync::LazyLock;

/// A complete, valid scenario in which every key is explained by a comment.
/// Its numbers are invented and the text says so. The list of shapes comes
/// from the shape registry, so every registered shape is shown.
pub static TEMPLATE: LazyLock<String> =
    LazyLock::new(|| format!("{BEFORE_SHAPES}{}{AFTER_SHAPES}", shape_list()));

/// Columns between the comment sign and a shape's explanation, beyond the
/// longest example.
const EXPLANATION_GAP: usize = 3;

/// One comment line per line of explanation of each registered shape, the
/// explanations aligned after the examples.
fn shape_list() -> String {
    let width = SHAPE_KINDS
        .iter()
        .map(|kind| kind.example.len())
        .max()
        .unwrap_or(0)
        + EXPLANATION_GAP;
    let mut list = String::new();
    for kind in SHAPE_KINDS {
        let mut example = kind.example;
        for line in kind.explanation {
            list.push_str(&format!("  #   {example:<width$}{line}\n"));
            example = "";
        }
    }
    list
}

/// The template up to the list of shapes.
const BEFORE_SHAPES: &str = r#"# runcast scenario
#
# Every number in this file is INVENTED for illustration; replace each one with
# the numbers of your own search. Lines starting with `#` are comments.
#
# Units: rates are expected events per LIVE day (time actually recording data);
# every `days` value under `schedule` and `plan` counts CALENDAR days from the
# start of the run. Keys marked "optional" may be deleted; their default is given.
# Misspelled or unknown keys are rejected, so a typo cannot pass silently.

# Shown in plot titles and in the summary.
title: Invented example, a peak in a reconstructed energy spectrum

# The binned observable in which signal and backgrounds are told apart.
#   name, unit  axis labels; `unit` is free text (GeV, keV, ns, ...).
#   range       [low, high] edges of the fitted range, in `unit`.
#   bin_width   width of every bin, in `unit`; must cut (high - low) into whole bins.
#               bin_width = high - low gives a single-bin counting experiment.
observable: {name: reconstructed energy, unit: keV, range: [100.0, 300.0], bin_width: 1.0}

# The signal searched for, at nominal signal strength (mu = 1).
signal:
  # Expected signal events per live day inside the range, after all efficiencies.
  # Instead of events_per_day, exactly one of: events_per_week (7 days),
  # events_per_year (365.25 days), events_per_kg_day (needs a top-level
  # `detector: {mass_kg: 10}`, or one in the channel). The same keys serve
  # every background.
  events_per_day: 1.5
  # Density in the observable, normalised on the range. One of:
"#;

/// The template after the list of shapes.
const AFTER_SHAPES: &str = r#"  shape: {gaussian: {mean: 180.0, sigma: 2.5}}
  # Optional; absent = signal yield known exactly. Relative uncertainty on the yield:
  # a Gaussian constraint N(1, 0.10) on a factor multiplying it (0.10 = 10 %).
  yield_uncertainty: 0.10
  # Optional, gaussian or breit_wigner only: the energy scale and resolution known
  # to an absolute position_uncertainty (observable units) and a relative
  # width_uncertainty, each fitted with a Gaussian constraint.
  # position_uncertainty: 0.5
  # width_uncertainty: 0.1
  # Optional, gaussian or breit_wigner only: the position is unknown and the
  # search tests every position from `from` to `to` (step default: a fifth of
  # the width; optional width_at_to: the width at `to`, growing linearly). Then
  # `project` also gives the global significance after the look-elsewhere effect
  # and `runcast reach` the reach over the positions.
  # scan: {from: 120.0, to: 280.0, step: 0.5}
  # A width that follows the position instead of sigma and width_at_to: write
  # shape: {gaussian: {mean: 180.0}} and, at the top level beside signal,
  # resolution: {stochastic: 0.1, constant: 0.01, noise: 1.0} (sigma =
  # sqrt(a² x + b² x² + c²)) or resolution: {points: [[120, 2.0], [280, 3.5]]}.

# One or more background components; each needs a name not used by another.
backgrounds:
  - name: smooth continuum
    # Expected events per live day inside the range.
    events_per_day: 120
    # Any of the shapes listed under `signal`.
    shape: {exponential: {slope: -0.01}}
    # Optional; absent = normalisation known exactly. A number d puts a Gaussian
    # constraint N(1, d) on a factor on this normalisation; `free` leaves the factor
    # unconstrained, fitted from the data alone.
    norm_uncertainty: free
    # Optional, default false. true = the shape's parameters (here the slope) are
    # fitted in every fit, with no constraint term, instead of being fixed at the
    # values above. A polynomial floats as its Bernstein coefficients on the range,
    # each held at 0 or above, so it stays a density.
    float_shape: true
  - name: instrumental
    events_per_day: 15
    shape: {flat: {}}
    # Optional, instead of norm_uncertainty: a signal-free control region (sideband,
    # off-source pointing, blank run) that counts `ratio` times this background's
    # expected yield; its Poisson count constrains the normalisation in every fit.
    control: {ratio: 3.0}

# Optional section; absent = live fraction 1 and nominal rates from the first day.
schedule:
  # Optional, default 1. Fraction of calendar time spent recording data, in (0, 1].
  live_fraction: 0.85
  # Optional, default none. Consecutive periods from day 0, anywhere in the run;
  # `days` is each period's length in calendar days. In a period ALL rates (signal
  # and backgrounds) are multiplied by rate_scale (default 1; it sets the live
  # time), the signal alone also by signal_scale (default 1, e.g. an efficiency
  # change) and each background named in background_scale by its factor (the
  # others keep 1). All factors are 0 or more. Nominal rates after the last
  # period, unless the last has no `days`: it then lasts to the end of the run.
  periods:
    - {days: 14, rate_scale: 0.3}    # e.g. commissioning
    - {days: 30, rate_scale: 0.7}    # e.g. reduced intensity
    - {days: 76}                     # nominal rates until day 120
    - {background_scale: {smooth continuum: 0.5}}   # e.g. shielding from day 120 on
  # Optional. ISO 8601 date of day 0: every day in the outputs then also shows
  # its date. Breaks (they need start) are date ranges without data, both ends
  # included; live days skip them.
  # start: 2027-03-01
  # breaks: [{from: 2027-07-20, to: 2027-08-31}]

# What to project.
plan:
  # Calendar days at which the projection is evaluated: `points` days from
  # `first` (above 0) to `last`, with `spacing` log (even in ratio) or linear,
  # or a list of days, e.g. `days: [30, 91, 182, 365]`.
  days: {first: 1, last: 365, points: 24, spacing: log}
  # Pseudo-experiments generated at each day of the grid.
  toys: 2000
  # Random seed; the same seed and file give the same pseudo-experiments.
  seed: 1
  # Significances to reach, in sigma (one-sided): 3 = evidence, 5 = discovery.
  targets: [3, 5]
  # Optional, default 0.95. Confidence level of the expected exclusion limits (CLs).
  cl: 0.95
"#;

#[cfg(test)]
mod tests {
    use super::TEMPLATE;
    use crate::scenario::{NormUncertainty, Scenario};
    use crate::shapes::SHAPE_KINDS;

    #[test]
    fn template_parses_and_validates_without_warnings() {
        let scenario = Scenario::from_yaml(&TEMPLATE).unwrap_or_else(|error| panic!("{error}"));
        assert!(scenario.warnings().is_empty(), "{:?}", scenario.warnings());
    }

    #[test]
    fn template_shows_every_optional_key_and_each_kind_of_normalisation() {
        let scenario = Scenario::from_yaml(&TEMPLATE).unwrap_or_else(|error| panic!("{error}"));
        assert!(scenario.signal().yield_uncertainty.is_some());
        assert!(scenario.backgrounds().iter().any(|b| b.float_shape));
        let norms: Vec<_> = scenario
            .backgrounds()
            .iter()
            .map(|b| b.norm_uncertainty)
            .collect();
        assert!(norms.contains(&Some(NormUncertainty::Free)));
        assert!(scenario.backgrounds().iter().any(|b| b.control.is_some()));
        assert!(scenario.schedule.live_fraction < 1.0);
        assert!(!scenario.schedule.periods.is_empty());
        assert_eq!(scenario.signal().shape.kind.key, "gaussian");
    }

    /// Each registered shape is listed with its example, explanations
    /// aligned after the longest example.
    #[test]
    fn template_lists_every_registered_shape() {
        for kind in SHAPE_KINDS {
            let line = format!("  #   {}  ", kind.example);
            assert!(TEMPLATE.contains(&line), "{} missing", kind.key);
        }
        assert!(TEMPLATE.contains(
            "  #   {polynomial: {coefficients: [c0, c1, ...]}}   density proportional to c0 + c1 x + c2 x^2 + ...;\n  #                                                 must not be negative anywhere on the range\n"
        ));
    }

    #[test]
    fn template_says_its_numbers_are_invented() {
        assert!(TEMPLATE.contains("INVENTED"));
    }
}
