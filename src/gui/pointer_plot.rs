//! A plot on a canvas whose only state is where the pointer is (the
//! response panel and the waveform drawer): it redraws when the pointer
//! moves and hands the painting to the plot itself. Also the small-label
//! helpers both plots use.

use iced::mouse;
use iced::widget::canvas::{self, Frame, Geometry, Text};
use iced::{Point, Rectangle, Renderer, Size, Theme};

/// What a pointer plot draws, given its size and the pointer (if over it).
pub trait Painting {
    fn paint(&self, f: &mut Frame, size: Size, pointer: Option<Point>);
}

/// A canvas program drawing `P`, redrawn as the pointer moves.
pub struct PointerPlot<P>(pub P);

impl<P: Painting, Message> canvas::Program<Message> for PointerPlot<P> {
    type State = Option<Point>;

    fn update(
        &self,
        state: &mut Option<Point>,
        event: &canvas::Event,
        bounds: Rectangle,
        cursor: mouse::Cursor,
    ) -> Option<canvas::Action<Message>> {
        if let canvas::Event::Mouse(mouse::Event::CursorMoved { .. }) = event {
            let p = cursor.position_in(bounds);
            if p != *state {
                *state = p;
                return Some(canvas::Action::request_redraw());
            }
        }
        None
    }

    fn draw(
        &self,
        state: &Option<Point>,
        renderer: &Renderer,
        _theme: &Theme,
        bounds: Rectangle,
        _cursor: mouse::Cursor,
    ) -> Vec<Geometry> {
        let mut f = Frame::new(renderer, bounds.size());
        self.0.paint(&mut f, bounds.size(), *state);
        vec![f.into_geometry()]
    }
}

/// Size of the plots' labels, px.
pub const LABEL_SIZE: f32 = 11.0;

/// A plot label at `at` (its top-left corner).
pub fn label(s: String, at: Point, color: iced::Color) -> Text {
    Text {
        content: s,
        position: at,
        color,
        size: LABEL_SIZE.into(),
        ..Text::default()
    }
}

/// Width of a label, px: an average glyph is about 0.6 em in the sans face
/// (generous, so labels never touch).
pub fn label_width(s: &str) -> f32 {
    s.chars().count() as f32 * LABEL_SIZE * 0.6
}
