//! Renderer checks: the SVG parses and carries every net's voltage as text,
//! the PNG decodes at the requested size and is not blank, the title is in
//! the PNG's text metadata, and rendering twice gives identical bytes.

use biasline::document::{self, Document};
use biasline::netlist;
use biasline::render::export::{ExportOptions, Format};
use biasline::render::{png as png_out, svg, Background, PX_PER_GRID};
use biasline::scene::{self, text, LayerSet, SceneOptions, Weight};
use biasline::units::{self, Unit};

fn demo(name: &str) -> Document {
    let path = format!("{}/projects/{name}.json", env!("CARGO_MANIFEST_DIR"));
    document::load_file(std::path::Path::new(&path)).unwrap()
}

fn opts(format: Format, scale: f64, background: Background) -> ExportOptions {
    ExportOptions {
        format,
        scale,
        background,
        ..ExportOptions::default()
    }
}

#[test]
fn svg_parses_and_contains_every_net_voltage_as_formatted() {
    for name in ["two-stage-preamp", "common-emitter"] {
        let doc = demo(name);
        let nl = netlist::connect(&doc);
        let ann = biasline::results::annotations_for(&doc);
        assert!(!ann.net_voltages.is_empty(), "{name} solves");
        let out = biasline::results::export::export(
            &doc,
            Some(&ann),
            &opts(Format::Svg, 1.0, Background::White),
        )
        .unwrap();
        let text = String::from_utf8(out.bytes).unwrap();
        // invariant: the file is SVG that usvg reads, with the embedded font.
        let tree = resvg::usvg::Tree::from_str(&text, &biasline::render::usvg_options()).unwrap();
        assert!(tree.size().width() > 10.0);
        assert!(text.contains("@font-face"));
        // invariant: each net's voltage appears as text, as units formats it.
        for (id, net) in nl.nets.iter().enumerate() {
            if Some(id) == nl.ground {
                continue;
            }
            let v = units::format(ann.net_voltages[&net.name], Unit::Volt);
            assert!(
                text.contains(&format!(">{v}</text>")),
                "{name}: {} = {v} missing",
                net.name
            );
        }
    }
}

#[test]
fn outlined_svg_has_no_text_elements_and_still_parses() {
    let doc = demo("common-emitter");
    let mut o = opts(Format::Svg, 1.0, Background::White);
    o.outline_text = true;
    let out = biasline::results::export::export(&doc, None, &o).unwrap();
    let text = String::from_utf8(out.bytes).unwrap();
    // invariant: outlining turns every <text> into paths.
    assert!(!text.contains("<text"));
    assert!(resvg::usvg::Tree::from_str(&text, &resvg::usvg::Options::default()).is_ok());
}

fn decode(bytes: &[u8]) -> image::RgbaImage {
    image::load_from_memory_with_format(bytes, image::ImageFormat::Png)
        .unwrap()
        .to_rgba8()
}

#[test]
fn png_decodes_at_the_requested_size_and_is_not_blank() {
    let doc = demo("two-stage-preamp");
    for scale in [1.0, 2.0, 3.0] {
        let out = biasline::results::export::export(
            &doc,
            None,
            &opts(Format::Png, scale, Background::White),
        )
        .unwrap();
        let img = decode(&out.bytes);
        let b = out.scene.bounds;
        // invariant: size = drawing extent × 9.6 px per grid step × scale, rounded up.
        let w = (b.width() * PX_PER_GRID * scale).ceil() as u32;
        let h = (b.height() * PX_PER_GRID * scale).ceil() as u32;
        assert_eq!((img.width(), img.height()), (w, h), "scale {scale}");
        assert_eq!(png_out::pixel_size(&out.scene, scale), (w, h));
        // invariant: a drawing has ink: many pixels differ from the white page.
        let inked = img
            .pixels()
            .filter(|p| p.0[0] < 128 && p.0[1] < 128)
            .count();
        assert!(
            inked > (w * h / 200) as usize,
            "scale {scale}: only {inked} dark pixels"
        );
        assert_eq!(img.get_pixel(0, 0).0, [255, 255, 255, 255]);
    }
}

#[test]
fn transparent_background_leaves_the_corners_clear() {
    let doc = demo("common-emitter");
    let out = biasline::results::export::export(
        &doc,
        None,
        &opts(Format::Png, 1.0, Background::Transparent),
    )
    .unwrap();
    let img = decode(&out.bytes);
    // invariant: nothing is drawn in the margin, so alpha is 0 there.
    assert_eq!(img.get_pixel(0, 0).0[3], 0);
    assert!(img.pixels().any(|p| p.0[3] == 255));
    let paper =
        biasline::results::export::export(&doc, None, &opts(Format::Png, 1.0, Background::Paper))
            .unwrap();
    // from memory: the palette's paper is #fbf9f4.
    assert_eq!(
        decode(&paper.bytes).get_pixel(0, 0).0,
        [0xfb, 0xf9, 0xf4, 255]
    );
}

#[test]
fn png_carries_the_project_title_in_a_text_chunk() {
    let doc = demo("two-stage-preamp");
    let out =
        biasline::results::export::export(&doc, None, &opts(Format::Png, 1.0, Background::White))
            .unwrap();
    // source: PNG specification (ISO/IEC 15948) §11.3.4.3: tEXt = keyword, NUL, Latin-1 text.
    let mut found = None;
    let mut i = 8;
    let b = &out.bytes;
    assert_eq!(&b[..8], b"\x89PNG\r\n\x1a\n");
    while i + 8 <= b.len() {
        let len = u32::from_be_bytes([b[i], b[i + 1], b[i + 2], b[i + 3]]) as usize;
        let kind = &b[i + 4..i + 8];
        let data = &b[i + 8..i + 8 + len];
        if kind == b"tEXt" {
            let nul = data.iter().position(|c| *c == 0).unwrap();
            if &data[..nul] == b"Title" {
                found = Some(String::from_utf8_lossy(&data[nul + 1..]).to_string());
            }
        }
        i += 12 + len;
    }
    assert_eq!(found.as_deref(), Some(doc.title.as_str()));
}

#[test]
fn rendering_twice_gives_identical_bytes() {
    // invariant: no time, randomness or machine fonts in the output.
    let doc = demo("two-stage-preamp");
    for format in [Format::Svg, Format::Png] {
        let o = opts(format, 2.0, Background::White);
        let a = biasline::results::export::export(&doc, None, &o)
            .unwrap()
            .bytes;
        let b = biasline::results::export::export(&doc, None, &o)
            .unwrap()
            .bytes;
        assert!(a == b, "{format:?} differs between runs");
    }
}

#[test]
fn placement_measures_text_as_the_renderer_draws_it() {
    // invariant: the advance widths used for placement match the shaped text
    // (kerning off) to within a hundredth of a grid step per character.
    for (s, weight) in [
        ("4.58 V", Weight::Regular),
        ("IC 1.02 mA", Weight::Regular),
        ("Stage Q1", Weight::Bold),
    ] {
        let size = 10.0;
        let w = text::measure(s, size, weight).width;
        let fw = if weight == Weight::Bold {
            "bold"
        } else {
            "normal"
        };
        let svg_text = format!(
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"200\" height=\"40\"><text x=\"0\" y=\"20\" font-family=\"DejaVu Sans\" font-kerning=\"none\" font-weight=\"{fw}\" font-size=\"{size}\">{s}</text></svg>"
        );
        let tree =
            resvg::usvg::Tree::from_str(&svg_text, &biasline::render::usvg_options()).unwrap();
        let drawn = tree.root().abs_bounding_box().width() as f64;
        // The ink box is a little inside the advance box (side bearings).
        assert!(
            drawn <= w + 0.05 && drawn > w - 0.12 * size,
            "{s}: measured {w}, drawn {drawn}"
        );
    }
}

#[test]
fn svg_size_is_given_in_millimetres_for_print_at_100_percent() {
    let doc = demo("common-emitter");
    let nl = netlist::connect(&doc);
    let ann = biasline::results::annotations_for(&doc);
    let s = scene::build(&doc, &nl, &ann, &SceneOptions::default());
    let text = svg::render(&s, LayerSet::all(), &svg::SvgOptions::default()).unwrap();
    // source: project file format — one grid step is 2.54 mm on paper (document::GRID_PITCH_MM).
    let w_mm = s.bounds.width() * document::GRID_PITCH_MM;
    let expected = format!("width=\"{}", (w_mm * 1000.0).round() / 1000.0);
    assert!(text.contains(&expected), "{expected}");
}
