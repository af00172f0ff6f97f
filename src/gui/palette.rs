//! The editor's colours (the project palette, light, for paper).

use iced::Color;

const fn rgb(hex: u32) -> Color {
    Color::from_rgb(
        ((hex >> 16) & 0xff) as f32 / 255.0,
        ((hex >> 8) & 0xff) as f32 / 255.0,
        (hex & 0xff) as f32 / 255.0,
    )
}

pub const INK: Color = rgb(0x23262f);
pub const INK_SOFT: Color = rgb(0x4a4f5c);
pub const PAPER: Color = rgb(0xfbf9f4);
pub const PANEL: Color = rgb(0xf3efe5);
pub const GRID: Color = rgb(0xe7e2d6);
pub const VOLTAGE: Color = rgb(0x0f766e);
pub const CURRENT: Color = rgb(0xb45309);
pub const STAGE: Color = rgb(0x5b21b6);
pub const WARNING: Color = rgb(0xb91c1c);
/// Selection: a blue that differs from every annotation colour; the dashed
/// outline carries the meaning too.
pub const SELECT: Color = rgb(0x1d4ed8);
pub const GHOST: Color = Color::from_rgba(0.137, 0.149, 0.184, 0.45);
