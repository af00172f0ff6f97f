//! The engine's own figures of a candidate design: the DC operating point,
//! the midband small-signal figures, and the exact lower −3 dB corner.

use crate::analysis::dc::{self, Region};
use crate::analysis::linear::{Drive, LinearKind, Mode, System};
use crate::analysis::small_signal::{self, SmallSignal};
use crate::analysis::{circuit, figures::Swing};
use crate::document::Document;
use crate::netlist::{self, Netlist};

/// One transistor at its operating point.
#[derive(Debug, Clone, PartialEq)]
pub struct Device {
    pub designator: String,
    pub ic: f64,
    pub vce: f64,
    /// Emitter voltage against ground, V.
    pub ve: f64,
    pub region: Region,
    pub saturation_margin: f64,
    pub cutoff_margin: f64,
    /// S = ∂IC/∂βF · βF/IC.
    pub sensitivity: f64,
    /// Output swing of its stage toward saturation and toward cut-off, V.
    pub swing: Option<(f64, f64)>,
}

/// What the engine says about one candidate.
#[derive(Debug, Clone, PartialEq)]
pub struct Measured {
    pub devices: Vec<Device>,
    /// |v(load)/v(amplifier input)| at midband.
    pub gain: f64,
    /// Midband input impedance seen after the source resistance, Ω.
    pub input_impedance: f64,
    /// Midband output impedance seen by the load, Ω.
    pub output_impedance: Option<f64>,
    /// |v(load)/vs| at midband.
    pub source_gain: f64,
    /// Exact lower −3 dB corner of the source-to-load response, Hz.
    pub low_corner: Option<f64>,
    /// Designer warnings of the DC analysis (messages).
    pub warnings: Vec<String>,
}

impl Measured {
    pub fn gain_db(&self) -> f64 {
        20.0 * self.gain.log10()
    }
    pub fn device(&self, designator: &str) -> Option<&Device> {
        self.devices.iter().find(|d| d.designator == designator)
    }
}

/// A candidate's fixed geometry: the document and its netlist (part values
/// change, connections never do, so the netlist is built once).
pub struct Probe {
    pub doc: Document,
    pub nl: Netlist,
}

impl Probe {
    pub fn new(doc: Document) -> Self {
        let nl = netlist::connect(&doc);
        Probe { doc, nl }
    }

    /// DC + midband figures; with `corner`, the exact low corner too.
    pub fn measure(&self, corner: bool) -> Result<(Measured, Option<SmallSignal>), String> {
        let op = dc::solve(&self.doc, &self.nl).map_err(|e| e.to_string())?;
        let c = circuit::build_unchecked(&self.doc, &self.nl).map_err(|e| e.to_string())?;
        let a = small_signal::analyse(&self.doc, &self.nl, &c, &op);
        let mut devices = Vec::new();
        for t in op.transistors() {
            let swing = a
                .midband
                .stages
                .iter()
                .find(|s| s.transistor == t.designator)
                .and_then(|s| s.swing.as_ref())
                .map(|s: &Swing| (s.toward_saturation, s.toward_cut_off));
            devices.push(Device {
                designator: t.designator.clone(),
                ic: t.ic,
                vce: t.vce,
                ve: op.node_voltages[c.elements[t.element].nodes[2]],
                region: t.region,
                saturation_margin: t.saturation_margin,
                cutoff_margin: t.cutoff_margin,
                sensitivity: t.beta_sensitivity,
                swing,
            });
        }
        let ch = &a.midband.chain;
        let gain = ch
            .voltage_gain
            .map(f64::abs)
            .ok_or("no voltage gain from the input to the load")?;
        let input_impedance = ch
            .input_impedance
            .ok_or("no input impedance at the amplifier input")?;
        let source_gain = ch.source_gain.map(f64::abs).unwrap_or(f64::NAN);
        let ss = a.small_signal;
        let low_corner = if corner {
            low_corner(&ss, &a.chain)
        } else {
            None
        };
        Ok((
            Measured {
                devices,
                gain,
                input_impedance,
                output_impedance: ch.output_impedance,
                source_gain,
                low_corner,
                warnings: op.warnings.iter().map(|w| w.to_string()).collect(),
            },
            Some(ss),
        ))
    }
}

/// The node of the load in the small-signal circuit, and a floating load's
/// second node (the output is then the voltage across the load).
pub fn load_node(
    ss: &SmallSignal,
    chain: &crate::analysis::stages::Chain,
) -> Option<(usize, Option<usize>)> {
    let l = chain.load.as_ref()?;
    let n = ss.net_node.get(l.net).copied().filter(|&n| n != 0)?;
    Some((n, crate::analysis::figures::load_other_node(ss, l)))
}

/// |v(load)/vs| at `f` (Hz), or at midband when `f` is `None`; across a
/// floating load, |v(a) − v(b)|/vs.
pub fn response(ss: &SmallSignal, load: (usize, Option<usize>), f: Option<f64>) -> Option<f64> {
    let drive = [Drive::unit(ss.signal?)];
    let mode = if f.is_some() {
        Mode::Frequency
    } else {
        Mode::Midband
    };
    let sys = System::new(&ss.circuit, mode, &[], None);
    sys.solve(f.unwrap_or(0.0), &drive)
        .ok()
        .map(|s| match load.1 {
            Some(m) => (s.v(load.0) - s.v(m)).norm(),
            None => s.v(load.0).norm(),
        })
}

/// Scale every coupling or bypass capacitor part in the linear circuit by `k`.
pub fn scale_capacitors(ss: &mut SmallSignal, k: f64) {
    for e in &mut ss.circuit.elements {
        if let LinearKind::Capacitor(c) = &mut e.kind {
            *c *= k;
        }
    }
}

/// The exact lower −3 dB corner: the lowest frequency where |H| rises
/// through |H(midband)|/√2, bracketed on a log grid and refined by bisection
/// in log f to 1e-12 relative.
pub fn low_corner(ss: &SmallSignal, chain: &crate::analysis::stages::Chain) -> Option<f64> {
    let n = load_node(ss, chain)?;
    let level = response(ss, n, None)? / std::f64::consts::SQRT_2;
    let g = |f: f64| response(ss, n, Some(f)).map(|m| m - level);
    let mut lo = 1e-3;
    if g(lo)? >= 0.0 {
        return None;
    }
    let mut hi = lo;
    loop {
        let next = hi * 10f64.powf(0.1);
        if next > 1e7 {
            return None;
        }
        if g(next)? >= 0.0 {
            lo = hi;
            hi = next;
            break;
        }
        hi = next;
    }
    let (mut a, mut b) = (lo.ln(), hi.ln());
    while b - a > 1e-13 {
        let m = 0.5 * (a + b);
        if g(m.exp())? >= 0.0 {
            b = m;
        } else {
            a = m;
        }
    }
    Some((0.5 * (a + b)).exp())
}

/// Solve k (all capacitors × k) so that |H(fL)| = |H(mid)|/√2, by secant on ln k.
pub fn capacitor_scale(probe: &Probe, mut ss: SmallSignal, fl: f64) -> Option<f64> {
    let chain = crate::analysis::stages::recognise(&probe.doc, &probe.nl);
    let n = load_node(&ss, &chain)?;
    let level = response(&ss, n, None)? / std::f64::consts::SQRT_2;
    let mut current = 1.0;
    let mut g = |ss: &mut SmallSignal, k: f64| {
        scale_capacitors(ss, k / current);
        current = k;
        response(ss, n, Some(fl)).map(|m| (m / level).ln())
    };
    let (mut a, mut b) = (0.0f64, 0.5f64);
    let mut ga = g(&mut ss, a.exp())?;
    let mut gb = g(&mut ss, b.exp())?;
    for _ in 0..100 {
        if gb.abs() < 1e-13 {
            return Some(b.exp());
        }
        let d = gb - ga;
        if d.abs() < 1e-300 {
            return None;
        }
        let mut c = b - gb * (b - a) / d;
        c = c.clamp(b - 3.0, b + 3.0);
        a = b;
        ga = gb;
        b = c;
        gb = g(&mut ss, b.exp())?;
    }
    None
}
