//! The waveform view in the bottom drawer: the source's sine run to steady
//! state (started by the `waveform` command, computed off the UI thread,
//! with a progress readout and a cancel), the input and output over one
//! period, a second net by hover (the last net the pointer was over), a
//! time readout under the pointer, and the output's harmonic bars.

use super::background::BackgroundRun;
use super::drawer::Message;
use super::palette;
use super::spread_view::Target;
use crate::analysis::circuit;
use crate::analysis::dc::stamps::voltage;
use crate::analysis::transient::steady::{self, Distortion, SteadyOptions};
use crate::document::Document;
use crate::netlist;
use iced::widget::{button, canvas, column, row, text};
use iced::{Element, Length};
use std::sync::atomic::{AtomicBool, AtomicU32, Ordering};
use std::sync::Arc;

/// How often the progress readout refreshes while a run is under way.
const TICK: std::time::Duration = std::time::Duration::from_millis(150);

/// One finished steady-state run.
#[derive(Debug, Clone, PartialEq)]
pub struct WaveRun {
    pub revision: u64,
    pub distortion: Distortion,
    /// Every net's name and its circuit node (for the hovered net's trace).
    pub nets: Vec<(String, usize)>,
    /// The clip search in words: level, first limit, load-line estimate.
    pub clip: String,
}

impl WaveRun {
    /// The hovered net's samples over the period, from the kept states.
    pub fn net_samples(&self, name: &str) -> Option<Vec<f64>> {
        let node = self.nets.iter().find(|(n, _)| n == name)?.1;
        (node != 0).then(|| {
            self.distortion
                .states
                .iter()
                .map(|x| voltage(x, node))
                .collect()
        })
    }
}

/// The waveform view's state in the app.
#[derive(Debug, Clone, Default)]
pub struct WaveState {
    /// The run under way and the last result.
    pub job: BackgroundRun<WaveRun>,
    /// Set to stop the run under way.
    pub cancel: Arc<AtomicBool>,
    /// Progress of the run under way, in thousandths.
    pub progress: Arc<AtomicU32>,
}

/// Run the document's sine to steady state (slow: off the UI thread).
pub fn run(
    doc: &Document,
    revision: u64,
    cancel: &AtomicBool,
    progress: &AtomicU32,
) -> Result<WaveRun, String> {
    let nl = netlist::connect(doc);
    let c = circuit::build(doc, &nl).map_err(|e| e.to_string().trim_end().to_string())?;
    let opts = SteadyOptions {
        keep_states: true,
        ..SteadyOptions::default()
    };
    let d = steady::distortion(doc, &nl, &c, &opts, &mut |f| {
        progress.store((f.clamp(0.0, 1.0) * 1000.0) as u32, Ordering::Relaxed);
        !cancel.load(Ordering::Relaxed)
    })
    .map_err(|e| e.to_string())?;
    let clip = match crate::analysis::transient::clip::search(
        doc,
        &nl,
        &c,
        crate::analysis::transient::clip::DEFAULT_THD_LIMIT,
        &mut |_| !cancel.load(Ordering::Relaxed),
    ) {
        Ok(r) => match r.amplitude {
            Some(a) => format!(
                "clips (THD 1 %) at {} source amplitude: {}{}",
                crate::units::format(a, crate::units::Unit::Volt),
                r.limited_by,
                r.estimate
                    .map(|e| format!(
                        "; load-line estimate {}",
                        crate::units::format(e, crate::units::Unit::Volt)
                    ))
                    .unwrap_or_default()
            ),
            None => format!("no clip level: {}", r.limited_by),
        },
        Err(e) => format!("no clip level: {e}"),
    };
    let nets = nl
        .nets
        .iter()
        .enumerate()
        .map(|(id, n)| (n.name.clone(), c.net_node.get(id).copied().unwrap_or(0)))
        .collect();
    Ok(WaveRun {
        revision,
        distortion: d,
        nets,
        clip,
    })
}

fn tick() -> iced::Task<Message> {
    iced::Task::perform(
        async {
            let (tx, rx) = iced::futures::channel::oneshot::channel::<()>();
            std::thread::spawn(move || {
                std::thread::sleep(TICK);
                let _ = tx.send(());
            });
            let _ = rx.await;
        },
        |_| Message::WaveformTick,
    )
}

impl WaveState {
    /// Start a steady-state run of `doc` (at `revision`), with the status
    /// line to show; None when a run is already under way.
    pub fn start(
        &mut self,
        doc: &Document,
        revision: u64,
    ) -> Option<(iced::Task<Message>, String)> {
        if !self.job.begin(revision) {
            return None;
        }
        self.cancel = Arc::new(AtomicBool::new(false));
        self.progress = Arc::new(AtomicU32::new(0));
        let line = "waveform: running the source's sine to steady state…".to_string();
        let doc = doc.clone();
        let (cancel, progress) = (self.cancel.clone(), self.progress.clone());
        let task = iced::Task::batch([
            iced::Task::perform(
                async move { run(&doc, revision, &cancel, &progress) },
                move |r| Message::WaveformDone(revision, Arc::new(r)),
            ),
            tick(),
        ]);
        Some((task, line))
    }

    /// Stop the run under way.
    pub fn cancel(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
    }

    /// Keep the progress readout fresh while a run is under way.
    pub fn tick(&mut self) -> iced::Task<Message> {
        if self.job.running {
            tick()
        } else {
            iced::Task::none()
        }
    }

    /// A run finished (or was cancelled); the status line to show, or None
    /// when the run was superseded.
    pub fn done(&mut self, revision: u64, r: Arc<Result<WaveRun, String>>) -> Option<String> {
        let line = match self.job.finish(revision, r)? {
            Ok(w) => format!(
                "waveform: THD {:.3} % at the output after {} periods; point at a net to add its trace",
                100.0 * w.distortion.output.spectrum.thd,
                w.distortion.periods
            ),
            Err(e) => format!("waveform: {e}"),
        };
        Some(line)
    }
}

fn small<'a>(s: impl ToString) -> iced::widget::Text<'a> {
    text(s.to_string()).size(13)
}

/// The drawer's waveform column.
pub fn view<'a>(
    state: &'a WaveState,
    revision: u64,
    target: Option<&Target>,
) -> Element<'a, Message> {
    let heading = text("waveform (steady state)")
        .size(14)
        .color(palette::INK_SOFT);
    let mut col = column![heading].spacing(4).width(Length::Fill);
    if state.job.running {
        let p = state.progress.load(Ordering::Relaxed) as f64 / 10.0;
        col = col.push(
            row![
                small(format!("running… {p:.0} % of the longest run")).color(palette::CURRENT),
                button(small("cancel"))
                    .padding([1, 6])
                    .on_press(Message::WaveformCancel),
            ]
            .spacing(8),
        );
    }
    match state.job.result.as_deref() {
        None if !state.job.running => {
            col = col.push(
                small(
                    "press waveform on the command strip to run the source's sine to steady state",
                )
                .color(palette::INK_SOFT),
            )
        }
        None => {}
        Some(Err(e)) => col = col.push(small(e).color(palette::WARNING)),
        Some(Ok(w)) => {
            if w.revision != revision {
                col = col.push(
                    small("stale: the document changed; press waveform to recompute")
                        .color(palette::CURRENT),
                );
            }
            let extra = match target {
                Some(Target::Net(n)) => w.net_samples(n).map(|s| (n.clone(), s)),
                _ => None,
            };
            col = col.push(small(&w.clip).color(palette::INK_SOFT));
            col = col.push(
                canvas(crate::gui::pointer_plot::PointerPlot(plot::WavePlot {
                    run: w,
                    extra,
                }))
                .width(Length::Fill)
                .height(150),
            );
        }
    }
    col.into()
}

mod plot {
    use super::WaveRun;
    use crate::gui::palette;
    use crate::gui::pointer_plot::{label, label_width, Painting};
    use crate::units::{format, Unit};
    use iced::widget::canvas::{Frame, LineDash, Path, Stroke};
    use iced::{Point, Size};

    pub struct WavePlot<'a> {
        pub run: &'a WaveRun,
        /// The hovered net's name and samples.
        pub extra: Option<(String, Vec<f64>)>,
    }

    impl Painting for WavePlot<'_> {
        fn paint(&self, f: &mut Frame, size: Size, pointer: Option<Point>) {
            draw(f, self, size, pointer)
        }
    }

    fn draw(f: &mut Frame, p: &WavePlot<'_>, size: Size, pointer: Option<Point>) {
        f.fill_rectangle(Point::ORIGIN, size, palette::PAPER);
        let d = &p.run.distortion;
        let bars_w = (size.width * 0.28).clamp(80.0, 220.0);
        let w = (size.width - bars_w - 16.0).max(10.0);
        let h = size.height - 16.0;
        let mut traces: Vec<(String, &[f64], iced::Color, bool)> = vec![
            (
                d.input.net.clone(),
                d.input.samples.as_slice(),
                palette::INK,
                false,
            ),
            (
                d.output.net.clone(),
                d.output.samples.as_slice(),
                palette::STAGE,
                false,
            ),
        ];
        if let Some((n, s)) = &p.extra {
            traces.push((n.clone(), s.as_slice(), palette::CURRENT, true));
        }
        let n = d.output.samples.len().max(2);
        let x = |k: f64| 4.0 + (k / n as f64) as f32 * w;
        f.stroke(
            &Path::line(Point::new(4.0, h / 2.0), Point::new(4.0 + w, h / 2.0)),
            Stroke::default().with_color(palette::GRID).with_width(1.0),
        );
        for (name, s, color, dashed) in &traces {
            if s.is_empty() {
                continue;
            }
            let mean = s.iter().sum::<f64>() / s.len() as f64;
            let peak = s
                .iter()
                .map(|v| (v - mean).abs())
                .fold(0.0, f64::max)
                .max(1e-15);
            let y = |v: f64| h / 2.0 - ((v - mean) / peak) as f32 * (0.45 * h);
            let path = Path::new(|b| {
                for k in 0..=s.len() {
                    let v = s[k % s.len()];
                    let pt = Point::new(x(k as f64), y(v));
                    if k == 0 {
                        b.move_to(pt)
                    } else {
                        b.line_to(pt)
                    }
                }
            });
            let mut stroke = Stroke::default().with_color(*color).with_width(1.6);
            if *dashed {
                stroke.line_dash = LineDash {
                    segments: &[5.0, 3.0],
                    offset: 0,
                };
            }
            f.stroke(&path, stroke);
            let _ = name;
        }
        // Time readout under the pointer.
        let period = 1.0 / d.frequency;
        // The note on scaling only where it fits beside the bars.
        let thd = format!("THD {:.3} %", 100.0 * d.output.spectrum.thd);
        let with_note = format!("{thd}  (each trace scaled to its own peak)");
        let mut readout = if label_width(&with_note) <= w {
            with_note
        } else {
            thd
        };
        if let Some(pt) = pointer.filter(|pt| pt.x >= 4.0 && pt.x <= 4.0 + w) {
            let k = (((pt.x - 4.0) / w) as f64 * n as f64).round() as usize % n;
            f.stroke(
                &Path::line(Point::new(pt.x, 0.0), Point::new(pt.x, h)),
                Stroke::default().with_color(palette::GRID).with_width(1.0),
            );
            let parts: Vec<String> = traces
                .iter()
                .filter_map(|(name, s, _, _)| {
                    s.get(k)
                        .map(|v| format!("{name} {}", format(*v, Unit::Volt)))
                })
                .collect();
            readout = format!(
                "t = {}: {}",
                format(period * k as f64 / n as f64, Unit::Second),
                parts.join(", ")
            );
        }
        f.fill_text(label(readout, Point::new(4.0, h + 2.0), palette::INK_SOFT));
        // Harmonic bars, dB below the fundamental (top 0 dB, bottom −100 dB).
        let bx = 4.0 + w + 12.0;
        let db = &d.output.spectrum.relative_db;
        let slot = bars_w / db.len().max(1) as f32;
        for (k, v) in db.iter().enumerate() {
            let cx = bx + slot * k as f32;
            let top = ((-v / 100.0).clamp(0.0, 1.0)) as f32 * h;
            if v.is_finite() && *v > -100.0 {
                f.fill_rectangle(
                    Point::new(cx + 0.2 * slot, top),
                    Size::new(0.6 * slot, (h - top).max(0.0)),
                    palette::STAGE,
                );
            }
            // Harmonic numbers under the bars; in a narrow drawer only the
            // first, the odd ones up to 9 would crowd, so 2, 3, 5 and 10.
            let n = k + 2;
            if slot >= label_width("10") + 2.0 || matches!(n, 2 | 3 | 5 | 10) {
                let text = format!("{n}");
                let at = (cx + 0.2 * slot).min(bx + bars_w - label_width(&text) - 2.0);
                f.fill_text(label(text, Point::new(at, h + 2.0), palette::INK_SOFT));
            }
        }
        f.fill_text(label(
            "harmonics (dB)".into(),
            Point::new(bx, 0.0),
            palette::INK_SOFT,
        ));
    }
}
