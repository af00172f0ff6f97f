//! Text measurement with the embedded font (DejaVu Sans, from the `dejavu`
//! crate). The SVG and PNG renderers draw with these same font files and
//! switch kerning off, so a measured width is the drawn width.

use super::Weight;
use std::sync::OnceLock;

/// The family name the renderers ask for.
pub const FAMILY: &str = "DejaVu Sans";

/// The font file for a weight.
pub fn font_data(weight: Weight) -> &'static [u8] {
    match weight {
        Weight::Regular => dejavu::sans::regular(),
        Weight::Bold => dejavu::sans::bold(),
    }
}

/// Size of a text run in the units of `size`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TextMetrics {
    pub width: f64,
    /// Above the baseline.
    pub ascent: f64,
    /// Below the baseline (positive).
    pub descent: f64,
}

struct FontMetrics {
    face: ttf_parser::Face<'static>,
    units_per_em: f64,
    ascent: f64,
    descent: f64,
    /// Advances of U+0020..U+00FF in font units, the common case.
    latin: [u16; 224],
}

impl FontMetrics {
    fn load(weight: Weight) -> Option<FontMetrics> {
        let face = ttf_parser::Face::parse(font_data(weight), 0).ok()?;
        let mut latin = [0u16; 224];
        for (i, slot) in latin.iter_mut().enumerate() {
            let c = char::from_u32(0x20 + i as u32).unwrap_or(' ');
            *slot = advance(&face, c);
        }
        Some(FontMetrics {
            units_per_em: face.units_per_em() as f64,
            // Cap height plus a little for accents; the line box the tags use.
            ascent: face.ascender() as f64,
            descent: -(face.descender() as f64),
            face,
            latin,
        })
    }
}

fn advance(face: &ttf_parser::Face<'_>, c: char) -> u16 {
    face.glyph_index(c)
        .or_else(|| face.glyph_index('?'))
        .and_then(|g| face.glyph_hor_advance(g))
        .unwrap_or(0)
}

fn metrics(weight: Weight) -> Option<&'static FontMetrics> {
    static REGULAR: OnceLock<Option<FontMetrics>> = OnceLock::new();
    static BOLD: OnceLock<Option<FontMetrics>> = OnceLock::new();
    match weight {
        Weight::Regular => REGULAR.get_or_init(|| FontMetrics::load(Weight::Regular)),
        Weight::Bold => BOLD.get_or_init(|| FontMetrics::load(Weight::Bold)),
    }
    .as_ref()
}

/// Measure one line of text at `size` (em height, any unit).
pub fn measure(text: &str, size: f64, weight: Weight) -> TextMetrics {
    let Some(m) = metrics(weight) else {
        // The font is compiled in; this is only reached if it failed to parse.
        return TextMetrics {
            width: text.chars().count() as f64 * size * 0.6,
            ascent: size * 0.93,
            descent: size * 0.24,
        };
    };
    let units: u32 = text
        .chars()
        .map(|c| {
            let i = c as u32;
            if (0x20..0x100).contains(&i) {
                m.latin[(i - 0x20) as usize] as u32
            } else {
                advance(&m.face, c) as u32
            }
        })
        .sum();
    let k = size / m.units_per_em;
    TextMetrics {
        width: units as f64 * k,
        ascent: m.ascent * k,
        descent: m.descent * k,
    }
}

/// The longest title drawn in a title block or over a plot, in characters.
/// A longer title is cut there and ends in "…" on the drawing (the file and
/// the SVG/PNG metadata keep it whole), so a huge title cannot make a huge
/// drawing.
pub const TITLE_DRAWN_MAX: usize = 100;

/// `s` cut to at most `max` characters, ending in "…" when it was cut.
pub fn shorten(s: &str, max: usize) -> std::borrow::Cow<'_, str> {
    match s.char_indices().nth(max) {
        None => std::borrow::Cow::Borrowed(s),
        Some(_) => {
            let keep = max.saturating_sub(1);
            let end = s.char_indices().nth(keep).map_or(s.len(), |(i, _)| i);
            std::borrow::Cow::Owned(format!("{}…", s[..end].trim_end()))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn width_grows_with_text_and_size() {
        // invariant: advance widths add up and scale linearly with the font size.
        let a = measure("4.7 kΩ", 1.0, Weight::Regular).width;
        let b = measure("4.7 kΩ4.7 kΩ", 1.0, Weight::Regular).width;
        assert!((b - 2.0 * a).abs() < 1e-9);
        let c = measure("4.7 kΩ", 2.0, Weight::Regular).width;
        assert!((c - 2.0 * a).abs() < 1e-9);
        assert!(a > 2.0 && a < 4.5, "{a}");
    }

    #[test]
    fn bold_is_wider_than_regular() {
        // from memory: DejaVu Sans Bold has wider advances than the regular face.
        assert!(
            measure("Zin", 1.0, Weight::Bold).width > measure("Zin", 1.0, Weight::Regular).width
        );
    }
}
