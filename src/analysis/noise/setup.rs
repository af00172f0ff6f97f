//! What the noise figures are computed from: the network, its noise
//! generators, the output, and the roles of the signal source, its
//! resistance and each transistor. Built from a circuit and its operating
//! point by [`super::build`], or by hand in tests.

use super::network::{Network, Node};
use super::sources::NoiseSource;
use crate::analysis::linear::LinearKind;

/// The signal source.
#[derive(Debug, Clone, PartialEq)]
pub struct SignalSource {
    pub designator: String,
    /// Index of its element (a `VoltageSource { signal: true }`).
    pub element: usize,
    /// Peak amplitude, V (the part's `amplitude`).
    pub amplitude: f64,
    /// The frequency its level is stated at, Hz (the part's `frequency`,
    /// else 1 kHz).
    pub frequency: f64,
    /// Its pin nodes (positive, negative).
    pub nodes: (Node, Node),
}

/// The resistance in series with the signal source (one or more resistors),
/// counted as the source's own noise.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceResistance {
    /// e.g. `RS` or `RS + R9`.
    pub designator: String,
    /// Indices of its elements (each a conductance).
    pub elements: Vec<usize>,
    /// Indices of their noise generators in [`NoiseSetup::sources`].
    pub sources: Vec<usize>,
    /// Total resistance, Ω.
    pub resistance: f64,
    /// The node on the amplifier side (away from the signal source).
    pub amplifier_node: Node,
}

/// How a transistor's small-signal values follow its current in the
/// better-current what-if.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CurrentLaw {
    /// Bipolar: gm, gπ, go, the diffusion capacitance and both shot noises
    /// in proportion to IC (gm = IC/VT).
    Bipolar,
    /// A FET in saturation, the same part at another drain current: by the
    /// square law gm = √(2·β·ID) (MOSFET; 2·√(β·ID) for a JFET) goes as
    /// √ID, gds = λ·ID/(1 + λ·VDS) as ID, the channel noise 4kT·γ·gm as
    /// √ID; the gate shot noise and the capacitances are held.
    SquareLaw,
}

impl CurrentLaw {
    /// Factors at current scale `k`: (gm, every other scaled element, the
    /// output-side generator, the input-side generator).
    pub fn factors(self, k: f64) -> (f64, f64, f64, f64) {
        match self {
            CurrentLaw::Bipolar => (k, k, k, k),
            CurrentLaw::SquareLaw => (k.sqrt(), k, k.sqrt(), 1.0),
        }
    }
}

/// The small-signal pieces of one transistor, kept so a what-if can scale
/// its collector (or drain) current.
#[derive(Debug, Clone, PartialEq)]
pub struct TransistorNoise {
    pub designator: String,
    pub law: CurrentLaw,
    /// Collector and base current magnitudes at the operating point, A.
    pub collector_current: f64,
    pub base_current: f64,
    pub gm: f64,
    pub gpi: f64,
    pub go: f64,
    pub base_resistance: f64,
    /// Cπ split: diffusion part τF·gm (scales with IC) and depletion part.
    pub cpi_diffusion: f64,
    pub cpi_depletion: f64,
    /// Handles (element indices in the network) of gπ (absent for a FET),
    /// Cπ (absent when zero, and for a FET), the gm source and go (gds).
    pub pi_element: Option<usize>,
    pub cpi_element: Option<usize>,
    pub gm_element: usize,
    pub go_element: usize,
    /// Noise generator indices: collector shot (a FET: channel thermal),
    /// base shot (absent for a FET: its gate shot noise is held).
    pub collector_shot: usize,
    pub base_shot: Option<usize>,
}

/// A recognised stage, for its own en and in.
#[derive(Debug, Clone, PartialEq)]
pub struct StageNoise {
    /// Designator of the transistor.
    pub transistor: String,
    /// Input and output nodes.
    pub input: Node,
    pub output: Node,
    /// Document parts that bring the signal into the stage (cut to open its input).
    pub input_cut: Vec<usize>,
}

/// The noise problem.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseSetup {
    pub network: Network,
    pub sources: Vec<NoiseSource>,
    /// Output voltage `v(p) − v(n)`.
    pub output: (Node, Node),
    /// How the output is named in reports (the load's designator or a net).
    pub output_name: String,
    pub kelvin: f64,
    pub signal: Option<SignalSource>,
    pub source_resistance: Option<SourceResistance>,
    pub transistors: Vec<TransistorNoise>,
    pub stages: Vec<StageNoise>,
}

impl NoiseSetup {
    /// A copy with transistor `t`'s collector current scaled by `k`
    /// (bipolar: gm, gπ, go, the diffusion capacitance and both shot noises
    /// scale with the current; rb, the depletion capacitances and every
    /// other part stay as they are; a FET by [`CurrentLaw::SquareLaw`]).
    pub fn with_scaled_current(&self, t: usize, k: f64) -> NoiseSetup {
        let mut s = self.clone();
        let tr = &self.transistors[t];
        let (kg, ko, kout, kin) = tr.law.factors(k);
        let elements = &mut s.network.circuit.elements;
        if let Some(p) = tr.pi_element {
            elements[p].kind = LinearKind::Conductance(tr.gpi * ko);
        }
        if let Some(c) = tr.cpi_element {
            elements[c].kind =
                LinearKind::DeviceCapacitance(tr.cpi_diffusion * ko + tr.cpi_depletion);
        }
        if let LinearKind::Transconductance { gm, .. } = &mut elements[tr.gm_element].kind {
            *gm = tr.gm * kg;
        }
        elements[tr.go_element].kind = LinearKind::Conductance(tr.go * ko);
        s.sources[tr.collector_shot].white = self.sources[tr.collector_shot].white * kout;
        if let Some(b) = tr.base_shot {
            s.sources[b].white = self.sources[b].white * kin;
        }
        s
    }

    /// A copy with the source resistance replaced by a short (`true`) or
    /// removed (`false`), and its noise generators silenced. `None` when
    /// there is no source resistance.
    pub fn with_source_resistance(&self, short: bool) -> Option<NoiseSetup> {
        let rs = self.source_resistance.as_ref()?;
        let mut s = self.clone();
        for &k in &rs.elements {
            let e = &mut s.network.circuit.elements[k];
            if !matches!(e.kind, LinearKind::Conductance(_)) {
                return None;
            }
            e.kind = if short {
                LinearKind::VoltageSource
            } else {
                LinearKind::Conductance(0.0)
            };
        }
        for &g in &rs.sources {
            s.sources[g].white = 0.0;
            s.sources[g].flicker_corner = 0.0;
        }
        Some(s)
    }

    /// Output power density from the source resistance's generators in a
    /// `[frequency][source]` row.
    pub fn source_part(&self, row: &[f64]) -> f64 {
        self.source_resistance
            .as_ref()
            .map_or(0.0, |rs| rs.sources.iter().map(|&g| row[g]).sum())
    }
}
