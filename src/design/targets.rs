//! What the designer asks for, and the checks that refuse impossible asks
//! before any solving.

use super::eseries::{self, Series};
use super::DesignError;

/// The stage to design.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Topology {
    /// Common emitter, divider bias, emitter resistance partly bypassed.
    CommonEmitter,
    /// Emitter follower with divider bias.
    CommonCollector,
    /// Common base: base held by a divider and a bypass capacitor, signal into the emitter.
    CommonBase,
    /// A common-emitter stage DC-coupled into an emitter follower.
    EmitterIntoFollower,
}

impl Topology {
    /// The word of the command line (`--stage`).
    pub fn word(self) -> &'static str {
        match self {
            Topology::CommonEmitter => "ce",
            Topology::CommonCollector => "cc",
            Topology::CommonBase => "cb",
            Topology::EmitterIntoFollower => "ce-cc",
        }
    }

    pub fn words(self) -> &'static str {
        match self {
            Topology::CommonEmitter => "common emitter, partly bypassed emitter",
            Topology::CommonCollector => "common collector (emitter follower)",
            Topology::CommonBase => "common base",
            Topology::EmitterIntoFollower => "common emitter into an emitter follower",
        }
    }

    pub fn parse(s: &str) -> Result<Self, DesignError> {
        match s.trim().to_ascii_lowercase().as_str() {
            "ce" => Ok(Topology::CommonEmitter),
            "cc" => Ok(Topology::CommonCollector),
            "cb" => Ok(Topology::CommonBase),
            "ce-cc" => Ok(Topology::EmitterIntoFollower),
            _ => Err(DesignError(format!(
                "no stage '{s}'; the stages are {}",
                super::stage_words(", ")
            ))),
        }
    }
}

/// The targets of one design. SI units; dB for the gain.
#[derive(Debug, Clone, PartialEq)]
pub struct Targets {
    pub topology: Topology,
    /// Positive supply, V.
    pub supply: f64,
    /// Device preset of the transistor(s).
    pub preset: String,
    /// Collector current of the first transistor, A (`None`: the default
    /// 1 mA, or for a common-base stage the one Zin asks for).
    pub collector_current: Option<f64>,
    /// Choose the collector current for the lowest noise figure at the
    /// source resistance (the noise analysis' what-if) instead.
    pub low_noise: bool,
    /// Collector current of the follower in `ce-cc`, A (default: as the first).
    pub follower_current: Option<f64>,
    /// Voltage gain from the amplifier input to the load, dB (`None` for a
    /// follower: whatever it gives).
    pub gain_db: Option<f64>,
    /// Input impedance at midband, Ω.
    pub input_impedance: Option<f64>,
    /// Output level the stage must reach at the load, V peak (`None`: not
    /// asked; the design then only states what it reaches).
    pub swing: Option<f64>,
    /// Fraction of boards that must meet the design's own targets at the
    /// chosen tolerances (the spread run over its spread limits).
    pub yield_target: Option<f64>,
    /// Load resistance, Ω.
    pub load: f64,
    /// Resistance of the signal source, Ω.
    pub source_resistance: f64,
    /// Lower −3 dB corner of the source-to-load response, Hz (at most).
    pub low_corner: f64,
    /// Largest βF sensitivity S = ∂IC/∂βF · βF/IC allowed.
    pub stability: f64,
    /// Series for resistors and capacitors.
    pub resistor_series: Series,
    pub capacitor_series: Series,
}

/// Default collector current, A (common practice for small-signal stages).
pub const DEFAULT_COLLECTOR_CURRENT: f64 = 1e-3;
/// Resistances the designer takes as a load, input impedance or source
/// resistance, Ω (outside them the part values leave any real stock).
pub const RESISTANCE_RANGE: (f64, f64) = (1.0, 100e6);
/// Lower corners the designer takes, Hz: below 0.1 Hz the coupling
/// capacitors grow past any real part (1e-30 Hz asked for a 6.8e25 F one).
pub const LOW_CORNER_RANGE: (f64, f64) = (0.1, 1e5);
/// Default βF sensitivity limit (the analysis warns above 0.5).
pub const DEFAULT_STABILITY: f64 = 0.2;

impl Targets {
    /// Targets with the defaults: 1 kΩ source, S ≤ 0.2, E24 resistors, E12 capacitors.
    pub fn new(topology: Topology, supply: f64, load: f64, low_corner: f64) -> Self {
        let e24 = eseries::find("E24").expect("E24 exists");
        Targets {
            topology,
            supply,
            preset: "small-signal-npn".into(),
            collector_current: None,
            low_noise: false,
            follower_current: None,
            gain_db: None,
            input_impedance: None,
            swing: None,
            yield_target: None,
            load,
            source_resistance: 1e3,
            low_corner,
            stability: DEFAULT_STABILITY,
            resistor_series: e24,
            capacitor_series: eseries::capacitor_default(e24),
        }
    }

    /// Collector current of the first transistor, A.
    pub fn ic(&self) -> f64 {
        self.collector_current.unwrap_or(DEFAULT_COLLECTOR_CURRENT)
    }

    /// Linear voltage-gain magnitude asked for.
    pub fn gain(&self) -> Option<f64> {
        self.gain_db.map(|g| 10f64.powf(g / 20.0))
    }

    /// Refuse asks that no part values can meet, before solving.
    pub fn check(&self) -> Result<(), DesignError> {
        let err = |m: String| Err(DesignError(m));
        let positive = |v: f64| v.is_finite() && v > 0.0;
        if let Some(v) = self.swing {
            if !(positive(v) && v < 0.5 * self.supply) {
                return err(format!(
                    "swing {} V peak at the load: give a positive level below half the \
                     supply ({} V); no stage on one supply swings further",
                    crate::units::echo(v),
                    crate::units::echo(0.5 * self.supply)
                ));
            }
        }
        if let Some(y) = self.yield_target {
            if !(y.is_finite() && y > 0.0 && y <= 1.0) {
                return err(format!(
                    "yield {} %: give a share of boards above 0 % and at most 100 %",
                    crate::units::echo(100.0 * y)
                ));
            }
        }
        if !positive(self.supply) {
            return err(format!(
                "supply {} V: give a positive supply voltage",
                crate::units::echo(self.supply)
            ));
        }
        if self.supply < 1.5 {
            return err(format!(
                "supply {} V is below what a stage needs: the base–emitter junction alone takes about 0.65 V, \
                 and the emitter resistor and the collector swing need more; give at least 1.5 V",
                crate::units::echo(self.supply)
            ));
        }
        if self.supply > 60.0 {
            return err(format!(
                "supply {} V is above the 60 V this designer handles (above 60 V a circuit a person may touch \
                 needs the precautions of local electrical codes and licensed practice)",
                crate::units::echo(self.supply)
            ));
        }
        match crate::presets::find(&self.preset) {
            None => {
                return err(format!(
                    "no device preset '{}'; presets: {}",
                    self.preset,
                    crate::presets::names().join(", ")
                ))
            }
            Some(p) if !p.kinds.contains(&crate::document::PartKind::Npn) => {
                return err(format!(
                    "preset '{}' is not an NPN transistor; the designer builds NPN stages",
                    self.preset
                ))
            }
            Some(_) => {}
        }
        let (r_low, r_high) = RESISTANCE_RANGE;
        let in_range = |v: f64| positive(v) && (r_low..=r_high).contains(&v);
        if !in_range(self.load) {
            return err(format!(
                "load {}: give a resistance from 1 Ω to 100 MΩ, like 10k",
                crate::units::format(self.load, crate::units::Unit::Ohm)
            ));
        }
        if !(self.source_resistance.is_finite()
            && self.source_resistance >= 0.0
            && self.source_resistance <= r_high)
        {
            return err(format!(
                "source resistance {}: give zero or a resistance up to 100 MΩ",
                crate::units::format(self.source_resistance, crate::units::Unit::Ohm)
            ));
        }
        let (f_low, f_high) = LOW_CORNER_RANGE;
        if !positive(self.low_corner) || !(f_low..=f_high).contains(&self.low_corner) {
            return err(format!(
                "low corner {}: give a frequency from 100 mHz to 100 kHz, like 20",
                crate::units::format(self.low_corner, crate::units::Unit::Hertz)
            ));
        }
        if !(self.stability.is_finite() && self.stability > 0.0 && self.stability < 1.0) {
            return err(format!(
                "stability limit {}: the βF sensitivity S lies between 0 and 1; give a limit like 0.2",
                crate::units::echo(self.stability)
            ));
        }
        for (name, v) in [
            ("collector current", self.collector_current),
            ("follower current", self.follower_current),
        ] {
            if let Some(i) = v {
                if !positive(i) || i > 0.1 {
                    return err(format!(
                        "{name} {} A: give a current between 0 and 100 mA, like 1m",
                        crate::units::echo(i)
                    ));
                }
            }
        }
        if let Some(z) = self.input_impedance {
            if !in_range(z) {
                return err(format!(
                    "zin {}: give an input impedance from 1 Ω to 100 MΩ, like 20k",
                    crate::units::format(z, crate::units::Unit::Ohm)
                ));
            }
        }
        match (self.topology, self.gain_db) {
            (Topology::CommonCollector, Some(g)) if g > 0.0 => {
                return err(format!(
                    "gain {} dB: an emitter follower's gain is just below 1 (0 dB); choose --stage ce \
                     or ce-cc for gain, or leave --gain out",
                    crate::units::echo(g)
                ));
            }
            (Topology::CommonCollector, _) => {}
            (_, None) => {
                return err(format!(
                    "--gain is needed for a {} stage, like 30dB",
                    self.topology.words()
                ));
            }
            (_, Some(g)) if !g.is_finite() || g <= 0.0 => {
                return err(format!(
                    "gain {} dB: give a gain above 0 dB (a stage that attenuates needs no transistor)",
                    crate::units::echo(g)
                ));
            }
            _ => {}
        }
        if self.topology == Topology::CommonBase
            && self.collector_current.is_some()
            && self.input_impedance.is_some()
        {
            return err(
                "a common-base stage's input impedance is about re = VT/IE, set by the collector \
                 current: give --ic or --zin, not both"
                    .into(),
            );
        }
        if self.low_noise && self.topology == Topology::CommonBase {
            return err(
                "--ic low-noise is for stages driven at the base (ce, cc, ce-cc); a common-base \
                 stage's current is set by its Zin"
                    .into(),
            );
        }
        if self.input_impedance.is_none() && self.topology != Topology::CommonBase {
            return err(format!(
                "--zin is needed for a {} stage, like 20k",
                self.topology.words()
            ));
        }
        Ok(())
    }
}
