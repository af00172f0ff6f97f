//! PNG export through resvg, with only the embedded font in the font
//! database, so the pixels are the same on every machine. The project title
//! goes into a `tEXt` chunk keyed `Title` (and an `iTXt` one when it is not
//! Latin-1), the program into `Software`.

use super::svg::{render_plain, SvgOptions};
use super::{Background, RenderError, PX_PER_GRID};
use crate::scene::{LayerSet, Scene};

#[derive(Debug, Clone, PartialEq)]
pub struct PngOptions {
    /// 1, 2 or 3 (any value from 0.25 to 8 is accepted).
    pub scale: f64,
    pub background: Background,
    pub title: String,
}

impl Default for PngOptions {
    fn default() -> Self {
        PngOptions {
            scale: 1.0,
            background: Background::White,
            title: String::new(),
        }
    }
}

/// The pixel size a scene renders to at `scale`.
pub fn pixel_size(scene: &Scene, scale: f64) -> (u32, u32) {
    let b = scene.bounds;
    (
        (b.width() * PX_PER_GRID * scale).ceil().max(1.0) as u32,
        (b.height() * PX_PER_GRID * scale).ceil().max(1.0) as u32,
    )
}

/// The width a picture should reach by default: an A4 page width (210 mm)
/// at 150 dots per inch, print-ready.
pub const PRINT_WIDTH_PX: u32 = 1240;

/// The default scale of a PNG: the smallest of 1, 2 and 3 that makes the
/// picture at least [`PRINT_WIDTH_PX`] wide (3 when none does). A sheet
/// already that wide stays at 1 (96 pixels per inch of its printed size).
pub fn default_scale(scene: &Scene) -> f64 {
    [1.0, 2.0, 3.0]
        .into_iter()
        .find(|&s| pixel_size(scene, s).0 >= PRINT_WIDTH_PX)
        .unwrap_or(3.0)
}

/// Most pixels of one PNG (50 megapixels: 200 MB of RGBA while drawing).
/// A larger picture is refused with its size; SVG has no such limit.
pub const MAX_PIXELS: u64 = 50_000_000;

/// Refuse a picture of `w` × `h` pixels above [`MAX_PIXELS`].
pub fn check_pixels(w: f64, h: f64) -> Result<(), RenderError> {
    if w * h > MAX_PIXELS as f64 || !(w * h).is_finite() {
        return Err(RenderError(format!(
            "the PNG would be {w:.0} × {h:.0} pixels ({:.0} megapixels), above the limit of {} \
             megapixels: export SVG instead (-o NAME.svg, any size), or a smaller --scale",
            w * h / 1e6,
            MAX_PIXELS / 1_000_000
        )));
    }
    Ok(())
}

/// Any SVG text drawn to RGBA pixels (straight alpha) at `scale`.
pub fn rasterise_svg(svg: &str, scale: f64) -> Result<(u32, u32, Vec<u8>), RenderError> {
    let tree = resvg::usvg::Tree::from_str(svg, &super::usvg_options())
        .map_err(|e| RenderError(format!("cannot read the drawing: {e}")))?;
    let size = tree.size();
    let (wf, hf) = (
        (size.width() as f64 * scale).ceil().max(1.0),
        (size.height() as f64 * scale).ceil().max(1.0),
    );
    check_pixels(wf, hf)?;
    let (w, h) = (wf as u32, hf as u32);
    let mut pixmap = resvg::tiny_skia::Pixmap::new(w, h).ok_or_else(|| {
        RenderError(format!(
            "the image would be {w} × {h} pixels, too large: choose a smaller --scale"
        ))
    })?;
    let s = scale as f32;
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::from_scale(s, s),
        &mut pixmap.as_mut(),
    );
    let mut rgba = Vec::with_capacity((w * h * 4) as usize);
    for p in pixmap.pixels() {
        let c = p.demultiply();
        rgba.extend_from_slice(&[c.red(), c.green(), c.blue(), c.alpha()]);
    }
    Ok((w, h, rgba))
}

/// Encode RGBA pixels as PNG with a title in the text metadata.
pub fn encode(w: u32, h: u32, rgba: &[u8], title: &str) -> Result<Vec<u8>, RenderError> {
    let err = |e: png::EncodingError| RenderError(format!("cannot encode the PNG: {e}"));
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(png::ColorType::Rgba);
        enc.set_depth(png::BitDepth::Eight);
        enc.set_compression(png::Compression::Fast);
        let latin1: String = title
            .chars()
            .map(|c| {
                if (c as u32) < 256 && c != '\0' {
                    c
                } else {
                    '?'
                }
            })
            .collect();
        if !title.is_empty() {
            enc.add_text_chunk("Title".into(), latin1.clone())
                .map_err(err)?;
            if latin1 != title {
                enc.add_itxt_chunk("Title".into(), title.into())
                    .map_err(err)?;
            }
        }
        enc.add_text_chunk(
            "Software".into(),
            format!("Biasline {}", env!("CARGO_PKG_VERSION")),
        )
        .map_err(err)?;
        let mut writer = enc.write_header().map_err(err)?;
        writer.write_image_data(rgba).map_err(err)?;
        writer.finish().map_err(err)?;
    }
    Ok(out)
}

/// Render the layers of a scene as PNG bytes.
pub fn render(scene: &Scene, layers: LayerSet, opts: &PngOptions) -> Result<Vec<u8>, RenderError> {
    if !(0.25..=8.0).contains(&opts.scale) {
        return Err(RenderError(format!(
            "scale {} is out of range: use 1, 2 or 3",
            opts.scale
        )));
    }
    // Refused before the drawing is written out, from the scene's extent.
    let b = scene.bounds;
    check_pixels(
        (b.width() * PX_PER_GRID * opts.scale).ceil().max(1.0),
        (b.height() * PX_PER_GRID * opts.scale).ceil().max(1.0),
    )?;
    let svg_opts = SvgOptions {
        background: opts.background,
        embed_font: false,
        outline_text: false,
        title: opts.title.clone(),
    };
    // The SVG's size is in millimetres: 1 grid unit = 2.54 mm = 9.6 px at 96 dpi.
    let svg = render_plain(scene, layers, &svg_opts, false);
    let (w, h, rgba) = rasterise_svg(&svg, opts.scale)?;
    encode(w, h, &rgba, &opts.title)
}
