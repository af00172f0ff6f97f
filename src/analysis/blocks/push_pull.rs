//! Complementary push-pull output: an NPN and a PNP (or an N- and a
//! P-channel MOSFET) with their emitters (sources) joined at the output,
//! directly or each through its own small resistor, collectors (drains) to
//! opposite rails, bases (gates) apart by a bias network — diodes, a VBE
//! multiplier (a transistor with a resistor divider across its
//! collector–emitter) or resistors — or tied together (class B); and the
//! driver that feeds it.
//!
//! The figures are in [`super::push_pull_read`], the junction-temperature
//! loop in [`super::push_pull_thermal`] and the level sweep (THD, power,
//! efficiency, dissipation against level) in [`super::push_pull_levels`].

use super::{BlockKind, BlockTopology, FindContext};
use crate::analysis::stages::view::View;
use crate::document::PartKind;
use crate::netlist::NetId;

/// The roles found in a push-pull block, by document part index.
#[derive(Debug, Clone, PartialEq, Default)]
pub(crate) struct Roles {
    /// The device pulling toward the positive rail (NPN, N-MOSFET) and the
    /// one pulling toward the negative rail (PNP, P-MOSFET).
    pub top: usize,
    pub bottom: usize,
    /// Emitter (source) resistors, top then bottom, when there are.
    pub emitter_resistors: Vec<usize>,
    /// The bias network between the two bases.
    pub bias: Bias,
    /// What feeds each base from its rail: a resistor (part) or a driver
    /// transistor's collector (part), top then bottom.
    pub top_feed: Feed,
    pub bottom_feed: Feed,
}

#[derive(Debug, Clone, PartialEq, Default)]
pub(crate) enum Bias {
    /// Bases tied together: class B.
    #[default]
    Tied,
    Diodes(Vec<usize>),
    /// VBE multiplier: the transistor and its two divider resistors.
    Multiplier(usize, Vec<usize>),
    Resistors(Vec<usize>),
    /// Something else joins the bases (named parts).
    Other(Vec<usize>),
}

#[derive(Debug, Clone, PartialEq, Default)]
pub(crate) enum Feed {
    /// A resistor from the rail to the base.
    Resistor(usize),
    /// A driver transistor's collector (drain) on the base.
    Driver(usize),
    /// A current source.
    Source(usize),
    /// The signal source or something not recognised.
    #[default]
    Other,
}

fn is_top(k: PartKind) -> bool {
    matches!(k, PartKind::Npn | PartKind::NMosfet)
}

fn is_bottom(k: PartKind) -> bool {
    matches!(k, PartKind::Pnp | PartKind::PMosfet)
}

/// The net the emitter reaches through its own resistor, if `e` holds only
/// the transistor and that one resistor.
fn through_resistor(v: &View, q: usize, e: NetId) -> Option<(usize, NetId)> {
    let on = v.parts_on(e);
    if on.len() != 2 {
        return None;
    }
    let r = *on.iter().find(|&&p| p != q)?;
    (v.doc.parts[r].kind == PartKind::Resistor).then_some(())?;
    Some((r, v.other(r, e)?))
}

/// The bias network between the bases `bt` and `bb` (a chain of two-pin
/// parts through nets that hold nothing else, or a VBE multiplier).
fn bias_between(v: &View, bt: NetId, bb: NetId, skip: &[usize]) -> Option<Bias> {
    if bt == bb {
        return Some(Bias::Tied);
    }
    let doc = v.doc;
    // A VBE multiplier: a transistor with its collector on one base and its
    // emitter on the other, its base on a divider between them.
    for p in v.parts_on(bt) {
        if skip.contains(&p) || !doc.parts[p].kind.is_transistor() {
            continue;
        }
        let Some((c, b, e)) = v.terminals(p) else {
            continue;
        };
        if !((c == bt && e == bb) || (c == bb && e == bt)) {
            continue;
        }
        let divider: Vec<usize> = v
            .parts_on(b)
            .into_iter()
            .filter(|&r| {
                doc.parts[r].kind == PartKind::Resistor
                    && v.other(r, b).is_some_and(|o| o == bt || o == bb)
            })
            .collect();
        if divider.len() == 2 {
            return Some(Bias::Multiplier(p, divider));
        }
    }
    // A series chain of diodes and resistors.
    let mut chain = Vec::new();
    let mut at = bt;
    for _ in 0..6 {
        let next: Vec<(usize, NetId)> = v
            .parts_on(at)
            .into_iter()
            .filter(|&p| {
                !skip.contains(&p)
                    && !chain.contains(&p)
                    && matches!(
                        doc.parts[p].kind,
                        PartKind::Diode | PartKind::Resistor | PartKind::VoltageSource
                    )
            })
            .filter_map(|p| Some((p, v.other(p, at)?)))
            .filter(|&(_, o)| !v.ac_grounded(o))
            .collect();
        // Straight to the other base.
        if let Some(&(p, _)) = next.iter().find(|&&(_, o)| o == bb) {
            chain.push(p);
            let diodes = chain.iter().all(|&p| doc.parts[p].kind == PartKind::Diode);
            let resistors = chain
                .iter()
                .all(|&p| doc.parts[p].kind == PartKind::Resistor);
            return Some(if diodes {
                Bias::Diodes(chain)
            } else if resistors {
                Bias::Resistors(chain)
            } else {
                Bias::Other(chain)
            });
        }
        // Through an intermediate net that holds only the two chain parts.
        let step = next.into_iter().find(|&(p, o)| {
            o != bt && {
                let on = v.parts_on(o);
                on.len() == 2 && on.contains(&p)
            }
        })?;
        chain.push(step.0);
        at = step.1;
    }
    None
}

/// What feeds a base from outside the block.
fn feed(v: &View, base: NetId, block: &[usize]) -> Feed {
    let doc = v.doc;
    for p in v.parts_on(base) {
        if block.contains(&p) {
            continue;
        }
        match doc.parts[p].kind {
            k if k.is_transistor() && v.terminals(p).is_some_and(|(c, _, _)| c == base) => {
                return Feed::Driver(p);
            }
            PartKind::Resistor if v.other(p, base).is_some_and(|o| v.ac_grounded(o)) => {
                return Feed::Resistor(p);
            }
            PartKind::CurrentSource => return Feed::Source(p),
            _ => {}
        }
    }
    Feed::Other
}

pub(crate) fn find(cx: &FindContext) -> Vec<BlockTopology> {
    let v = cx.view;
    let doc = v.doc;
    let mut out: Vec<BlockTopology> = Vec::new();
    let free = |p: usize, out: &[BlockTopology]| {
        !cx.taken.contains(&p) && !out.iter().any(|b| b.parts.contains(&p))
    };
    for t in 0..doc.parts.len() {
        if !is_top(doc.parts[t].kind) || !free(t, &out) {
            continue;
        }
        let Some((ct, bt, et)) = v.terminals(t) else {
            continue;
        };
        for b in 0..doc.parts.len() {
            if !is_bottom(doc.parts[b].kind)
                || !free(b, &out)
                || doc.parts[t].kind.is_fet() != doc.parts[b].kind.is_fet()
            {
                continue;
            }
            let Some((cb, bb, eb)) = v.terminals(b) else {
                continue;
            };
            // Collectors on two different AC-grounded nets (the rails).
            if ct == cb || !v.ac_grounded(ct) || !v.ac_grounded(cb) {
                continue;
            }
            // Emitters joined at the output, directly or each through its own resistor.
            let (output, emitter_resistors) = if et == eb {
                (et, Vec::new())
            } else {
                match (through_resistor(v, t, et), through_resistor(v, b, eb)) {
                    (Some((rt, nt)), Some((rb, nb))) if nt == nb => (nt, vec![rt, rb]),
                    _ => continue,
                }
            };
            if v.ac_grounded(output) {
                continue;
            }
            let Some(bias) = bias_between(v, bt, bb, &[t, b]) else {
                continue;
            };
            let mut block = vec![t, b];
            block.extend(&emitter_resistors);
            match &bias {
                Bias::Tied => {}
                Bias::Diodes(p) | Bias::Resistors(p) | Bias::Other(p) => block.extend(p),
                Bias::Multiplier(q, rs) => {
                    block.push(*q);
                    block.extend(rs);
                }
            }
            let roles = Roles {
                top: t,
                bottom: b,
                emitter_resistors,
                top_feed: feed(v, bt, &block),
                bottom_feed: feed(v, bb, &block),
                bias,
            };
            out.push(topology(v, &roles, bt, bb, output));
            break;
        }
    }
    out
}

/// The roles of a found block again (the reader works from the topology).
pub(crate) fn roles(v: &View, b: &BlockTopology) -> Option<(Roles, NetId, NetId)> {
    let (t, bo) = (b.parts[0], b.parts[1]);
    let (_, bt, _) = v.terminals(t)?;
    let (_, bb, _) = v.terminals(bo)?;
    let emitter_resistors: Vec<usize> = b
        .members
        .iter()
        .copied()
        .filter(|&p| {
            v.doc.parts[p].kind == PartKind::Resistor
                && [t, bo].iter().any(|&q| {
                    v.common_terminal(q)
                        .is_some_and(|e| v.nets(p).contains(&e) && !v.nets(p).contains(&bt))
                })
        })
        .collect();
    let bias = bias_between(v, bt, bb, &[t, bo])?;
    let mut block = b.parts.clone();
    block.extend(&b.members);
    Some((
        Roles {
            top: t,
            bottom: bo,
            emitter_resistors,
            top_feed: feed(v, bt, &block),
            bottom_feed: feed(v, bb, &block),
            bias,
        },
        bt,
        bb,
    ))
}

fn names(v: &View, parts: &[usize]) -> String {
    let l: Vec<String> = parts.iter().map(|&p| v.doc.parts[p].label()).collect();
    match l.len() {
        0 => String::new(),
        1 => l[0].clone(),
        n => format!("{} and {}", l[..n - 1].join(", "), l[n - 1]),
    }
}

/// Plain words for the bias network.
pub(crate) fn bias_words(v: &View, bias: &Bias) -> String {
    match bias {
        Bias::Tied => "bases tied together, no bias network (class B)".into(),
        Bias::Diodes(d) => format!(
            "biased by {} diode{} ({})",
            d.len(),
            if d.len() == 1 { "" } else { "s" },
            names(v, d)
        ),
        Bias::Multiplier(q, rs) => format!(
            "biased by a VBE multiplier ({} with the divider {})",
            v.doc.parts[*q].label(),
            names(v, rs)
        ),
        Bias::Resistors(r) => format!("biased by resistance ({})", names(v, r)),
        Bias::Other(p)
            if p.iter()
                .all(|&q| v.doc.parts[q].kind == PartKind::VoltageSource) =>
        {
            format!("biased by a fixed voltage ({})", names(v, p))
        }
        Bias::Other(p) => format!("biased by {}", names(v, p)),
    }
}

fn feed_words(v: &View, f: &Feed, base: &str) -> Option<String> {
    match f {
        Feed::Resistor(r) => Some(format!(
            "{} feeds {base} from the rail",
            v.doc.parts[*r].label()
        )),
        Feed::Driver(q) => Some(format!(
            "{} drives {base} from its collector",
            v.doc.parts[*q].label()
        )),
        Feed::Source(s) => Some(format!(
            "the current source {} feeds {base}",
            v.doc.parts[*s].label()
        )),
        Feed::Other => None,
    }
}

fn topology(v: &View, r: &Roles, bt: NetId, bb: NetId, output: NetId) -> BlockTopology {
    let doc = v.doc;
    let fet = doc.parts[r.top].kind.is_fet();
    let mut members: Vec<usize> = Vec::new();
    match &r.bias {
        Bias::Tied => {}
        Bias::Diodes(p) | Bias::Resistors(p) | Bias::Other(p) => members.extend(p),
        Bias::Multiplier(q, rs) => {
            members.push(*q);
            members.extend(rs);
        }
    }
    members.extend(&r.emitter_resistors);
    let mut words = format!("push-pull output, {}", bias_words(v, &r.bias));
    if r.emitter_resistors.is_empty() {
        words.push_str(&format!(
            ", {} joined at the output",
            if fet { "sources" } else { "emitters" }
        ));
    } else {
        words.push_str(&format!(
            ", {} resistors {}",
            if fet { "source" } else { "emitter" },
            names(v, &r.emitter_resistors)
        ));
    }
    let mut notes = vec![format!(
        "{} pushes toward the positive rail and {} pulls toward the negative rail; \
         each conducts about half the cycle, the other is not its load",
        doc.parts[r.top].label(),
        doc.parts[r.bottom].label()
    )];
    let bn = |n: NetId| v.nl.nets[n].name.clone();
    for (f, base) in [(&r.top_feed, bn(bt)), (&r.bottom_feed, bn(bb))] {
        if let Some(w) = feed_words(v, f, &base) {
            notes.push(w);
        }
    }
    let mut inputs = vec![bt];
    if bb != bt {
        inputs.push(bb);
    }
    BlockTopology {
        kind: BlockKind::PushPull,
        words,
        parts: vec![r.top, r.bottom],
        members,
        inputs,
        outputs: vec![output],
        notes,
    }
}
