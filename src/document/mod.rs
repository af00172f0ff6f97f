//! The project file: the only thing a user edits.
//!
//! Coordinates are integer grid points (see [`GRID_PITCH_MM`]); `x` grows to
//! the right and `y` grows downwards, as on screen. A part's `rotation` turns
//! its symbol clockwise on screen by 0, 90, 180 or 270 degrees, after an
//! optional `mirror` that flips the symbol left–right about its origin.

mod atomic;
mod atomic_signals;
pub mod geometry_limits;
pub mod kinds;
pub mod limits;
mod load;
mod types;
mod waveform;

pub use atomic::{temp_path, write_atomic, PAUSE_ENV};
pub use kinds::{KindInfo, Role, KINDS};
pub use load::{
    load_file, load_str, save_file, save_file_checked, to_json, LoadError, MAX_FILE_BYTES,
};
pub use types::*;
pub use waveform::{TransientSettings, TransientStart, Waveform};

/// The format tag every project file carries.
pub const FORMAT_TAG: &str = "biasline-project";
/// The newest format version this build reads and writes.
pub const FORMAT_VERSION: u32 = 1;
/// One grid step on paper at 100 % (export at 1× uses this pitch).
pub const GRID_PITCH_MM: f64 = 2.54;
