//! A read-only view of the document for recognition: AC ground, bypass, lumps.

use super::*;

pub(crate) struct View<'a> {
    pub(crate) doc: &'a Document,
    pub(crate) nl: &'a Netlist,
    pub(crate) ac_ground: Vec<bool>,
}

pub(crate) fn is_passive(kind: PartKind) -> bool {
    matches!(
        kind,
        PartKind::Resistor
            | PartKind::Capacitor
            | PartKind::PolarisedCapacitor
            | PartKind::Inductor
            | PartKind::Diode
    )
}

fn is_capacitor(kind: PartKind) -> bool {
    matches!(kind, PartKind::Capacitor | PartKind::PolarisedCapacitor)
}

impl<'a> View<'a> {
    pub(crate) fn new(doc: &'a Document, nl: &'a Netlist) -> Self {
        let mut ac_ground = vec![false; nl.nets.len()];
        if let Some(g) = nl.ground {
            ac_ground[g] = true;
        }
        for (pi, p) in doc.parts.iter().enumerate() {
            if p.kind == PartKind::Rail {
                if let Some(&n) = nl.part_nets.get(pi).and_then(|v| v.first()) {
                    ac_ground[n] = true;
                }
            }
        }
        // A DC voltage source against AC ground puts its other side on AC ground too.
        loop {
            let mut changed = false;
            for (pi, p) in doc.parts.iter().enumerate() {
                if p.kind != PartKind::VoltageSource {
                    continue;
                }
                let Some(nets) = nl.part_nets.get(pi) else {
                    continue;
                };
                if nets.len() == 2 && ac_ground[nets[0]] != ac_ground[nets[1]] {
                    ac_ground[nets[0]] = true;
                    ac_ground[nets[1]] = true;
                    changed = true;
                }
            }
            if !changed {
                break;
            }
        }
        View { doc, nl, ac_ground }
    }

    pub(crate) fn nets(&self, part: usize) -> &[NetId] {
        self.nl.part_nets.get(part).map_or(&[], |v| v.as_slice())
    }

    pub(crate) fn pin(&self, part: usize, pin: &str) -> Option<NetId> {
        self.nl.pin_net(self.doc, part, pin)
    }

    /// Parts with a pin on `net` (each once).
    pub(crate) fn parts_on(&self, net: NetId) -> Vec<usize> {
        let mut v: Vec<usize> = self.nl.nets[net].pins.iter().map(|p| p.part).collect();
        v.sort();
        v.dedup();
        v.retain(|&p| self.doc.parts[p].kind != PartKind::Ground);
        v
    }

    /// The other net of a two-pin part, seen from `net`.
    pub(crate) fn other(&self, part: usize, net: NetId) -> Option<NetId> {
        let n = self.nets(part);
        if n.len() != 2 {
            return None;
        }
        if n[0] == net {
            Some(n[1])
        } else if n[1] == net {
            Some(n[0])
        } else {
            None
        }
    }

    pub(crate) fn resistance(&self, part: usize) -> f64 {
        self.doc.parts[part]
            .parameter(keys::RESISTANCE)
            .unwrap_or(f64::NAN)
    }

    /// A capacitor from `net` to AC ground.
    pub(crate) fn bypass_cap(&self, net: NetId) -> Option<usize> {
        self.parts_on(net).into_iter().find(|&p| {
            is_capacitor(self.doc.parts[p].kind)
                && self.other(p, net).is_some_and(|o| self.ac_ground[o])
        })
    }

    pub(crate) fn ac_grounded(&self, net: NetId) -> bool {
        self.ac_ground[net] || self.bypass_cap(net).is_some()
    }

    /// Resistors from `net` to AC ground, excluding `except`.
    pub(crate) fn resistors_to_ground(&self, net: NetId, except: &BTreeSet<usize>) -> Vec<usize> {
        self.parts_on(net)
            .into_iter()
            .filter(|&p| {
                self.doc.parts[p].kind == PartKind::Resistor
                    && !except.contains(&p)
                    && self.other(p, net).is_some_and(|o| self.ac_ground[o])
            })
            .collect()
    }

    pub(crate) fn parallel(&self, parts: &[usize]) -> Option<Lumped> {
        if parts.is_empty() {
            return None;
        }
        let names: Vec<String> = parts.iter().map(|&p| self.doc.parts[p].label()).collect();
        let g: f64 = parts.iter().map(|&p| 1.0 / self.resistance(p)).sum();
        Some(Lumped {
            label: names.join(" ‖ "),
            parts: names,
            resistance: 1.0 / g,
        })
    }

    pub(crate) fn series(&self, parts: &[usize]) -> Option<Lumped> {
        if parts.is_empty() {
            return None;
        }
        let names: Vec<String> = parts.iter().map(|&p| self.doc.parts[p].label()).collect();
        Some(Lumped {
            label: names.join(" + "),
            parts: names,
            resistance: parts.iter().map(|&p| self.resistance(p)).sum(),
        })
    }

    pub(crate) fn emitter_kind(&self, e: NetId) -> (Emitter, Vec<usize>) {
        if self.ac_ground[e] {
            return (Emitter::Plain, Vec::new());
        }
        if self.bypass_cap(e).is_some() {
            return (Emitter::Bypassed, Vec::new());
        }
        // A resistor from the emitter to a bypassed net: partly bypassed.
        let series: Vec<usize> = self
            .parts_on(e)
            .into_iter()
            .filter(|&p| {
                self.doc.parts[p].kind == PartKind::Resistor
                    && self
                        .other(p, e)
                        .is_some_and(|o| !self.ac_ground[o] && self.bypass_cap(o).is_some())
            })
            .collect();
        if !series.is_empty() {
            return (Emitter::PartlyBypassed, series);
        }
        (
            Emitter::Degenerated,
            self.resistors_to_ground(e, &BTreeSet::new()),
        )
    }

    /// (collector, base, emitter) of a bipolar transistor, or the pins
    /// playing those roles on a FET: (drain, gate, source).
    pub(crate) fn terminals(&self, q: usize) -> Option<(NetId, NetId, NetId)> {
        let [c, b, e] = Family::of(self.doc.parts[q].kind)?.pins();
        Some((self.pin(q, c)?, self.pin(q, b)?, self.pin(q, e)?))
    }

    /// The emitter (bipolar) or source (FET) net of a transistor.
    pub(crate) fn common_terminal(&self, q: usize) -> Option<NetId> {
        self.terminals(q).map(|t| t.2)
    }
}
