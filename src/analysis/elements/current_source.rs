//! A current source: drives `dc` amperes out of its `out` pin; open in the
//! small-signal circuit; shot noise when marked as a junction current.

use super::{At, Model};
use crate::analysis::dc::stamps::{Junction, Terminals};
use crate::analysis::linear::LinearKind;
use crate::analysis::mna::{self, Stamp};
use crate::analysis::noise::build::Collect;
use crate::analysis::noise::{Mechanism, NoiseSource};
use crate::analysis::small_signal::Linearising;
use crate::presets::keys;

pub struct CurrentSource {
    pub dc: f64,
}

impl Model for CurrentSource {
    fn stamp_dc<S: Stamp<f64>>(&self, at: &At, s: &mut S, _j: Junction, alpha: f64) {
        let n = &at.element.nodes;
        // Current runs inside the source from `in` to `out`.
        mna::current(s, n[1], n[0], alpha * self.dc);
    }

    fn terminals(&self, at: &At, _x: &[f64], alpha: f64) -> Terminals {
        let n = &at.element.nodes;
        let mut t = Terminals::default();
        t.push(n[0], -alpha * self.dc);
        t.push(n[1], alpha * self.dc);
        t
    }

    fn linearise(&self, at: &At, out: &mut Linearising) {
        let e = at.element;
        // Circuit pins: out, in; the source pushes current out of `out`.
        let k = out.lc.add(
            Some(e.part),
            at.node(0),
            at.node(1),
            LinearKind::CurrentSource,
        );
        out.source_of_part[e.part] = Some(k);
    }

    fn noise(&self, at: &At, out: &mut Collect) {
        let e = at.element;
        let marked = out.doc.parts[e.part]
            .parameter(keys::SHOT_NOISE)
            .is_some_and(|x| x != 0.0);
        if marked {
            out.sources.push(NoiseSource::shot(
                &e.designator,
                Mechanism::SourceShot,
                at.node(0),
                at.node(1),
                self.dc,
            ));
        }
    }
}
