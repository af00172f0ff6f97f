//! What the scene is told about the analysis, as plain data.
//!
//! The scene never looks at analysis types; adapters (`annotations_from_dc`
//! and friends, in `adapters.rs`) fill these in from results. Every number is
//! SI; text is made only when drawing (src/units.rs).

use crate::units::Unit;
use std::collections::BTreeMap;

/// Everything the annotation layers draw.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Annotations {
    /// DC voltage of each net against ground, V, keyed by net name.
    pub net_voltages: BTreeMap<String, f64>,
    /// DC current into each pin, A, positive INTO the pin, keyed by part
    /// designator then pin name (`PartKind::pin_names`).
    pub pin_currents: BTreeMap<String, BTreeMap<String, f64>>,
    /// One card per recognised stage (a stage inside a block is shown on
    /// the block's card instead).
    pub stages: Vec<StageCard>,
    /// One card per block (a group of transistors read as one).
    pub blocks: Vec<BlockCard>,
    /// Feedback loops through more than one transistor, marked on the sheet.
    pub loops: Vec<LoopTag>,
    /// The title block.
    pub title: TitleInfo,
    /// `spread` layer: worst-case (min, max) of each net's DC voltage over
    /// part tolerances, β spread and temperature, V, keyed by net name.
    pub voltage_ranges: BTreeMap<String, (f64, f64)>,
    /// `noise` layer: the noise line of each stage card, keyed by the
    /// stage's transistor designator.
    pub stage_noise: BTreeMap<String, StageNoise>,
    /// `distortion` layer: the distortion line of each stage card, keyed by
    /// the stage's transistor designator.
    pub stage_distortion: BTreeMap<String, StageDistortion>,
}

/// What the distortion line of one stage card says: the steady-state run
/// of the project's own sine at its own amplitude.
#[derive(Debug, Clone, PartialEq)]
pub struct StageDistortion {
    /// The source's sine: peak amplitude, V, and frequency, Hz.
    pub source_amplitude: f64,
    pub frequency: f64,
    /// Total harmonic distortion at the stage's output, fraction.
    pub thd: f64,
    /// Fundamental amplitude at the stage's output, V peak.
    pub output_peak: f64,
    /// On the first stage's card only: where the whole chain clips.
    pub chain_clip: Option<ChainClip>,
}

/// The source amplitude at which the chain's THD reaches a limit.
#[derive(Debug, Clone, PartialEq)]
pub struct ChainClip {
    /// THD limit, fraction (0.01 = 1 %).
    pub thd_limit: f64,
    /// Source amplitude, V peak; `None` when the search found no level.
    pub amplitude: Option<f64>,
    /// What limits first, in words.
    pub limited_by: String,
}

/// What the noise line of one stage card says.
#[derive(Debug, Clone, PartialEq)]
pub struct StageNoise {
    /// Frequency of the spot figures, Hz.
    pub frequency: f64,
    /// Input-referred voltage noise density en, V/√Hz (input shorted).
    pub voltage_density: f64,
    /// Input-referred current noise density in, A/√Hz (input open).
    pub current_density: f64,
    /// On the first stage's card only: the whole chain's spot noise figure,
    /// dB, against the real source resistance (its designator and ohms).
    pub chain_figure: Option<ChainFigure>,
}

/// The chain's noise figure against the real source resistance.
#[derive(Debug, Clone, PartialEq)]
pub struct ChainFigure {
    pub figure_db: f64,
    pub source_resistor: String,
    pub source_ohms: f64,
}

impl Annotations {
    /// The current into `designator.pin`, if known.
    pub fn pin_current(&self, designator: &str, pin: &str) -> Option<f64> {
        self.pin_currents.get(designator)?.get(pin).copied()
    }
}

/// A number with its name and unit, e.g. `re = 25.9 Ω`.
#[derive(Debug, Clone, PartialEq)]
pub struct Quantity {
    pub name: String,
    pub value: f64,
    pub unit: Unit,
    /// The model makes this figure zero; `value` is rounding noise (see
    /// `units::negligible`): it prints as "0 (none in this model)".
    pub none_in_model: bool,
}

impl Quantity {
    pub fn new(name: &str, value: f64, unit: Unit) -> Self {
        Quantity {
            name: name.into(),
            value,
            unit,
            none_in_model: false,
        }
    }
    /// A figure the model may make zero: negligible against `scale` by the
    /// one rule of `units::negligible`, it prints as "0 (none in this model)".
    pub fn model_zero(name: &str, value: f64, scale: f64, unit: Unit) -> Self {
        Quantity {
            none_in_model: crate::units::negligible(value, scale),
            ..Quantity::new(name, value, unit)
        }
    }
    /// `name = value unit` in engineering notation.
    pub fn text(&self) -> String {
        if self.none_in_model {
            return format!("{} = {}", self.name, crate::units::NONE_IN_MODEL);
        }
        format!("{} = {}", self.name, format_value(self.value, self.unit))
    }
}

/// A value for a card: engineering notation with its unit, or for a plain
/// ratio (gain, α, hfe) three significant figures without a prefix, in
/// powers of ten when very small or large (`2.1 × 10⁻⁴`).
pub fn format_value(v: f64, unit: Unit) -> String {
    if unit != Unit::None {
        return crate::units::format(v, unit);
    }
    if !v.is_finite() {
        return "—".into();
    }
    let a = v.abs();
    if a == 0.0 || (1e-3..1e5).contains(&a) {
        let digits = if a == 0.0 {
            0
        } else {
            (2 - a.log10().floor() as i32).max(0) as usize
        };
        let mut s = format!("{v:.digits$}");
        if s.contains('.') {
            s = s.trim_end_matches('0').trim_end_matches('.').to_string();
        }
        return s;
    }
    let exp = a.log10().floor() as i32;
    let mant = v / 10f64.powi(exp);
    let sup: String = exp
        .to_string()
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            d => ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'][d as usize - '0' as usize],
        })
        .collect();
    format!("{mant:.2} × 10{sup}")
}

/// Where an element of a stage's AC equivalent sits in the drawn ladder.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum EquivalentRole {
    /// In series with the signal on the way in (source resistance).
    InputSeries,
    /// From the input node to AC ground (bias divider, RB).
    InputShunt,
    /// In the emitter, not bypassed (degeneration).
    Emitter,
    /// From the output node to AC ground (RC, RE of a follower).
    OutputShunt,
    /// The load the stage drives.
    Load,
}

/// One element of a stage's AC equivalent circuit.
#[derive(Debug, Clone, PartialEq)]
pub struct EquivalentElement {
    /// Name on the drawing, e.g. `RB` or `RC‖RL`.
    pub name: String,
    pub value: f64,
    pub unit: Unit,
    /// Designators of the parts it stands for (R1, R2 for RB = R1‖R2).
    pub from_parts: Vec<String>,
    pub role: EquivalentRole,
}

/// A transistor's small-signal model with its values.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelFigures {
    pub kind: super::ModelKind,
    /// In drawing order, e.g. `re`, `α`, `ro` for the T model; `hie`, `hfe`,
    /// `hoe`, `hre`; `rπ`, `gm`, `ro`, `Cπ`, `Cμ`.
    pub values: Vec<Quantity>,
}

/// A stage figure (Zin, Zout, Av, Ai): exact from the solver and the hand
/// estimate, with their difference.
#[derive(Debug, Clone, PartialEq)]
pub struct StageFigure {
    /// `Zin`, `Zout`, `Av` or `Ai`.
    pub name: String,
    pub unit: Unit,
    pub exact: f64,
    pub estimate: Option<f64>,
}

impl StageFigure {
    /// (estimate − exact)/exact in per cent, when both are known.
    pub fn difference_percent(&self) -> Option<f64> {
        let e = self.estimate?;
        if self.exact == 0.0 || !self.exact.is_finite() || !e.is_finite() {
            return None;
        }
        Some((e - self.exact) / self.exact * 100.0)
    }
}

/// The card drawn beside a stage.
#[derive(Debug, Clone, PartialEq)]
pub struct StageCard {
    /// Designator of the transistor.
    pub transistor: String,
    /// Plain words: `common emitter, bypassed emitter`, `emitter follower`.
    pub configuration: String,
    /// Elements of the AC equivalent with their values.
    pub elements: Vec<EquivalentElement>,
    /// The device in each model form available; the scene draws the chosen one.
    pub models: Vec<ModelFigures>,
    /// Zin, Zout, Av, Ai.
    pub figures: Vec<StageFigure>,
    /// Plain-word warnings about this stage.
    pub warnings: Vec<String>,
}

impl StageCard {
    /// The model of `kind`, else the first one given.
    pub fn model(&self, kind: super::ModelKind) -> Option<&ModelFigures> {
        self.models
            .iter()
            .find(|m| m.kind == kind)
            .or(self.models.first())
    }
}

/// One figure on a block card.
#[derive(Debug, Clone, PartialEq)]
pub struct BlockCardFigure {
    /// Short label, e.g. `Ad`, `CMRR`, `Io/Iref`.
    pub label: String,
    pub unit: Unit,
    pub exact: Option<f64>,
    pub estimate: Option<f64>,
    pub difference_percent: Option<f64>,
}

/// The card drawn beside a block: its transistors, what it is, its figures
/// exact beside the estimate, why an estimate is absent, and its warnings.
#[derive(Debug, Clone, PartialEq)]
pub struct BlockCard {
    /// Designators of the block's transistors.
    pub transistors: Vec<String>,
    /// Plain words: `differential pair, resistor tail`.
    pub words: String,
    pub figures: Vec<BlockCardFigure>,
    /// `label: reason` for each figure without an estimate.
    pub no_estimate: Vec<String>,
    pub warnings: Vec<String>,
    /// The AC equivalent drawn on the card (the differential pair's
    /// half-circuit), with its caption.
    pub drawing: Option<(StageCard, String)>,
}

impl BlockCard {
    /// The key of its card in the layout (`stages/Q1+Q2`).
    pub fn key_item(&self) -> String {
        self.transistors.join("+")
    }
}

/// A feedback loop marked on the sheet: the parts it runs through are
/// outlined, and a tag beside its main transistor gives its loop gain,
/// phase margin and the gain split.
#[derive(Debug, Clone, PartialEq)]
pub struct LoopTag {
    /// The transistor with the largest midband return ratio.
    pub transistor: String,
    /// Designators of the parts the loop runs through (transistors first).
    pub parts: Vec<String>,
    /// The tag's lines in plain words.
    pub lines: Vec<String>,
    /// The phase margin is below the floor: drawn in the warning colour.
    pub warning: bool,
    /// The loop gain whose margin the tag gives, over the sweep (for the
    /// editor's response drawer).
    pub curve: Option<LoopCurve>,
}

/// A loop gain over the sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct LoopCurve {
    /// Hz, rising (the project's sweep).
    pub frequencies: Vec<f64>,
    /// |T| in dB at each frequency.
    pub magnitude_db: Vec<f64>,
    pub crossover_hz: Option<f64>,
    pub phase_margin_degrees: Option<f64>,
}

/// How far the analysis got.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum ResultState {
    /// Not run (drawing only).
    #[default]
    NotRun,
    Solved,
    /// Solved, with this many warnings.
    Warnings(usize),
    /// Could not be solved; the reason in plain words.
    NotSolvable(String),
}

impl ResultState {
    pub fn text(&self) -> String {
        match self {
            ResultState::NotRun => "drawing only, not analysed".into(),
            ResultState::Solved => "solved".into(),
            ResultState::Warnings(1) => "solved, 1 warning".into(),
            ResultState::Warnings(n) => format!("solved, {n} warnings"),
            ResultState::NotSolvable(why) => format!("not solvable: {why}"),
        }
    }
}

/// What the title block says.
#[derive(Debug, Clone, PartialEq)]
pub struct TitleInfo {
    pub title: String,
    /// Ambient temperature of the analysis, °C.
    pub ambient_celsius: f64,
    /// Plain-word assumptions, e.g. `capacitors open at DC`.
    pub assumptions: Vec<String>,
    pub program: String,
    pub version: String,
    pub state: ResultState,
    /// Designer warnings and cautions in plain words, each naming its part
    /// or nets (the block shows the first few and how many more).
    pub warnings: Vec<String>,
}

impl Default for TitleInfo {
    fn default() -> Self {
        TitleInfo {
            title: String::new(),
            ambient_celsius: 27.0,
            assumptions: Vec::new(),
            program: "Biasline".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            state: ResultState::NotRun,
            warnings: Vec::new(),
        }
    }
}

impl TitleInfo {
    /// The title block of a document that has not been analysed.
    pub fn for_document(doc: &crate::document::Document) -> Self {
        TitleInfo {
            title: doc.title.clone(),
            ambient_celsius: doc.analysis.ambient_celsius,
            ..TitleInfo::default()
        }
    }
}
