//! The annotated drawing as a display list: one [`Scene`] feeds the editor
//! canvas, the SVG export and the PNG export.
//!
//! Coordinates are sheet grid units (one unit = one grid step,
//! [`crate::document::GRID_PITCH_MM`] on paper at 100 %), `x` right, `y` down,
//! exactly as in the document. Sizes (line widths, text sizes) are in grid
//! units too, so a renderer only picks one scale factor.
//!
//! Every [`Element`] carries the [`Layer`] it belongs to and, where it has
//! one, the [`ItemRef`] of the part, net or stage it describes, so the editor
//! can toggle layers and find what is under the pointer ([`Scene::hit`]).
//!
//! The scene does not depend on analysis types: results come in as plain
//! data, [`Annotations`] (see [`annotations`]).

pub mod annotations;
mod block_card;
mod build;
mod card;
mod currents;
mod equivalent;
mod geometry;
mod labels;
mod loop_tag;
mod place;
mod plan;
mod schematic;
mod spatial;
pub mod style;
pub mod text;
mod title;

pub use annotations::*;
pub use build::build;
pub use card::noise_lines;
pub use equivalent::draw as draw_equivalent;
pub use geometry::Rect;
pub use labels::range_text;

/// A point in sheet grid units, `[x, y]`, `y` down.
pub type Point = [f64; 2];

/// The layers of the drawing. Names are the same everywhere: `--layers`,
/// the editor's toggles, and the `"<layer>/<item>"` keys of
/// `doc.layout.annotations`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Layer {
    /// Symbols, wires, junction dots, labels, designators and values.
    Schematic,
    /// One DC voltage tag per net.
    Voltages,
    /// One DC current marker per branch.
    Currents,
    /// A stage card beside each transistor stage.
    Stages,
    /// Title, conditions, program version, result state.
    Title,
    /// A second line on each voltage tag: the worst-case range of that net's
    /// DC voltage over the design spread (off by default: ~50 solves).
    Spread,
    /// A noise line on each stage card: en and in at 1 kHz, and the chain's
    /// noise figure on the first stage's card (off by default).
    Noise,
    /// A distortion line on each stage card: THD at the stage's output for
    /// the signal source's sine at its own amplitude, and on the first
    /// stage's card the source amplitude at which the chain's THD reaches
    /// 1 % and what limits first (off by default: a time-domain run and a
    /// clip search).
    Distortion,
}

impl Layer {
    pub const ALL: [Layer; 8] = [
        Layer::Schematic,
        Layer::Voltages,
        Layer::Currents,
        Layer::Stages,
        Layer::Title,
        Layer::Spread,
        Layer::Noise,
        Layer::Distortion,
    ];

    /// Layers that cost extra analysis and are drawn only when asked for.
    pub const OPTIONAL: [Layer; 3] = [Layer::Spread, Layer::Noise, Layer::Distortion];

    /// The word used on the command line, in the editor and in layout keys.
    pub fn word(self) -> &'static str {
        match self {
            Layer::Schematic => "schematic",
            Layer::Voltages => "voltages",
            Layer::Currents => "currents",
            Layer::Stages => "stages",
            Layer::Title => "title",
            Layer::Spread => "spread",
            Layer::Noise => "noise",
            Layer::Distortion => "distortion",
        }
    }

    pub fn from_word(word: &str) -> Option<Layer> {
        Layer::ALL.into_iter().find(|l| l.word() == word.trim())
    }

    fn bit(self) -> u8 {
        1 << (self as u8)
    }
}

/// A set of layers to draw.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LayerSet(u8);

impl LayerSet {
    pub const NONE: LayerSet = LayerSet(0);
    /// Every layer, the optional ones included.
    pub fn all() -> LayerSet {
        Layer::ALL
            .into_iter()
            .fold(LayerSet::NONE, |s, l| s.with(l))
    }
    /// Every layer except the optional `spread`, `noise` and `distortion` (the
    /// default).
    pub fn standard() -> LayerSet {
        Layer::OPTIONAL
            .into_iter()
            .fold(LayerSet::all(), |s, l| s.without(l))
    }
    pub fn with(self, layer: Layer) -> LayerSet {
        LayerSet(self.0 | layer.bit())
    }
    pub fn without(self, layer: Layer) -> LayerSet {
        LayerSet(self.0 & !layer.bit())
    }
    pub fn contains(self, layer: Layer) -> bool {
        self.0 & layer.bit() != 0
    }
    /// Parse `schematic,voltages,currents,stages,title`. The title block is
    /// always added: a drawing without one cannot be told apart later.
    pub fn parse(list: &str) -> Result<LayerSet, String> {
        let mut set = LayerSet::NONE.with(Layer::Title);
        for word in list.split(',').filter(|w| !w.trim().is_empty()) {
            match Layer::from_word(word) {
                Some(l) => set = set.with(l),
                None => {
                    return Err(format!(
                        "unknown layer \"{}\": use a comma-separated list of schematic, voltages, currents, stages, spread, noise, distortion",
                        word.trim()
                    ))
                }
            }
        }
        Ok(set)
    }
}

impl Default for LayerSet {
    fn default() -> Self {
        LayerSet::standard()
    }
}

/// What an element of the drawing describes (for hit-testing and hover).
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum ItemRef {
    /// A part, by index into `Document::parts`, with its designator (or id
    /// when it has none, as grounds may).
    Part { index: usize, designator: String },
    /// A net, by name.
    Net(String),
    /// One branch current: a part's pin (`pin` is a `PartKind::pin_names`
    /// entry), or the whole part (`pin` empty) for two-terminal parts.
    Current {
        index: usize,
        designator: String,
        pin: String,
    },
    /// A stage, by its transistor's designator.
    Stage(String),
    /// The title block.
    TitleBlock,
}

impl ItemRef {
    /// The `<item>` half of a `"<layer>/<item>"` layout key.
    pub fn key_item(&self) -> String {
        match self {
            ItemRef::Part { designator, .. } => designator.clone(),
            ItemRef::Net(n) => n.clone(),
            ItemRef::Current {
                designator, pin, ..
            } if pin.is_empty() => designator.clone(),
            ItemRef::Current {
                designator, pin, ..
            } => format!("{designator}.{pin}"),
            ItemRef::Stage(s) => s.clone(),
            ItemRef::TitleBlock => "block".into(),
        }
    }
}

/// A colour, 8 bits per channel, straight alpha.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Colour {
    pub r: u8,
    pub g: u8,
    pub b: u8,
    pub a: u8,
}

impl Colour {
    pub const fn rgb(hex: u32) -> Colour {
        Colour {
            r: (hex >> 16) as u8,
            g: (hex >> 8) as u8,
            b: hex as u8,
            a: 255,
        }
    }
    pub const fn with_alpha(self, a: u8) -> Colour {
        Colour { a, ..self }
    }
    /// `#rrggbb` (alpha is written separately by renderers).
    pub fn hex(self) -> String {
        format!("#{:02x}{:02x}{:02x}", self.r, self.g, self.b)
    }
}

/// How a path's outline is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stroke {
    pub colour: Colour,
    /// Grid units.
    pub width: f64,
    /// Dash and gap lengths in grid units; `None` is solid.
    pub dash: Option<[f64; 2]>,
}

/// A geometric shape in sheet grid units.
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    /// A polyline; `closed` joins the last point to the first.
    Polyline {
        points: Vec<Point>,
        closed: bool,
    },
    Circle {
        center: Point,
        radius: f64,
    },
    /// An arc; angles in degrees, clockwise on screen from +x (as in the
    /// symbol files). A negative sweep runs anticlockwise.
    Arc {
        center: Point,
        radius: f64,
        start_degrees: f64,
        sweep_degrees: f64,
    },
    /// An axis-aligned box with rounded corners (`corner` = radius, 0 sharp).
    Rect {
        rect: Rect,
        corner: f64,
    },
}

/// A stroked and/or filled shape.
#[derive(Debug, Clone, PartialEq)]
pub struct PathItem {
    pub shape: Shape,
    pub stroke: Option<Stroke>,
    pub fill: Option<Colour>,
}

/// Horizontal anchor of a text run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Weight {
    Regular,
    Bold,
}

/// One line of text. Text is always upright (never rotated with a part).
#[derive(Debug, Clone, PartialEq)]
pub struct TextRun {
    pub text: String,
    /// The anchor point on the baseline.
    pub position: Point,
    pub anchor: Anchor,
    /// Font size (em height) in grid units.
    pub size: f64,
    pub weight: Weight,
    pub colour: Colour,
}

impl TextRun {
    /// The box the text occupies (ascender to descender, measured with the
    /// embedded font).
    pub fn bounds(&self) -> Rect {
        let m = text::measure(&self.text, self.size, self.weight);
        let x0 = match self.anchor {
            Anchor::Start => self.position[0],
            Anchor::Middle => self.position[0] - m.width / 2.0,
            Anchor::End => self.position[0] - m.width,
        };
        Rect::new(
            [x0, self.position[1] - m.ascent],
            [x0 + m.width, self.position[1] + m.descent],
        )
    }
}

/// A straight arrow from `from` to `to`, head at `to`.
#[derive(Debug, Clone, PartialEq)]
pub struct Arrow {
    pub from: Point,
    pub to: Point,
    /// Length of the head in grid units.
    pub head: f64,
    pub stroke: Stroke,
}

impl Arrow {
    /// The filled head triangle: tip, then the two barbs.
    pub fn head_points(&self) -> [Point; 3] {
        let dx = self.to[0] - self.from[0];
        let dy = self.to[1] - self.from[1];
        let len = (dx * dx + dy * dy).sqrt().max(1e-9);
        let (ux, uy) = (dx / len, dy / len);
        let h = self.head;
        let w = h * 0.45;
        let base = [self.to[0] - ux * h, self.to[1] - uy * h];
        [
            self.to,
            [base[0] - uy * w, base[1] + ux * w],
            [base[0] + uy * w, base[1] - ux * w],
        ]
    }
}

/// One drawing primitive.
#[derive(Debug, Clone, PartialEq)]
pub enum Primitive {
    Path(PathItem),
    Text(TextRun),
    Arrow(Arrow),
}

/// A primitive with its layer and owner.
#[derive(Debug, Clone, PartialEq)]
pub struct Element {
    pub layer: Layer,
    pub item: Option<ItemRef>,
    pub primitive: Primitive,
}

/// Where an annotation was put, and why (for tests, hover and dragging).
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedAnnotation {
    pub layer: Layer,
    pub item: ItemRef,
    /// `"<layer>/<item>"`, the key in `doc.layout.annotations`.
    pub key: String,
    /// The box the annotation occupies (its text and frame).
    pub rect: Rect,
    /// The point on the sheet it describes (net wire, part, pin).
    pub anchor: Point,
    /// How it was placed.
    pub placement: Placement,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Placement {
    /// A clear spot next to its anchor.
    Beside,
    /// No clear spot nearby: moved away, with a thin leader line back.
    Leader,
    /// The user dragged it there (`doc.layout.annotations`).
    User,
}

/// A region that answers [`Scene::hit`].
#[derive(Debug, Clone, PartialEq)]
pub struct HitRegion {
    pub item: ItemRef,
    pub layer: Layer,
    pub shape: HitShape,
}

#[derive(Debug, Clone, PartialEq)]
pub enum HitShape {
    Rect(Rect),
    /// A wire segment, hit within `tolerance` grid units.
    Segment {
        a: Point,
        b: Point,
        tolerance: f64,
    },
}

/// Which device model a stage card draws.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum ModelKind {
    /// The T model with re.
    #[default]
    T,
    /// h-parameters (hie, hfe, hoe, hre).
    H,
    /// Hybrid-π (rπ, gm, ro, Cπ, Cμ).
    HybridPi,
}

impl std::fmt::Display for ModelKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

impl ModelKind {
    pub fn word(self) -> &'static str {
        match self {
            ModelKind::T => "t",
            ModelKind::H => "h",
            ModelKind::HybridPi => "hybrid-pi",
        }
    }
    pub fn from_word(w: &str) -> Option<ModelKind> {
        match w {
            "t" => Some(ModelKind::T),
            "h" => Some(ModelKind::H),
            "hybrid-pi" => Some(ModelKind::HybridPi),
            _ => None,
        }
    }
    /// Every model, in the order the editor offers them.
    pub const ALL: [ModelKind; 3] = [ModelKind::T, ModelKind::H, ModelKind::HybridPi];
    /// The short name the editor's model choice shows.
    pub fn label(self) -> &'static str {
        match self {
            ModelKind::T => "T / re",
            ModelKind::H => "h-parameters",
            ModelKind::HybridPi => "hybrid-π",
        }
    }
    pub fn title(self) -> &'static str {
        match self {
            ModelKind::T => "T model (re)",
            ModelKind::H => "h-parameters",
            ModelKind::HybridPi => "hybrid-π",
        }
    }
}

/// Choices for one build of the scene.
#[derive(Debug, Clone, PartialEq)]
pub struct SceneOptions {
    pub layers: LayerSet,
    /// The device model drawn on stage cards.
    pub model: ModelKind,
    /// Use `doc.layout.annotations` (false: place everything afresh).
    pub use_stored_layout: bool,
}

impl Default for SceneOptions {
    fn default() -> Self {
        SceneOptions {
            layers: LayerSet::standard(),
            model: ModelKind::T,
            use_stored_layout: true,
        }
    }
}

/// The display list.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Scene {
    /// Drawing order: first element at the bottom.
    pub elements: Vec<Element>,
    /// Every placed annotation (voltage tags, current markers, stage cards,
    /// title block).
    pub annotations: Vec<PlacedAnnotation>,
    /// Symbol bodies as placed (the areas annotations must stay off).
    pub bodies: Vec<(ItemRef, Rect)>,
    /// Hit regions, topmost first.
    pub hits: Vec<HitRegion>,
    /// Everything drawn, with a margin: the page.
    pub bounds: Rect,
}

impl Scene {
    /// What is under `point` (grid units): annotations first, then parts,
    /// then wires. Only layers in `layers` answer.
    pub fn hit_in(&self, point: Point, layers: LayerSet) -> Option<ItemRef> {
        self.hits
            .iter()
            .filter(|h| layers.contains(h.layer))
            .find(|h| match &h.shape {
                HitShape::Rect(r) => r.contains(point),
                HitShape::Segment { a, b, tolerance } => {
                    geometry::distance_to_segment(point, *a, *b) <= *tolerance
                }
            })
            .map(|h| h.item.clone())
    }

    /// What is under `point` on any layer.
    pub fn hit(&self, point: Point) -> Option<ItemRef> {
        self.hit_in(point, LayerSet::all())
    }

    /// The elements of the given layers, in drawing order.
    pub fn elements_in(&self, layers: LayerSet) -> impl Iterator<Item = &Element> {
        self.elements
            .iter()
            .filter(move |e| layers.contains(e.layer))
    }

    /// Every text run, in drawing order.
    pub fn texts(&self) -> impl Iterator<Item = &TextRun> {
        self.elements.iter().filter_map(|e| match &e.primitive {
            Primitive::Text(t) => Some(t),
            _ => None,
        })
    }
}

impl Shape {
    /// The shape as a lyon path (f32, grid units), for tessellating renderers
    /// such as the editor canvas.
    pub fn to_lyon(&self) -> lyon::path::Path {
        geometry::shape_to_lyon(self)
    }
}
