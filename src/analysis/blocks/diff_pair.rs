//! Differential pair: two transistors of one kind whose emitters (sources)
//! meet at one tail net, directly or each through its own resistor, the tail
//! fed by a resistor to a rail or ground, a current-source part, or the
//! collector (drain) of a transistor working as a current source.
//!
//! Variants: the tail's kind; the output single-ended at one collector, or
//! differential (the load floating between the two collectors); an active
//! load (a current mirror whose reference and output collectors are the
//! pair's collectors — the mirror stays its own block). The inputs are the
//! two bases; one of them on AC ground is a single-ended drive.
//!
//! The figures are in [`super::diff_pair_read`].

use super::{BlockKind, BlockTopology, FindContext};
use crate::analysis::stages::view::View;
use crate::document::PartKind;
use crate::netlist::NetId;

/// What feeds the tail net.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Tail {
    /// A resistor from the tail to AC ground (a rail or ground).
    Resistor(usize),
    /// A current-source part.
    CurrentSource(usize),
    /// A transistor whose collector (drain) is the tail.
    Transistor(usize),
}

impl Tail {
    pub(crate) fn part(self) -> usize {
        match self {
            Tail::Resistor(p) | Tail::CurrentSource(p) | Tail::Transistor(p) => p,
        }
    }
}

/// A recognised pair with everything the figures need.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Pair {
    /// The two transistors, in document order.
    pub q: [usize; 2],
    /// Collector (drain), base (gate), emitter (source) nets of each.
    pub c: [NetId; 2],
    pub b: [NetId; 2],
    pub e: [NetId; 2],
    pub tail_net: NetId,
    /// Emitter (source) resistors from each emitter to the tail, if any.
    pub degeneration: Option<[usize; 2]>,
    pub tail: Tail,
    /// The current mirror loading the collectors: (reference side, output side).
    pub mirror: Option<(usize, usize)>,
    /// The project's load, when it sits between the two collectors.
    pub floating_load: Option<usize>,
    /// The collector the single-ended figures are taken at (index into `q`).
    pub output_side: usize,
}

/// The one resistor from `e` to another net, when it is the only other part on `e`.
fn lone_resistor(v: &View, e: NetId, q: usize) -> Option<(usize, NetId)> {
    let others: Vec<usize> = v.parts_on(e).into_iter().filter(|&p| p != q).collect();
    if others.len() != 1 || v.doc.parts[others[0]].kind != PartKind::Resistor {
        return None;
    }
    Some((others[0], v.other(others[0], e)?))
}

/// Read `q1`, `q2` as a differential pair, if they are one.
pub(crate) fn pair_of(v: &View, q1: usize, q2: usize) -> Option<Pair> {
    let doc = v.doc;
    if q1 == q2 || doc.parts[q1].kind != doc.parts[q2].kind || !doc.parts[q1].kind.is_transistor() {
        return None;
    }
    let (c1, b1, e1) = v.terminals(q1)?;
    let (c2, b2, e2) = v.terminals(q2)?;
    if c1 == c2 || v.ac_grounded(c1) && v.ac_grounded(c2) {
        return None;
    }
    let (tail_net, degeneration) = if e1 == e2 {
        (e1, None)
    } else {
        let (ra, ta) = lone_resistor(v, e1, q1)?;
        let (rb, tb) = lone_resistor(v, e2, q2)?;
        if ta != tb || ra == rb {
            return None;
        }
        (ta, Some([ra, rb]))
    };
    if v.ac_grounded(tail_net) {
        return None;
    }
    let inner: Vec<usize> = match degeneration {
        Some(d) => d.to_vec(),
        None => vec![q1, q2],
    };
    let feeds: Vec<usize> = v
        .parts_on(tail_net)
        .into_iter()
        .filter(|p| !inner.contains(p))
        .collect();
    let [f] = feeds.as_slice() else {
        return None;
    };
    let tail = match doc.parts[*f].kind {
        PartKind::Resistor if v.other(*f, tail_net).is_some_and(|o| v.ac_ground[o]) => {
            Tail::Resistor(*f)
        }
        PartKind::CurrentSource => Tail::CurrentSource(*f),
        k if k.is_transistor() && v.terminals(*f).is_some_and(|t| t.0 == tail_net) => {
            Tail::Transistor(*f)
        }
        _ => return None,
    };
    // An active load: a diode-connected transistor on one collector whose
    // base also drives a transistor with its collector on the other.
    let mut mirror = None;
    for r in 0..doc.parts.len() {
        if r == q1 || r == q2 || !doc.parts[r].kind.is_transistor() {
            continue;
        }
        let Some((cr, br, _)) = v.terminals(r) else {
            continue;
        };
        if cr != br || (cr != c1 && cr != c2) {
            continue;
        }
        let want = if cr == c1 { c2 } else { c1 };
        let o = (0..doc.parts.len()).find(|&o| {
            o != r
                && doc.parts[o].kind == doc.parts[r].kind
                && v.terminals(o).is_some_and(|t| t.1 == br && t.0 == want)
        });
        if let Some(o) = o {
            mirror = Some((r, o));
            break;
        }
    }
    let load = doc
        .signal
        .load
        .as_deref()
        .and_then(|d| doc.parts.iter().position(|p| p.designator == d));
    let floating_load = load.filter(|&l| {
        let n = v.nets(l);
        n.len() == 2 && (n[0] == c1 && n[1] == c2 || n[0] == c2 && n[1] == c1)
    });
    let output_side = match (mirror, load) {
        (Some((_, o)), _) => usize::from(v.terminals(o).map(|t| t.0) == Some(c2)),
        (None, Some(l)) if floating_load.is_none() && v.nets(l).contains(&c1) => 0,
        _ => 1,
    };
    Some(Pair {
        q: [q1, q2],
        c: [c1, c2],
        b: [b1, b2],
        e: [e1, e2],
        tail_net,
        degeneration,
        tail,
        mirror,
        floating_load,
        output_side,
    })
}

/// The pair of a block found by [`find`] (its two transistors come first).
pub(crate) fn pair_of_block(v: &View, b: &BlockTopology) -> Option<Pair> {
    pair_of(v, *b.parts.first()?, *b.parts.get(1)?)
}

pub(crate) fn find(cx: &FindContext) -> Vec<BlockTopology> {
    let v = cx.view;
    let doc = v.doc;
    let label = |p: usize| doc.parts[p].label();
    let transistors: Vec<usize> = (0..doc.parts.len())
        .filter(|&p| doc.parts[p].kind.is_transistor() && !cx.taken.contains(&p))
        .collect();
    // Candidates share an emitter (source) net, or a net one resistor away
    // from each emitter, off AC ground: found by net, not by trying every
    // two transistors (a long chain has hundreds).
    let mut by_net: std::collections::BTreeMap<NetId, Vec<usize>> = Default::default();
    for &q in &transistors {
        let Some((_, _, e)) = v.terminals(q) else {
            continue;
        };
        let mut nets = vec![e];
        for r in v.parts_on(e) {
            if doc.parts[r].kind == PartKind::Resistor {
                nets.extend(v.other(r, e));
            }
        }
        for n in nets {
            if !v.ac_ground[n] {
                by_net.entry(n).or_default().push(q);
            }
        }
    }
    let mut candidates: Vec<(usize, usize)> = by_net
        .values()
        .flat_map(|qs| {
            qs.iter()
                .enumerate()
                .flat_map(move |(i, &a)| qs[i + 1..].iter().map(move |&b| (a.min(b), a.max(b))))
        })
        .collect();
    candidates.sort_unstable();
    candidates.dedup();
    let mut out: Vec<BlockTopology> = Vec::new();
    for (q1, q2) in candidates {
        {
            if out
                .iter()
                .any(|b| b.parts.contains(&q1) || b.parts.contains(&q2))
            {
                continue;
            }
            let Some(p) = pair_of(v, q1, q2) else {
                continue;
            };
            let fet = doc.parts[q1].kind.is_fet();
            let (emitter, collector, base) = if fet {
                ("source", "drain", "gate")
            } else {
                ("emitter", "collector", "base")
            };
            let tail = match p.tail {
                Tail::Resistor(r) => format!("resistor tail {}", label(r)),
                Tail::CurrentSource(s) => format!("current-source tail {}", label(s)),
                Tail::Transistor(t) => {
                    format!("current-source tail {} (its {collector})", label(t))
                }
            };
            let output = if let Some((r, o)) = p.mirror {
                format!(
                    "loaded by the current mirror {}, {}, output at {}",
                    label(r),
                    label(o),
                    v.nl.nets[p.c[p.output_side]].name
                )
            } else if let Some(l) = p.floating_load {
                format!(
                    "differential output across {} (between {} and {})",
                    label(l),
                    v.nl.nets[p.c[0]].name,
                    v.nl.nets[p.c[1]].name
                )
            } else {
                format!(
                    "single-ended output at the {collector} of {} ({})",
                    label(p.q[p.output_side]),
                    v.nl.nets[p.c[p.output_side]].name
                )
            };
            let mut words = format!("differential pair, {tail}, {output}");
            let mut notes = vec![format!(
                "{} and {} have their {emitter}s joined at {}{}",
                label(q1),
                label(q2),
                v.nl.nets[p.tail_net].name,
                match p.degeneration {
                    Some([a, b]) => format!(" through {} and {}", label(a), label(b)),
                    None => String::new(),
                }
            )];
            let grounded: Vec<usize> = (0..2).filter(|&k| v.ac_grounded(p.b[k])).collect();
            if grounded.len() == 1 {
                let k = grounded[0];
                words.push_str(", single-ended drive");
                notes.push(format!(
                    "single-ended drive: the {base} of {} is on AC ground, the signal enters at {}",
                    label(p.q[k]),
                    label(p.q[1 - k])
                ));
            }
            if p.b[0] == p.b[1] {
                notes.push(format!(
                    "both {base}s are on {}: only a common-mode signal reaches the pair",
                    v.nl.nets[p.b[0]].name
                ));
            }
            if let Some((r, o)) = p.mirror {
                notes.push(format!(
                    "the current mirror {}, {} is its own block; it turns the pair's two \
                     {collector} currents into one output",
                    label(r),
                    label(o)
                ));
            }
            let mut members: Vec<usize> = p.degeneration.map_or(Vec::new(), |d| d.to_vec());
            members.push(p.tail.part());
            let outputs = if p.floating_load.is_some()
                || (p.mirror.is_none() && p.output_side == 1 && doc.signal.load.is_none())
            {
                p.c.to_vec()
            } else {
                vec![p.c[p.output_side]]
            };
            out.push(BlockTopology {
                kind: BlockKind::DifferentialPair,
                words,
                parts: vec![q1, q2],
                members,
                inputs: p.b.to_vec(),
                outputs,
                notes,
            });
        }
    }
    out
}
