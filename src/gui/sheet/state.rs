//! The sheet's state types: the tool in hand, the view, a drag under way.

use crate::document::{GridPoint, PartKind};
use crate::scene::Scene;
use iced::{Point, Size, Vector};

/// What a click on the sheet does.
#[derive(Debug, Clone, PartialEq)]
pub enum Tool {
    Select,
    Place {
        kind: PartKind,
        rotation: u16,
        mirror: bool,
    },
    Wire {
        /// Points fixed so far (empty before the first click).
        points: Vec<GridPoint>,
        horizontal_first: bool,
    },
    Label,
}

/// Screen placement of the sheet: pixel position of grid point (0, 0) and
/// pixels per grid step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct View {
    pub origin: Vector,
    pub scale: f32,
}

impl View {
    pub fn to_screen(&self, p: [f64; 2]) -> Point {
        Point::new(
            self.origin.x + p[0] as f32 * self.scale,
            self.origin.y + p[1] as f32 * self.scale,
        )
    }
    pub fn to_sheet(&self, p: Point) -> [f64; 2] {
        [
            ((p.x - self.origin.x) / self.scale) as f64,
            ((p.y - self.origin.y) / self.scale) as f64,
        ]
    }
    /// A view showing the whole of `scene` in a canvas of `size`.
    pub fn fit(scene: &Scene, size: Size) -> View {
        let r = scene.bounds;
        let b = if r.is_empty() || r.width() < 1.0 {
            [0.0, 0.0, 40.0, 30.0]
        } else {
            [r.min[0], r.min[1], r.max[0], r.max[1]]
        };
        let margin = 1.0;
        let (w, h) = (
            (b[2] - b[0] + 2.0 * margin) as f32,
            (b[3] - b[1] + 2.0 * margin) as f32,
        );
        let scale = (size.width / w).min(size.height / h).clamp(MIN_SCALE, 40.0);
        let cx = ((b[0] + b[2]) / 2.0) as f32;
        let cy = ((b[1] + b[3]) / 2.0) as f32;
        View {
            origin: Vector::new(
                size.width / 2.0 - cx * scale,
                size.height / 2.0 - cy * scale,
            ),
            scale,
        }
    }
}

pub const MIN_SCALE: f32 = 4.0;
pub const MAX_SCALE: f32 = 80.0;

#[derive(Debug, Clone)]
pub(crate) enum Drag {
    Pan {
        last: Point,
    },
    /// Moving the selection; the app holds the document as it was.
    Move {
        last: GridPoint,
    },
    Band {
        from: [f64; 2],
        to: [f64; 2],
    },
}
