//! Blocks: groups of transistors a designer reads as one thing — a
//! differential pair, a push-pull output, a current mirror, a cascode, a
//! Darlington or complementary-feedback pair — with their own inputs,
//! outputs and figures.
//!
//! The seam: each block kind lives in its own file here and adds one row to
//! [`READERS`]. A reader finds its blocks from the topology (document and
//! netlist through the recognition [`View`]) and, given the solved operating
//! point and the small-signal circuit, gives each block its figures: the
//! exact value from the circuit beside the textbook estimate where the
//! estimate's formula applies, or the reason there is none. Nothing here
//! changes the single-transistor stages of [`super::stages`]; a stage whose
//! transistor belongs to a block is shown under the block (its `stages`).

mod compound;
mod diff_pair;
mod diff_pair_read;
mod mirror;
mod push_pull;
pub(crate) mod push_pull_clip;
pub mod push_pull_levels;
mod push_pull_read;
mod push_pull_stages;
mod push_pull_thermal;

use super::dc::OperatingPoint;
use super::small_signal::SmallSignal;
use super::stages::view::View;
use super::stages::Chain;
use crate::document::Document;
use crate::netlist::{NetId, Netlist};
use crate::units::Unit;
use serde::Serialize;

/// What a block is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum BlockKind {
    DifferentialPair,
    PushPull,
    CurrentMirror,
    Cascode,
    Darlington,
    ComplementaryFeedbackPair,
}

impl BlockKind {
    pub fn words(self) -> &'static str {
        match self {
            BlockKind::DifferentialPair => "differential pair",
            BlockKind::PushPull => "push-pull output",
            BlockKind::CurrentMirror => "current mirror",
            BlockKind::Cascode => "cascode",
            BlockKind::Darlington => "Darlington pair",
            BlockKind::ComplementaryFeedbackPair => "complementary feedback pair",
        }
    }
}

/// A block as found in the topology, before any figures.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct BlockTopology {
    pub kind: BlockKind,
    /// Plain words for the variant, e.g. "differential pair, resistor tail,
    /// output across RL"; starts with the kind's words.
    pub words: String,
    /// Transistors of the block (document part indices), in reading order.
    pub parts: Vec<usize>,
    /// Other parts that belong to it (tail resistor, bias diodes, …).
    pub members: Vec<usize>,
    /// Input nets (one per input), and output nets (one, or two for a
    /// differential output; a floating load's two nets).
    pub inputs: Vec<NetId>,
    pub outputs: Vec<NetId>,
    /// Notes from recognition, in plain words.
    pub notes: Vec<String>,
}

/// One figure of a block: the exact value beside the estimate, or why no
/// estimate applies.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BlockFigure {
    /// Stable key for scripts, e.g. `differential_gain`.
    pub key: String,
    /// Short label for cards, e.g. `Ad`.
    pub label: String,
    /// Plain words, e.g. "differential gain, output across RL".
    pub name: String,
    /// Written as its symbol (`Ω`, `V`, `W`, …; empty for a ratio).
    #[serde(serialize_with = "unit_symbol")]
    pub unit: Unit,
    pub exact: Option<f64>,
    pub estimate: Option<f64>,
    /// (estimate − exact)/exact × 100.
    pub difference_percent: Option<f64>,
    /// The estimate's formula and what it neglects, in plain words.
    pub estimate_from: Option<String>,
    /// Why there is no estimate (the formula does not apply).
    pub no_estimate_because: Option<String>,
}

fn unit_symbol<S: serde::Serializer>(u: &Unit, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(u.symbol())
}

impl BlockFigure {
    /// An exact figure with its estimate and the formula it came from.
    pub fn with_estimate(
        key: &str,
        label: &str,
        name: &str,
        unit: Unit,
        exact: Option<f64>,
        estimate: f64,
        from: &str,
    ) -> Self {
        let difference_percent = match exact {
            Some(x) if x != 0.0 && x.is_finite() && estimate.is_finite() => {
                Some((estimate - x) / x * 100.0)
            }
            _ => None,
        };
        BlockFigure {
            key: key.into(),
            label: label.into(),
            name: name.into(),
            unit,
            exact,
            estimate: Some(estimate),
            difference_percent,
            estimate_from: Some(from.into()),
            no_estimate_because: None,
        }
    }

    /// An exact figure for which no estimate applies, with the reason.
    pub fn exact_only(
        key: &str,
        label: &str,
        name: &str,
        unit: Unit,
        exact: Option<f64>,
        because: &str,
    ) -> Self {
        BlockFigure {
            key: key.into(),
            label: label.into(),
            name: name.into(),
            unit,
            exact,
            estimate: None,
            difference_percent: None,
            estimate_from: None,
            no_estimate_because: (!because.is_empty()).then(|| because.into()),
        }
    }
}

/// A block with its figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Block {
    pub kind: BlockKind,
    pub words: String,
    /// Designators of the transistors.
    pub transistors: Vec<String>,
    /// Designators of the other parts of the block.
    pub members: Vec<String>,
    pub input_nets: Vec<String>,
    pub output_nets: Vec<String>,
    /// Indices into the chain's stages this block takes in.
    pub stages: Vec<usize>,
    pub figures: Vec<BlockFigure>,
    pub notes: Vec<String>,
    /// Designer warnings about the block, each naming a part.
    pub warnings: Vec<String>,
    #[serde(skip)]
    pub parts: Vec<usize>,
}

impl Block {
    pub fn figure(&self, key: &str) -> Option<&BlockFigure> {
        self.figures.iter().find(|f| f.key == key)
    }
}

/// What a reader may look at to find blocks.
pub(crate) struct FindContext<'a> {
    pub view: &'a View<'a>,
    /// The single-transistor reading (for readers that follow the signal).
    pub chain: &'a Chain,
    /// Transistors already taken by a block found earlier (a reader skips them).
    pub taken: &'a [usize],
}

/// What a reader may look at to compute a block's figures.
pub(crate) struct FigureContext<'a> {
    pub doc: &'a Document,
    pub netlist: &'a Netlist,
    pub op: &'a OperatingPoint,
    pub small_signal: &'a SmallSignal,
    pub chain: &'a Chain,
    /// The single-transistor stages' midband figures, in chain order.
    pub midband: &'a super::figures::Midband,
}

/// The figures a reader gives one block.
#[derive(Debug, Clone, PartialEq, Default)]
pub(crate) struct BlockReading {
    pub figures: Vec<BlockFigure>,
    pub notes: Vec<String>,
    pub warnings: Vec<String>,
}

/// One block kind: how to find it and how to read it.
pub(crate) struct Reader {
    pub kind: BlockKind,
    pub find: fn(&FindContext) -> Vec<BlockTopology>,
    pub read: fn(&FigureContext, &BlockTopology) -> BlockReading,
}

/// Every block kind, in the order they are looked for (a transistor joins
/// the first block that claims it).
pub(crate) const READERS: &[Reader] = &[
    Reader {
        kind: BlockKind::PushPull,
        find: push_pull::find,
        read: push_pull_read::read,
    },
    Reader {
        kind: BlockKind::DifferentialPair,
        find: diff_pair::find,
        read: diff_pair_read::read,
    },
    Reader {
        kind: BlockKind::CurrentMirror,
        find: mirror::find,
        read: mirror::read,
    },
    Reader {
        kind: BlockKind::Cascode,
        find: compound::find_cascodes,
        read: compound::read_cascode,
    },
    Reader {
        kind: BlockKind::Darlington,
        find: compound::find_pairs,
        read: compound::read_pair,
    },
    Reader {
        kind: BlockKind::ComplementaryFeedbackPair,
        find: |_| Vec::new(),
        read: compound::read_pair,
    },
];

/// Find the blocks of a document from its topology.
pub(crate) fn find(doc: &Document, nl: &Netlist, chain: &Chain) -> Vec<BlockTopology> {
    let view = View::new(doc, nl);
    let mut taken: Vec<usize> = Vec::new();
    let mut out = Vec::new();
    for reader in READERS {
        let found = (reader.find)(&FindContext {
            view: &view,
            chain,
            taken: &taken,
        });
        for b in found {
            if b.parts.iter().any(|p| taken.contains(p)) {
                continue;
            }
            taken.extend(b.parts.iter().copied());
            out.push(b);
        }
    }
    out
}

/// The blocks of a document from its topology alone (no solve): each
/// block's kind and its transistors' designators, in the order found.
pub fn recognise(doc: &Document, nl: &Netlist) -> Vec<(BlockKind, Vec<String>)> {
    let chain = super::stages::recognise(doc, nl);
    find(doc, nl, &chain)
        .into_iter()
        .map(|b| {
            (
                b.kind,
                b.parts.iter().map(|&p| doc.parts[p].label()).collect(),
            )
        })
        .collect()
}

/// Read the single-transistor stages again beside the blocks that take them
/// in (a push-pull half's estimates, load and swing).
pub(crate) fn revise_stages(
    blocks: &[Block],
    midband: &mut super::figures::Midband,
    load: Option<&str>,
) {
    push_pull_stages::revise(blocks, midband, load);
}

/// Give every block its figures.
pub(crate) fn read(cx: &FigureContext, found: &[BlockTopology]) -> Vec<Block> {
    found
        .iter()
        .map(|b| {
            let reading = READERS
                .iter()
                .find(|r| r.kind == b.kind)
                .map(|r| (r.read)(cx, b))
                .unwrap_or_default();
            let label = |p: &usize| cx.doc.parts[*p].label();
            let net = |n: &NetId| cx.netlist.nets[*n].name.clone();
            let mut notes = b.notes.clone();
            notes.extend(reading.notes);
            Block {
                kind: b.kind,
                words: b.words.clone(),
                transistors: b.parts.iter().map(label).collect(),
                members: b.members.iter().map(label).collect(),
                input_nets: b.inputs.iter().map(net).collect(),
                output_nets: b.outputs.iter().map(net).collect(),
                stages: cx
                    .chain
                    .stages
                    .iter()
                    .enumerate()
                    .filter(|(_, s)| b.parts.contains(&s.part))
                    .map(|(i, _)| i)
                    .collect(),
                figures: reading.figures,
                notes,
                warnings: reading.warnings,
                parts: b.parts.clone(),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn difference_is_against_the_exact_value() {
        // invariant: (estimate − exact)/exact × 100
        let f = BlockFigure::with_estimate("k", "K", "k", Unit::None, Some(-50.0), -51.0, "x");
        assert!((f.difference_percent.unwrap() - 2.0).abs() < 1e-12);
        let g = BlockFigure::with_estimate("k", "K", "k", Unit::None, None, 1.0, "x");
        assert_eq!(g.difference_percent, None);
        let h = BlockFigure::exact_only("k", "K", "k", Unit::None, Some(1.0), "");
        assert_eq!(h.no_estimate_because, None);
    }
}
