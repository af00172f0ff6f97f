//! The drawer's analysis views as one component: the frequency response,
//! the Monte Carlo spread and the steady-state waveform. It owns their
//! state, its own messages, its update and its view; the app maps them into
//! its own message (`Message::Drawer`) and starts the runs, since only it
//! holds the document.

use super::palette;
use super::pointer_plot::PointerPlot;
use super::response::{ResponseData, ResponsePlot};
use super::spread_view::{self, SpreadRun, SpreadState};
use super::wave_view::{self, WaveRun, WaveState};
use crate::document::Document;
use iced::widget::{canvas, column, text};
use iced::{Element, Length, Task};
use std::sync::Arc;

/// What can happen in the drawer's analysis views.
#[derive(Debug, Clone)]
pub enum Message {
    /// A Monte Carlo spread run, started at a document revision, finished.
    SpreadDone(u64, Arc<Result<SpreadRun, String>>),
    /// A waveform run, started at a document revision, finished.
    WaveformDone(u64, Arc<Result<WaveRun, String>>),
    /// Refresh the waveform run's progress readout.
    WaveformTick,
    /// Stop the waveform run under way.
    WaveformCancel,
    /// For a transistor, the spread view shows this quantity (`IC`,
    /// `VCE`, `ID`, `gm` …).
    Show(&'static str),
}

impl Message {
    /// Pressed by the user (ignored while a dialog is open), not a run's
    /// result or a timer.
    pub fn is_input(&self) -> bool {
        matches!(self, Message::WaveformCancel | Message::Show(_))
    }
}

/// The drawer's analysis views.
#[derive(Debug, Clone, Default)]
pub struct Drawer {
    /// The frequency response, once a sweep exists.
    pub response: Option<ResponseData>,
    /// The Monte Carlo spread.
    pub spread: SpreadState,
    /// The steady-state waveform.
    pub wave: WaveState,
}

impl Drawer {
    /// Handle a message; the task to run and, when the user should hear of
    /// it, a status line for the app to show.
    pub fn update(&mut self, message: Message) -> (Task<Message>, Option<String>) {
        match message {
            Message::SpreadDone(rev, r) => (Task::none(), self.spread.done(rev, r)),
            Message::WaveformDone(rev, r) => (Task::none(), self.wave.done(rev, r)),
            Message::WaveformTick => (self.wave.tick(), None),
            Message::WaveformCancel => {
                self.wave.cancel();
                (Task::none(), None)
            }
            Message::Show(q) => {
                self.spread.shown = Some(q);
                (Task::none(), None)
            }
        }
    }

    /// Start a spread run of `doc` at `revision` (nothing when one is under way).
    pub fn start_spread(
        &mut self,
        doc: &Document,
        revision: u64,
    ) -> (Task<Message>, Option<String>) {
        match self.spread.start(doc, revision) {
            Some((t, line)) => (t, Some(line)),
            None => (Task::none(), None),
        }
    }

    /// Start a waveform run of `doc` at `revision` (nothing when one is under way).
    pub fn start_waveform(
        &mut self,
        doc: &Document,
        revision: u64,
    ) -> (Task<Message>, Option<String>) {
        match self.wave.start(doc, revision) {
            Some((t, line)) => (t, Some(line)),
            None => (Task::none(), None),
        }
    }

    /// The response (once a sweep exists), spread and waveform columns, to
    /// sit side by side with the app's findings column (each fills an equal
    /// share); `revision` is the document's now (older runs are marked stale).
    pub fn view(&self, revision: u64) -> Vec<Element<'_, Message>> {
        let mut columns = Vec::with_capacity(3);
        if let Some(data) = &self.response {
            columns.push(
                column![
                    text("response (magnitude, phase)")
                        .size(14)
                        .color(palette::INK_SOFT),
                    canvas(PointerPlot(ResponsePlot { data }))
                        .width(Length::Fill)
                        .height(150),
                ]
                .spacing(4)
                .width(Length::Fill)
                .into(),
            );
        }
        columns.push(spread_view::view(&self.spread, revision));
        columns.push(wave_view::view(
            &self.wave,
            revision,
            self.spread.target.as_ref(),
        ));
        columns
    }
}
