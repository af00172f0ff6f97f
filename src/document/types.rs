//! Serde types of the project file. Field order here is key order on disk.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// A point on the sheet grid, `[x, y]`.
pub type GridPoint = [i32; 2];

pub use super::kinds::PartKind;

impl PartKind {
    /// The word used in the file and on screen.
    pub fn word(self) -> &'static str {
        self.info().word
    }

    /// The symbol drawn for this kind unless the part names another.
    pub fn default_symbol(self) -> &'static str {
        self.info().symbol
    }

    /// Pin names in the order the analysis uses them.
    pub fn pin_names(self) -> &'static [&'static str] {
        self.info().pins
    }

    /// The parameter a part of this kind must carry.
    pub fn main_parameter(self) -> Option<&'static str> {
        self.info().value.map(|v| v.0)
    }

    /// The unit of the kind's main parameter (none for devices).
    pub fn main_unit(self) -> crate::units::Unit {
        self.info().value.map_or(crate::units::Unit::None, |v| v.1)
    }

    /// A bipolar transistor (NPN or PNP).
    pub fn is_bipolar(self) -> bool {
        self.info().role == super::kinds::Role::Bipolar
    }

    /// A field-effect transistor (JFET or MOSFET, N or P).
    pub fn is_fet(self) -> bool {
        self.info().role == super::kinds::Role::FieldEffect
    }

    /// Any transistor: bipolar or field-effect (three pins, a controlled
    /// current between two of them).
    pub fn is_transistor(self) -> bool {
        self.is_bipolar() || self.is_fet()
    }
}

impl std::fmt::Display for PartKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.word())
    }
}

/// A placed component.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Part {
    /// Stable identity that survives renaming (e.g. `"p7"`).
    pub id: String,
    /// R1, Q2, … (grounds may leave it empty).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub designator: String,
    pub kind: PartKind,
    /// Symbol name in the symbol set; empty means the kind's default symbol.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub symbol: String,
    /// Where the symbol's origin sits; absent in the file for a part placed
    /// by the layout (see [`Part::is_placed`]).
    #[serde(default = "unplaced", skip_serializing_if = "is_unplaced")]
    pub position: GridPoint,
    /// Clockwise on screen, degrees: 0, 90, 180 or 270.
    #[serde(default, skip_serializing_if = "is_zero_u16")]
    pub rotation: u16,
    #[serde(default, skip_serializing_if = "is_false")]
    pub mirror: bool,
    /// A device preset whose parameters fill in any the part does not give.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub preset: Option<String>,
    /// SI numbers keyed by descriptive names (`resistance`, `forward_beta`, …).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub parameters: BTreeMap<String, f64>,
    /// Pin name → net name: this part's connections given by name instead of
    /// wires (`{"base": "in", "collector": "out"}`).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub connect: BTreeMap<String, String>,
}

/// The position an unplaced part holds in memory until the layout places it.
pub const UNPLACED: GridPoint = [i32::MIN, i32::MIN];

fn unplaced() -> GridPoint {
    UNPLACED
}
fn is_unplaced(p: &GridPoint) -> bool {
    *p == UNPLACED
}

impl Part {
    /// The file gave this part a position (or the layout has placed it).
    pub fn is_placed(&self) -> bool {
        self.position != UNPLACED
    }

    pub fn symbol_name(&self) -> &str {
        if self.symbol.is_empty() {
            self.kind.default_symbol()
        } else {
            &self.symbol
        }
    }

    /// How the part is named in messages: its designator, else its id.
    pub fn label(&self) -> String {
        if !self.designator.is_empty() {
            self.designator.clone()
        } else {
            format!("{} {}", self.kind, self.id)
        }
    }

    pub fn parameter(&self, key: &str) -> Option<f64> {
        self.parameters.get(key).copied()
    }
}

fn is_zero_u16(v: &u16) -> bool {
    *v == 0
}
fn is_false(v: &bool) -> bool {
    !*v
}

/// A wire: an orthogonal polyline through grid points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Wire {
    pub points: Vec<GridPoint>,
}

/// A net label: every label of one name joins its net with the others.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NetLabel {
    pub name: String,
    pub position: GridPoint,
}

/// Which part feeds the signal in and which takes it out.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SignalPath {
    /// Designator of the signal source.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
    /// Designator of the load element.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub load: Option<String>,
    /// The source's waveform in a transient run (default: a sine of its
    /// `amplitude`, `dc_offset` and `frequency`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub waveform: Option<super::Waveform>,
}

/// Analysis settings kept with the project.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct AnalysisSettings {
    /// Ambient temperature of the analysis, °C.
    pub ambient_celsius: f64,
    /// Start of the frequency sweep, Hz.
    pub frequency_start: f64,
    /// End of the frequency sweep, Hz.
    pub frequency_stop: f64,
    /// Sweep points per decade.
    pub points_per_decade: u32,
    /// Where `biasline stability` breaks the loop for the double injection,
    /// as `PART.PIN` (e.g. `Q2.base`); `--break` on the command line wins.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub loop_break: Option<String>,
}

impl Default for AnalysisSettings {
    fn default() -> Self {
        AnalysisSettings {
            ambient_celsius: 27.0,
            frequency_start: 1.0,
            frequency_stop: 1.0e8,
            points_per_decade: 20,
            loop_break: None,
        }
    }
}

/// Placement choices the user made; the only derived-looking state kept.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Layout {
    /// Annotation positions in grid units, keyed `"<layer>/<item>"`,
    /// e.g. `"voltages/vout"` or `"stages/Q1"`.
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    pub annotations: BTreeMap<String, [f64; 2]>,
}

/// How `spread` draws part values in a Monte Carlo run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Distribution {
    /// Every value equally likely between its limits.
    #[default]
    Uniform,
    /// Normal, with the tolerance limits at ±3 standard deviations (clipped there).
    Normal,
}

impl Distribution {
    /// How the distribution is described to the user.
    pub fn words(self) -> &'static str {
        match self {
            Distribution::Uniform => "uniform",
            Distribution::Normal => "normal (limits at ±3σ)",
        }
    }
}

/// Parts that track each other (a pair on one die): they share one draw,
/// and each adds its own small part of the spread.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MatchedGroup {
    /// Designators of the matched parts.
    pub parts: Vec<String>,
    /// The part-to-part difference as a fraction of each part's own spread
    /// (0.1: a tenth of the spread is independent).
    #[serde(default = "default_mismatch")]
    pub mismatch: f64,
}

fn default_mismatch() -> f64 {
    0.1
}

/// A limit a quantity must meet on every board (`min`, `max` or both).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpecLimit {
    /// The quantity's name as `biasline spread` prints it, e.g. `VCE(Q1)`.
    pub quantity: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max: Option<f64>,
}

/// Settings of the spread (tolerance, β and temperature) analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct SpreadSettings {
    /// Lowest ambient temperature, °C.
    pub ambient_min_celsius: f64,
    /// Highest ambient temperature, °C.
    pub ambient_max_celsius: f64,
    /// Monte Carlo runs.
    pub runs: usize,
    /// Seed of the random draws: the same seed gives the same numbers.
    pub seed: u64,
    pub distribution: Distribution,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub matched: Vec<MatchedGroup>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub limits: Vec<SpecLimit>,
}

impl Default for SpreadSettings {
    fn default() -> Self {
        SpreadSettings {
            ambient_min_celsius: 0.0,
            ambient_max_celsius: 50.0,
            runs: 1000,
            seed: 1,
            distribution: Distribution::Uniform,
            matched: Vec::new(),
            limits: Vec::new(),
        }
    }
}

impl SpreadSettings {
    pub fn is_default(&self) -> bool {
        *self == SpreadSettings::default()
    }
}

/// A user's choice for how a transistor's stage is read, overriding recognition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StageOverride {
    /// Designator of the transistor.
    pub transistor: String,
    /// `common_emitter`, `common_collector` or `common_base` (bipolar);
    /// `common_source`, `source_follower` (`common_drain`) or `common_gate` (FET).
    pub configuration: String,
    /// Net carrying the signal into the stage.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub input: Option<String>,
    /// Net carrying the signal out of the stage.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub output: Option<String>,
}

/// The whole project file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Document {
    pub format: String,
    pub version: u32,
    pub title: String,
    #[serde(default)]
    pub notes: String,
    #[serde(default)]
    pub parts: Vec<Part>,
    #[serde(default)]
    pub wires: Vec<Wire>,
    #[serde(default)]
    pub labels: Vec<NetLabel>,
    #[serde(default)]
    pub signal: SignalPath,
    #[serde(default)]
    pub analysis: AnalysisSettings,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub stages: Vec<StageOverride>,
    #[serde(default, skip_serializing_if = "SpreadSettings::is_default")]
    pub spread: SpreadSettings,
    #[serde(default, skip_serializing_if = "super::TransientSettings::is_default")]
    pub transient: super::TransientSettings,
    #[serde(default)]
    pub layout: Layout,
}

impl Document {
    pub fn new(title: &str) -> Self {
        Document {
            format: super::FORMAT_TAG.to_string(),
            version: super::FORMAT_VERSION,
            title: title.to_string(),
            notes: String::new(),
            parts: Vec::new(),
            wires: Vec::new(),
            labels: Vec::new(),
            signal: SignalPath::default(),
            analysis: AnalysisSettings::default(),
            stages: Vec::new(),
            spread: SpreadSettings::default(),
            transient: Default::default(),
            layout: Layout::default(),
        }
    }

    pub fn part_by_designator(&self, designator: &str) -> Option<&Part> {
        self.parts.iter().find(|p| p.designator == designator)
    }
}
