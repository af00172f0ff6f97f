//! The spread view in the bottom drawer: a Monte Carlo run of the open
//! document (started by the `spread` command, computed off the UI thread)
//! and histograms of the quantity under the pointer — a net's DC voltage,
//! or a transistor's IC and VCE.

use super::app::App;
use super::background::BackgroundRun;
use super::drawer::Message;
use super::edit::Item;
use super::histogram::{bin_count, Histogram, Stats};
use super::hit;
use super::palette;
use crate::document::Document;
use crate::spread;
use crate::units::{format, Unit};
use iced::widget::{button, canvas, column, row, text};
use iced::{Element, Length};
use std::sync::Arc;

/// The most boards the editor draws in one run (the command line does more).
pub const MAX_RUNS: usize = 500;

/// The view's height: that of the response panel beside it.
const HEIGHT: f32 = 172.0;

/// One finished Monte Carlo run.
#[derive(Debug, Clone, PartialEq)]
pub struct SpreadRun {
    /// The document revision the run was made from.
    pub revision: u64,
    /// Per quantity, its value on every board that solved.
    pub samples: Vec<(String, Vec<f64>)>,
    /// The nominal board's value of each quantity.
    pub nominal: Vec<(String, f64)>,
    pub runs: usize,
    pub failed: usize,
    /// Boards (of those that solved) with a transistor out of forward-active.
    pub left_active: usize,
    pub seed: u64,
}

impl SpreadRun {
    pub fn samples_of(&self, name: &str) -> Option<&[f64]> {
        self.samples
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, v)| v.as_slice())
    }
    pub fn nominal_of(&self, name: &str) -> Option<f64> {
        self.nominal
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, v)| *v)
    }
    pub fn solved(&self) -> usize {
        self.runs - self.failed
    }
}

/// The spread view's state in the app.
#[derive(Debug, Clone, Default)]
pub struct SpreadState {
    /// The run under way and the last result.
    pub job: BackgroundRun<SpreadRun>,
    /// The last net or transistor the pointer was over (kept while the
    /// pointer travels to the drawer to read the histogram).
    pub target: Option<Target>,
    /// For a transistor, the quantity shown (`IC`, `VCE`, `ID`, `gm` …);
    /// None: the first it has.
    pub shown: Option<&'static str>,
}

/// What the histogram is of.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Target {
    Net(String),
    Transistor(String),
}

/// Run the Monte Carlo spread of `doc` (slow: call it off the UI thread).
pub fn run(doc: &Document, revision: u64) -> Result<SpreadRun, String> {
    use spread::Evaluator;
    let vars = spread::collect(doc);
    let axes = spread::axes(doc, &vars);
    let mut board = spread::evaluate::Board::new(doc);
    board.sweep = false;
    board.device_gm = true;
    let nominal = board
        .evaluate(doc)
        .map_err(|e| format!("the nominal board does not solve: {e}"))?;
    let runs = doc.spread.runs.min(MAX_RUNS);
    let seed = doc.spread.seed;
    let outcomes = spread::monte_carlo(doc, &vars, &axes, &board, runs, seed, 0)?;
    let mut samples: Vec<(String, Vec<f64>)> = nominal
        .values
        .iter()
        .map(|(n, _)| (n.clone(), Vec::with_capacity(runs)))
        .collect();
    let (mut failed, mut left_active) = (0, 0);
    for o in &outcomes {
        match o {
            Ok(o) => {
                if !o.all_active {
                    left_active += 1;
                }
                for (name, v) in &o.values {
                    if let Some((_, xs)) = samples.iter_mut().find(|(n, _)| n == name) {
                        xs.push(*v);
                    }
                }
            }
            Err(_) => failed += 1,
        }
    }
    Ok(SpreadRun {
        revision,
        samples,
        nominal: nominal.values,
        runs,
        failed,
        left_active,
        seed,
    })
}

impl App {
    /// The spread view follows the last net or transistor under the pointer.
    pub fn follow_pointer(&mut self) {
        if let Some(t) = hovered(self) {
            self.drawer.spread.target = Some(t);
        }
    }
}

impl SpreadState {
    /// A run finished; the status line to show, or None when the run was
    /// for a document since replaced, or superseded.
    pub fn done(&mut self, revision: u64, r: Arc<Result<SpreadRun, String>>) -> Option<String> {
        self.job.finish(revision, r).map(status)
    }

    /// Start a spread run of `doc` (at `revision`) off the UI thread, with
    /// the status line to show; None when a run is already under way.
    pub fn start(
        &mut self,
        doc: &Document,
        revision: u64,
    ) -> Option<(iced::Task<Message>, String)> {
        if !self.job.begin(revision) {
            return None;
        }
        let line = format!("spread: drawing {} boards…", doc.spread.runs.min(MAX_RUNS));
        let doc = doc.clone();
        let task = iced::Task::perform(async move { run(&doc, revision) }, move |r| {
            Message::SpreadDone(revision, Arc::new(r))
        });
        Some((task, line))
    }
}

/// The status line after a run.
pub fn status(r: &Result<SpreadRun, String>) -> String {
    match r {
        Ok(run) => format!(
            "spread: {} boards drawn; point at a net or a transistor to see its histogram",
            run.runs
        ),
        Err(e) => format!("spread failed: {e}"),
    }
}

/// The net or transistor under the pointer, if any.
pub fn hovered(app: &App) -> Option<Target> {
    let at = app.sheet.pointer?;
    let nl = &app.derived.netlist;
    if let Some(net) = hit::net_at(&app.doc, nl, at) {
        return nl.nets.get(net).map(|n| Target::Net(n.name.clone()));
    }
    let transistor = |i: usize| {
        app.doc
            .parts
            .get(i)
            .filter(|p| p.kind.is_transistor())
            .map(|p| Target::Transistor(p.designator.clone()))
    };
    match app
        .scene
        .hit_in(at, app.layer_set().without(crate::scene::Layer::Schematic))
    {
        Some(crate::scene::ItemRef::Net(name)) => return Some(Target::Net(name)),
        Some(crate::scene::ItemRef::Part { index, .. })
        | Some(crate::scene::ItemRef::Current { index, .. }) => return transistor(index),
        _ => {}
    }
    let tol = (6.0 / app.view_for(app.sheet.size).scale as f64).max(0.25);
    match hit::item_at(&app.doc, at, tol) {
        Some(Item::Part(i)) => transistor(i),
        _ => None,
    }
}

/// One histogram as drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct Panel {
    pub name: String,
    pub unit: Unit,
    pub histogram: Histogram,
    pub stats: Stats,
    pub nominal: Option<f64>,
}

/// A bipolar transistor's quantities in the view, in switch order.
pub const BIPOLAR: &[(&str, Unit)] = &[("IC", Unit::Ampere), ("VCE", Unit::Volt)];

/// A field-effect transistor's: its operating point, its transconductance,
/// and the figures of the stage it is the device of.
pub const FET: &[(&str, Unit)] = &[
    ("ID", Unit::Ampere),
    ("VDS", Unit::Volt),
    ("gm", Unit::Siemens),
    ("Av", Unit::None),
    ("Zin", Unit::Ohm),
    ("Zout", Unit::Ohm),
];

/// The quantity a panel is of: `IC` of `IC(Q1)`.
pub fn quantity(p: &Panel) -> &str {
    p.name.split('(').next().unwrap_or("")
}

/// The panels for the target in `run`, and what to say when there are none.
pub fn panels(run: &SpreadRun, target: &Target) -> Result<Vec<Panel>, String> {
    let names: Vec<(String, Unit)> = match target {
        Target::Net(n) => vec![(format!("V({n})"), Unit::Volt)],
        Target::Transistor(q) => {
            // A bipolar transistor has IC in the run, a FET has ID.
            let list = if run.samples_of(&format!("IC({q})")).is_some() {
                BIPOLAR
            } else {
                FET
            };
            list.iter()
                .map(|(what, unit)| (format!("{what}({q})"), *unit))
                .collect()
        }
    };
    let mut out = Vec::new();
    for (name, unit) in names {
        let Some(xs) = run.samples_of(&name) else {
            continue;
        };
        let (Some(histogram), Some(stats)) =
            (Histogram::of(xs, bin_count(xs.len())), Stats::of(xs))
        else {
            continue;
        };
        out.push(Panel {
            nominal: run.nominal_of(&name),
            name,
            unit,
            histogram,
            stats,
        });
    }
    if out.is_empty() {
        return Err(match target {
            Target::Net(n) => {
                format!("net {n} is fixed (ground or a rail) or unconnected: it does not spread")
            }
            Target::Transistor(q) => format!("{q}: no board solved"),
        });
    }
    Ok(out)
}

/// The numbers of a panel in one line.
pub fn summary(p: &Panel) -> String {
    let s = &p.stats;
    let nominal = p
        .nominal
        .map(|v| format!(" · nominal {}", format(v, p.unit)))
        .unwrap_or_default();
    format!(
        "{}: {} runs · mean {} · σ {} · min {} · max {}{nominal}",
        p.name,
        s.count,
        format(s.mean, p.unit),
        format(s.sigma, p.unit),
        format(s.min, p.unit),
        format(s.max, p.unit),
    )
}

fn small<'a>(s: impl ToString) -> iced::widget::Text<'a> {
    text(s.to_string()).size(13)
}

/// The drawer's spread column.
pub fn view(state: &SpreadState, revision: u64) -> Element<'_, Message> {
    let heading = text("spread (Monte Carlo)")
        .size(14)
        .color(palette::INK_SOFT);
    let body: Element<Message> = match state.job.result.as_deref() {
        None if state.job.running => small("running the spread…").into(),
        None => small(format!(
            "press spread on the command strip to draw up to {MAX_RUNS} boards \
             from the part tolerances, then point at a net or a transistor"
        ))
        .color(palette::INK_SOFT)
        .into(),
        Some(Err(e)) => small(format!("the spread did not run: {e}"))
            .color(palette::WARNING)
            .into(),
        Some(Ok(run)) => run_view(state, revision, run),
    };
    column![heading, body].spacing(4).width(Length::Fill).into()
}

fn run_view<'a>(state: &'a SpreadState, revision: u64, run: &'a SpreadRun) -> Element<'a, Message> {
    let mut col = column![].spacing(2);
    let fraction = if run.solved() > 0 {
        100.0 * run.left_active as f64 / run.solved() as f64
    } else {
        0.0
    };
    let mut head = format!(
        "{} boards (seed {}): {:.1} % had a transistor leave forward-active",
        run.runs, run.seed, fraction
    );
    if run.failed > 0 {
        head.push_str(&format!("; {} did not solve", run.failed));
    }
    let warn = run.left_active > 0 || run.failed > 0;
    col = col.push(small(head).color(if warn {
        palette::WARNING
    } else {
        palette::INK_SOFT
    }));
    let stale = state.job.running || run.revision != revision;
    if state.job.running {
        col = col.push(small("recomputing…").color(palette::CURRENT));
    } else if stale {
        col = col.push(
            small("stale: the document changed since this run; press spread to recompute")
                .color(palette::CURRENT),
        );
    }
    match &state.target {
        None => col = col.push(small("point at a net or a transistor to see its spread")),
        Some(t) => match panels(run, t) {
            Err(e) => col = col.push(small(e).color(palette::INK_SOFT)),
            Ok(mut ps) => {
                let mut switch = 0;
                if matches!(t, Target::Transistor(_)) {
                    let all: Vec<&'static str> = BIPOLAR
                        .iter()
                        .chain(FET)
                        .map(|(w, _)| *w)
                        .filter(|w| ps.iter().any(|p| quantity(p) == *w))
                        .collect();
                    let want = state
                        .shown
                        .filter(|w| all.contains(w))
                        .or(all.first().copied());
                    ps.retain(|p| Some(quantity(p)) == want);
                    switch = if all.len() > 4 { 2 } else { 1 };
                    let mut switches = row![small("show:")]
                        .spacing(6)
                        .align_y(iced::Alignment::Center);
                    for w in all {
                        let on = Some(w) == want;
                        switches = switches.push(
                            button(small(w))
                                .padding([1, 8])
                                .style(if on {
                                    button::primary
                                } else {
                                    button::secondary
                                })
                                .on_press(Message::Show(w)),
                        );
                    }
                    // Six quantities (a FET's) may take two lines.
                    col = col.push(switches.wrap().vertical_spacing(2));
                }
                for p in &ps {
                    col = col.push(small(summary(p)).color(palette::INK));
                }
                // What is left of the fixed height (a summary may wrap to two lines).
                let lines = 1 + usize::from(stale) + switch + 2 * ps.len();
                let h = (HEIGHT - 26.0 - 19.0 * lines as f32).max(48.0);
                col = col.push(
                    canvas(plot::HistogramPlot { panels: ps })
                        .width(Length::Fill)
                        .height(h),
                );
            }
        },
    }
    col.width(Length::Fill).into()
}

mod plot {
    use super::Panel;
    use crate::gui::drawer::Message;
    use crate::gui::palette;
    use crate::units::format;
    use iced::mouse;
    use iced::widget::canvas::{self, Frame, Geometry, LineDash, Path, Stroke, Text};
    use iced::{Point, Rectangle, Renderer, Size, Theme};

    /// Histograms side by side, bars in the quantity's colour.
    pub struct HistogramPlot {
        pub panels: Vec<Panel>,
    }

    impl canvas::Program<Message> for HistogramPlot {
        type State = ();

        fn draw(
            &self,
            _state: &(),
            renderer: &Renderer,
            _theme: &Theme,
            bounds: Rectangle,
            _cursor: mouse::Cursor,
        ) -> Vec<Geometry> {
            let mut frame = Frame::new(renderer, bounds.size());
            let n = self.panels.len().max(1) as f32;
            let gap = 16.0;
            let w = (bounds.width - gap * (n - 1.0)) / n;
            for (k, p) in self.panels.iter().enumerate() {
                let x0 = k as f32 * (w + gap);
                draw_panel(&mut frame, p, x0, w, bounds.height);
            }
            vec![frame.into_geometry()]
        }
    }

    fn label(frame: &mut Frame, s: String, at: Point, align_right: bool, color: iced::Color) {
        frame.fill_text(Text {
            content: s,
            position: at,
            color,
            size: 11.0.into(),
            align_x: if align_right {
                iced::widget::text::Alignment::Right
            } else {
                iced::widget::text::Alignment::Left
            },
            ..Text::default()
        });
    }

    fn draw_panel(frame: &mut Frame, p: &Panel, x0: f32, w: f32, h: f32) {
        // Row 0: the name; row 1: the nominal mark's label; then the bars.
        let (left, top, bottom) = (x0 + 4.0, 28.0, h - 16.0);
        let width = (w - 8.0).max(10.0);
        let plot_h = (bottom - top).max(10.0);
        let color = if p.unit == crate::units::Unit::Ampere {
            palette::CURRENT
        } else {
            palette::VOLTAGE
        };
        let tallest = p.histogram.tallest().max(1) as f32;
        let bins = p.histogram.counts.len() as f32;
        let bw = width / bins;
        for (k, c) in p.histogram.counts.iter().enumerate() {
            let bh = *c as f32 / tallest * plot_h;
            if bh > 0.0 {
                frame.fill_rectangle(
                    Point::new(left + k as f32 * bw + 0.5, bottom - bh),
                    Size::new((bw - 1.0).max(1.0), bh),
                    color,
                );
            }
        }
        frame.stroke(
            &Path::line(Point::new(left, bottom), Point::new(left + width, bottom)),
            Stroke::default()
                .with_color(palette::INK_SOFT)
                .with_width(1.0),
        );
        label(
            frame,
            format!("{}  (tallest bar {} boards)", p.name, p.histogram.tallest()),
            Point::new(left, 0.0),
            false,
            palette::INK,
        );
        label(
            frame,
            format(p.histogram.lo, p.unit),
            Point::new(left, bottom + 2.0),
            false,
            palette::INK_SOFT,
        );
        label(
            frame,
            format(p.histogram.hi, p.unit),
            Point::new(left + width, bottom + 2.0),
            true,
            palette::INK_SOFT,
        );
        if let Some(v) = p.nominal {
            let t = p.histogram.fraction(v).clamp(0.0, 1.0) as f32;
            let x = left + t * width;
            frame.stroke(
                &Path::line(Point::new(x, 14.0), Point::new(x, bottom)),
                Stroke {
                    line_dash: LineDash {
                        segments: &[4.0, 3.0],
                        offset: 0,
                    },
                    ..Stroke::default().with_color(palette::INK).with_width(1.5)
                },
            );
            let right = t > 0.5;
            let at = Point::new(if right { x - 3.0 } else { x + 3.0 }, 14.0);
            label(
                frame,
                format!("nominal {}", format(v, p.unit)),
                at,
                right,
                palette::INK,
            );
        }
    }
}
