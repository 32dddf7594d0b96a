//! The channels: each listed one named once, and each checked section by
//! section (observable, signal, backgrounds, the shared names they use),
//! its errors placed inside it.

use super::backgrounds::{refuse_free_background_in_one_bin, validate_backgrounds};
use super::observable::validate_observable;
use super::shared_uncertainties::validate_shared_names;
use super::signal::validate_signal;
use super::values::{Checked, require_own_name};
use crate::scenario::{Channel, ChannelSyntax, Scenario};
use std::collections::BTreeMap;

/// The dotted path of channel `index`'s fields: none for a single channel
/// written at the top level, `channels[index].` in a list.
pub(super) fn channel_path(scenario: &Scenario, index: usize) -> String {
    scenario.channel_syntax.path(index)
}

/// Each listed channel needs a name of its own.
pub(super) fn validate_channel_names(scenario: &Scenario) -> Checked {
    if scenario.channel_syntax == ChannelSyntax::Single {
        return Ok(());
    }
    let names: Vec<&str> = scenario.channels.iter().map(|c| c.name.as_str()).collect();
    (0..names.len()).try_for_each(|index| require_own_name("channels", "channel", &names, index))
}

/// One channel's observable, signal and backgrounds, with paths inside the
/// channel; every `shared` name must be one of `declared`. A signal made
/// from a `detector_level` one may have rate 0 (a channel of efficiency 0).
pub(super) fn validate_channel(
    channel: &Channel,
    declared: &BTreeMap<String, f64>,
    detector_level: bool,
) -> Checked {
    let range = validate_observable(&channel.observable)?;
    validate_signal(&channel.signal, range, detector_level)?;
    validate_backgrounds(&channel.backgrounds, range)?;
    refuse_free_background_in_one_bin(channel)?;
    validate_shared_names("signal.shared", &channel.signal.shared, declared)?;
    for (index, background) in channel.backgrounds.iter().enumerate() {
        let field = format!("backgrounds[{index}].shared");
        validate_shared_names(&field, &background.shared, declared)?;
    }
    Ok(())
}
