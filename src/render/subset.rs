//! A TrueType subset for embedding: only the glyphs a drawing uses, so an
//! SVG carries a few kilobytes of font instead of the whole face (about
//! 1 MB of base64 per weight before).
//!
//! The subset keeps the tables a viewer needs to draw text with the font's
//! own outlines, metrics and hinting (`head`, `hhea`, `maxp`, `OS/2`,
//! `name`, `cvt `, `fpgm`, `prep`, `gasp`), renumbers the glyphs (`.notdef`
//! first, then the used ones in order, then the parts of composite glyphs),
//! writes `glyf`, `loca` and `hmtx` for them, a `cmap` of format 4 for the
//! used characters, and a `post` table of version 3 (no glyph names).
//! Kerning and substitution tables are left out: the drawing switches
//! kerning off and the placement measured unshaped advances.
//! Table layout: the OpenType specification (ISO/IEC 14496-22), chapters
//! "cmap", "glyf", "head", "hhea", "hmtx", "loca", "maxp", "post".

use std::collections::BTreeMap;

fn u16_at(d: &[u8], o: usize) -> Option<u16> {
    Some(u16::from_be_bytes([*d.get(o)?, *d.get(o + 1)?]))
}

fn u32_at(d: &[u8], o: usize) -> Option<u32> {
    Some(u32::from_be_bytes([
        *d.get(o)?,
        *d.get(o + 1)?,
        *d.get(o + 2)?,
        *d.get(o + 3)?,
    ]))
}

fn tables(font: &[u8]) -> Option<BTreeMap<[u8; 4], &[u8]>> {
    let n = u16_at(font, 4)? as usize;
    let mut out = BTreeMap::new();
    for i in 0..n {
        let r = 12 + 16 * i;
        let tag: [u8; 4] = font.get(r..r + 4)?.try_into().ok()?;
        let off = u32_at(font, r + 8)? as usize;
        let len = u32_at(font, r + 12)? as usize;
        out.insert(tag, font.get(off..off.checked_add(len)?)?);
    }
    Some(out)
}

/// The data of glyph `g` in `glyf` (empty for a glyph without outline).
fn glyph<'a>(glyf: &'a [u8], loca: &[u8], long: bool, g: u16) -> Option<&'a [u8]> {
    let g = g as usize;
    let (a, b) = if long {
        (
            u32_at(loca, 4 * g)? as usize,
            u32_at(loca, 4 * g + 4)? as usize,
        )
    } else {
        (
            2 * u16_at(loca, 2 * g)? as usize,
            2 * u16_at(loca, 2 * g + 2)? as usize,
        )
    };
    glyf.get(a..b.max(a))
}

const ARGS_ARE_WORDS: u16 = 0x0001;
const HAVE_SCALE: u16 = 0x0008;
const MORE_COMPONENTS: u16 = 0x0020;
const HAVE_XY_SCALE: u16 = 0x0040;
const HAVE_TWO_BY_TWO: u16 = 0x0080;

/// Offsets of the component glyph indices in a composite glyph.
fn components(data: &[u8]) -> Vec<usize> {
    let mut out = Vec::new();
    if data.len() < 10 || (data[0] as i8) >= 0 {
        return out; // simple glyph (numberOfContours ≥ 0) or empty
    }
    let mut o = 10;
    while let Some(flags) = u16_at(data, o) {
        if o + 4 > data.len() {
            break;
        }
        out.push(o + 2);
        o += 4 + if flags & ARGS_ARE_WORDS != 0 { 4 } else { 2 };
        o += if flags & HAVE_SCALE != 0 {
            2
        } else if flags & HAVE_XY_SCALE != 0 {
            4
        } else if flags & HAVE_TWO_BY_TWO != 0 {
            8
        } else {
            0
        };
        if flags & MORE_COMPONENTS == 0 {
            break;
        }
    }
    out
}

fn checksum(d: &[u8]) -> u32 {
    d.chunks(4).fold(0u32, |s, c| {
        let mut w = [0u8; 4];
        w[..c.len()].copy_from_slice(c);
        s.wrapping_add(u32::from_be_bytes(w))
    })
}

/// A format-4 `cmap` mapping each character to its new glyph (BMP only).
fn cmap(map: &BTreeMap<u16, u16>) -> Vec<u8> {
    let mut segs: Vec<(u16, u16)> = map.iter().map(|(&c, &g)| (c, g)).collect();
    segs.push((0xFFFF, 0));
    let n = segs.len() as u16;
    let mut sub = Vec::new();
    let push = |v: &mut Vec<u8>, x: u16| v.extend_from_slice(&x.to_be_bytes());
    let len = 16 + 8 * n as usize;
    let entry = 15 - (n.max(1)).leading_zeros() as u16; // floor(log2 n)
    let range = 2 * (1u16 << entry);
    for x in [4, len as u16, 0, 2 * n, range, entry, 2 * n - range] {
        push(&mut sub, x);
    }
    segs.iter().for_each(|&(c, _)| push(&mut sub, c)); // end codes
    push(&mut sub, 0); // reserved pad
    segs.iter().for_each(|&(c, _)| push(&mut sub, c)); // start codes
    for &(c, g) in &segs {
        // idDelta: (c + delta) mod 65536 = g; the last segment maps 0xFFFF to 0.
        let delta = if c == 0xFFFF { 1 } else { g.wrapping_sub(c) };
        push(&mut sub, delta);
    }
    segs.iter().for_each(|_| push(&mut sub, 0)); // idRangeOffset
    let mut out = Vec::new();
    // version 0, two encoding records (Unicode BMP, Windows Unicode BMP) → one subtable.
    for x in [0u16, 2, 0, 3] {
        push(&mut out, x);
    }
    out.extend_from_slice(&20u32.to_be_bytes());
    for x in [3u16, 1] {
        push(&mut out, x);
    }
    out.extend_from_slice(&20u32.to_be_bytes());
    out.extend_from_slice(&sub);
    out
}

/// The subset of `font` (a TrueType file) holding the glyphs of `chars`
/// (characters the font lacks are left out). `None` when the font cannot be
/// read; then the caller embeds the whole font.
pub fn subset(font: &[u8], chars: impl IntoIterator<Item = char>) -> Option<Vec<u8>> {
    let face = ttf_parser::Face::parse(font, 0).ok()?;
    let t = tables(font)?;
    let head = *t.get(b"head")?;
    let long = u16_at(head, 50)? == 1;
    let (glyf, loca) = (*t.get(b"glyf")?, *t.get(b"loca")?);
    let hhea = *t.get(b"hhea")?;
    let hmtx = *t.get(b"hmtx")?;
    let metrics = u16_at(hhea, 34)? as usize;
    let old_count = face.number_of_glyphs();
    // New glyph order: .notdef, the used glyphs, then composite parts.
    let mut order: Vec<u16> = vec![0];
    let mut new_of: BTreeMap<u16, u16> = BTreeMap::from([(0, 0)]);
    let mut map: BTreeMap<u16, u16> = BTreeMap::new();
    let mut wanted: Vec<char> = chars.into_iter().collect();
    wanted.sort_unstable();
    wanted.dedup();
    for c in wanted {
        let (Ok(code), Some(g)) = (u16::try_from(c as u32), face.glyph_index(c)) else {
            continue;
        };
        let next = order.len() as u16;
        let id = *new_of.entry(g.0).or_insert_with(|| {
            order.push(g.0);
            next
        });
        map.insert(code, id);
    }
    let mut k = 0;
    while k < order.len() {
        let data = glyph(glyf, loca, long, order[k])?;
        for at in components(data) {
            let part = u16_at(data, at)?;
            if part >= old_count {
                return None;
            }
            let next = order.len() as u16;
            new_of.entry(part).or_insert_with(|| {
                order.push(part);
                next
            });
        }
        k += 1;
    }
    // glyf and loca (long offsets), hmtx with a full metric per glyph.
    let (mut new_glyf, mut new_loca, mut new_hmtx) = (Vec::new(), Vec::new(), Vec::new());
    for &g in &order {
        new_loca.extend_from_slice(&(new_glyf.len() as u32).to_be_bytes());
        let mut data = glyph(glyf, loca, long, g)?.to_vec();
        for at in components(&data) {
            let part = u16_at(&data, at)?;
            data[at..at + 2].copy_from_slice(&new_of[&part].to_be_bytes());
        }
        new_glyf.extend_from_slice(&data);
        while new_glyf.len() % 4 != 0 {
            new_glyf.push(0);
        }
        let gi = g as usize;
        let m = gi.min(metrics - 1);
        let advance = u16_at(hmtx, 4 * m)?;
        let lsb = if gi < metrics {
            u16_at(hmtx, 4 * gi + 2)?
        } else {
            u16_at(hmtx, 4 * metrics + 2 * (gi - metrics))?
        };
        new_hmtx.extend_from_slice(&advance.to_be_bytes());
        new_hmtx.extend_from_slice(&lsb.to_be_bytes());
    }
    new_loca.extend_from_slice(&(new_glyf.len() as u32).to_be_bytes());
    let count = order.len() as u16;
    let mut new_head = head.to_vec();
    new_head.get_mut(8..12)?.copy_from_slice(&[0; 4]);
    new_head
        .get_mut(50..52)?
        .copy_from_slice(&1u16.to_be_bytes());
    let mut new_hhea = hhea.to_vec();
    new_hhea
        .get_mut(34..36)?
        .copy_from_slice(&count.to_be_bytes());
    let mut new_maxp = t.get(b"maxp")?.to_vec();
    new_maxp
        .get_mut(4..6)?
        .copy_from_slice(&count.to_be_bytes());
    let mut new_post = t.get(b"post")?.get(..32)?.to_vec();
    new_post[..4].copy_from_slice(&0x0003_0000u32.to_be_bytes());
    let mut out_tables: Vec<([u8; 4], Vec<u8>)> = vec![
        (*b"cmap", cmap(&map)),
        (*b"glyf", new_glyf),
        (*b"head", new_head),
        (*b"hhea", new_hhea),
        (*b"hmtx", new_hmtx),
        (*b"loca", new_loca),
        (*b"maxp", new_maxp),
        (*b"post", new_post),
    ];
    for tag in [b"OS/2", b"name", b"cvt ", b"fpgm", b"prep", b"gasp"] {
        if let Some(d) = t.get(tag) {
            out_tables.push((*tag, d.to_vec()));
        }
    }
    out_tables.sort_by_key(|t| t.0);
    // The font file: offset table, table records, the tables 4-byte aligned.
    let n = out_tables.len() as u16;
    let entry = 15 - n.leading_zeros() as u16;
    let range = 16 * (1u16 << entry);
    let mut out = Vec::new();
    out.extend_from_slice(&0x0001_0000u32.to_be_bytes());
    for x in [n, range, entry, 16 * n - range] {
        out.extend_from_slice(&x.to_be_bytes());
    }
    let mut offset = 12 + 16 * n as usize;
    let mut body = Vec::new();
    let mut head_at = 0;
    for (tag, data) in &out_tables {
        if tag == b"head" {
            head_at = offset;
        }
        out.extend_from_slice(tag);
        out.extend_from_slice(&checksum(data).to_be_bytes());
        out.extend_from_slice(&(offset as u32).to_be_bytes());
        out.extend_from_slice(&(data.len() as u32).to_be_bytes());
        body.extend_from_slice(data);
        while body.len() % 4 != 0 {
            body.push(0);
        }
        offset = 12 + 16 * n as usize + body.len();
    }
    out.extend_from_slice(&body);
    let adjust = 0xB1B0_AFBAu32.wrapping_sub(checksum(&out));
    out.get_mut(head_at + 8..head_at + 12)?
        .copy_from_slice(&adjust.to_be_bytes());
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::{text::font_data, Weight};

    #[test]
    fn the_subset_draws_the_used_characters_as_the_whole_font_does() {
        // invariant: for every character kept, the subset has the same
        // advance and the same outline box as the full font; others are gone.
        let text = "Q1 4.7 kΩ → 1.23 mA, Zin ≈ 2.2 kΩ; µ±°Åé —";
        for w in [Weight::Regular, Weight::Bold] {
            let full = font_data(w);
            let small = subset(full, text.chars()).expect("subset");
            assert!(small.len() * 20 < full.len(), "{} bytes", small.len());
            let a = ttf_parser::Face::parse(full, 0).unwrap();
            let b = ttf_parser::Face::parse(&small, 0).expect("the subset parses");
            for c in text.chars() {
                let (ga, gb) = (a.glyph_index(c).unwrap(), b.glyph_index(c).unwrap());
                assert_eq!(a.glyph_hor_advance(ga), b.glyph_hor_advance(gb), "{c}");
                assert_eq!(a.glyph_bounding_box(ga), b.glyph_bounding_box(gb), "{c}");
            }
            assert!(b.glyph_index('Z').is_some());
            assert_eq!(b.glyph_index('x'), None);
            // invariant: the whole-font checksum comes out at the constant.
            assert_eq!(checksum(&small), 0xB1B0_AFBA);
        }
    }
}
