//! What each net is to the drawing: ground, a supply drawn along the top, a
//! negative supply drawn along the bottom, or a signal net.

use crate::document::{Document, PartKind};
use crate::netlist::{NetId, Netlist};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum NetClass {
    Ground,
    /// A positive supply: a rail bus along the top.
    Top,
    /// A negative supply: a rail bus along the bottom.
    Bottom,
    Signal,
}

impl NetClass {
    /// Ground and the supplies: a part tied to one hangs from it.
    pub(super) fn is_fixed(self) -> bool {
        self != NetClass::Signal
    }
    /// Drawn below the parts that hang from it.
    pub(super) fn is_below(self) -> bool {
        matches!(self, NetClass::Ground | NetClass::Bottom)
    }
}

/// One class per net. A rail's net is a supply by the sign of its voltage;
/// a DC voltage source with one side on ground (or on a supply) makes its
/// other side a supply too.
pub(super) fn classify(doc: &Document, nl: &Netlist) -> Vec<NetClass> {
    let mut classes = vec![NetClass::Signal; nl.nets.len()];
    if let Some(g) = nl.ground {
        classes[g] = NetClass::Ground;
    }
    for (i, part) in doc.parts.iter().enumerate() {
        if part.kind == PartKind::Rail {
            let Some(&net) = nl.part_nets[i].first() else {
                continue;
            };
            if classes[net] == NetClass::Signal {
                classes[net] = if part.parameter("voltage").unwrap_or(0.0) < 0.0 {
                    NetClass::Bottom
                } else {
                    NetClass::Top
                };
            }
        }
    }
    // Batteries: positive pin above a fixed net is a top supply; negative
    // pin below one is a bottom supply. Repeat for stacked sources.
    for _ in 0..4 {
        for (i, part) in doc.parts.iter().enumerate() {
            if part.kind != PartKind::VoltageSource {
                continue;
            }
            let (pos, neg) = (nl.part_nets[i][0], nl.part_nets[i][1]);
            let v = part.parameter("voltage").unwrap_or(0.0);
            let set = |c: &mut Vec<NetClass>, n: NetId, up: bool| {
                if c[n] == NetClass::Signal {
                    c[n] = if up { NetClass::Top } else { NetClass::Bottom };
                }
            };
            if classes[neg].is_fixed() && classes[pos] == NetClass::Signal {
                set(&mut classes, pos, v >= 0.0);
            } else if classes[pos].is_fixed() && classes[neg] == NetClass::Signal {
                set(&mut classes, neg, v < 0.0);
            }
        }
    }
    classes
}
