//! The clip search beside a push-pull output: one half reaching cut-off is
//! normal in class B and AB (each half carries about half the cycle), so it
//! is no limit; the load-line estimate of a single stage does not apply, the
//! block's own estimate of the largest output (and what limits it) does.

use super::push_pull::Feed;
use super::push_pull_levels::find_block;
use super::BlockKind;
use crate::analysis::circuit::Circuit;
use crate::analysis::transient::clip::{Approach, Excursion};
use crate::document::Document;
use crate::netlist::Netlist;

/// What the clip search needs to know of a push-pull output.
pub(crate) struct PushPullClip {
    /// Designators of the two halves.
    pub halves: [String; 2],
    /// The driver transistor and the resistor feeding the other base, when
    /// one base is driven and the other fed from the rail.
    pub driver_and_feed: Option<(String, String, String)>,
    /// The block's estimate: source amplitude, words, limit.
    pub estimate: Option<(f64, String, String)>,
}

pub(crate) fn reading(doc: &Document, nl: &Netlist, c: &Circuit) -> Option<PushPullClip> {
    let roles = find_block(doc, nl)?;
    let label = |p: usize| doc.parts[p].label();
    let driver_and_feed = match (&roles.top_feed, &roles.bottom_feed) {
        (Feed::Resistor(r), Feed::Driver(q)) => Some((label(*q), label(*r), label(roles.top))),
        (Feed::Driver(q), Feed::Resistor(r)) => Some((label(*q), label(*r), label(roles.bottom))),
        _ => None,
    };
    let estimate = crate::analysis::dc::solve_circuit(c).ok().and_then(|op| {
        let a = crate::analysis::small_signal::analyse(doc, nl, c, &op);
        let gain = a.midband.chain.source_gain?.abs();
        let b = a.blocks.iter().find(|b| b.kind == BlockKind::PushPull)?;
        let f = b.figure("largest_output")?;
        let v = f.estimate?;
        (gain > 0.0 && v > 0.0).then(|| {
            (
                v / gain,
                format!("push-pull output {}", b.transistors.join(", ")),
                f.estimate_from.clone().unwrap_or_default(),
            )
        })
    });
    Some(PushPullClip {
        halves: [label(roles.top), label(roles.bottom)],
        driver_and_feed,
        estimate,
    })
}

impl PushPullClip {
    /// Leave out the halves' cut-off (an excursion or an approach).
    pub(crate) fn filter(
        &self,
        ex: Vec<Excursion>,
        near: Vec<Approach>,
    ) -> (Vec<Excursion>, Vec<Approach>) {
        let normal = |t: &str, r: &str| self.halves.iter().any(|h| h == t) && r == "cut-off";
        (
            ex.into_iter()
                .filter(|e| !normal(&e.transistor, &e.region))
                .collect(),
            near.into_iter()
                .filter(|a| !normal(&a.transistor, &a.region))
                .collect(),
        )
    }

    /// Plain words for an excursion that is the block's limit in disguise:
    /// the driver cut off means the rail resistor's whole current goes to
    /// the other half's base and it can supply no more.
    pub(crate) fn explain(&self, transistor: &str, region: &str, verb: &str) -> Option<String> {
        let (q, r, half) = self.driver_and_feed.as_ref()?;
        (transistor == q && region == "cut-off").then(|| {
            format!(
                "{q} {verb} cut-off: nearly all of {r}'s current goes to {half}'s base and \
                 {r} cannot supply more base current"
            )
        })
    }
}
