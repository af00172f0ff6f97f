//! Report tables as CSV (RFC 4180: comma-separated, CRLF-free, fields with
//! commas, quotes or line breaks quoted). Numbers are SI in plain decimal
//! next to a `text` column in engineering notation, so a spreadsheet can
//! compute with them and a reader can read them.

use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::scene::Annotations;
use crate::units::{self, Unit};

fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn row(fields: &[String]) -> String {
    let mut r = fields
        .iter()
        .map(|f| field(f))
        .collect::<Vec<_>>()
        .join(",");
    r.push('\n');
    r
}

fn num(v: f64) -> String {
    if v.is_finite() {
        format!("{v:e}")
    } else {
        String::new()
    }
}

/// The bias table: every net's voltage, then every pin current.
/// Columns: `quantity,item,value,unit,text`.
pub fn bias_csv(doc: &Document, nl: &Netlist, ann: &Annotations) -> String {
    let mut out = row(&["quantity", "item", "value", "unit", "text"].map(String::from));
    for net in &nl.nets {
        if let Some(&v) = ann.net_voltages.get(&net.name) {
            out += &row(&[
                "voltage".into(),
                net.name.clone(),
                num(v),
                "V".into(),
                units::format(v, Unit::Volt),
            ]);
        }
    }
    for part in &doc.parts {
        let Some(pins) = ann.pin_currents.get(&part.designator) else {
            continue;
        };
        for pin in part.kind.pin_names() {
            if let Some(&i) = pins.get(*pin) {
                out += &row(&[
                    "current_into_pin".into(),
                    format!("{}.{pin}", part.designator),
                    num(i),
                    "A".into(),
                    units::format(i, Unit::Ampere),
                ]);
            }
        }
    }
    out
}

/// The stage table: one row per stage figure.
/// Columns: `stage,configuration,figure,exact,estimate,difference_percent,unit`.
pub fn stages_csv(ann: &Annotations) -> String {
    let mut out = row(&[
        "stage",
        "configuration",
        "figure",
        "exact",
        "estimate",
        "difference_percent",
        "unit",
    ]
    .map(String::from));
    for card in &ann.stages {
        for f in &card.figures {
            out += &row(&[
                card.transistor.clone(),
                card.configuration.clone(),
                f.name.clone(),
                num(f.exact),
                f.estimate.map(num).unwrap_or_default(),
                f.difference_percent()
                    .map(|d| format!("{d:.2}"))
                    .unwrap_or_default(),
                f.unit.symbol().to_string(),
            ]);
        }
    }
    out
}

fn main_unit(kind: PartKind) -> Unit {
    kind.main_unit()
}

/// The parts list, grounds left out.
/// Columns: `designator,kind,value,rating,tolerance,preset`.
pub fn parts_csv(doc: &Document) -> String {
    let mut out = row(&[
        "designator",
        "kind",
        "value",
        "rating",
        "tolerance",
        "preset",
    ]
    .map(String::from));
    let mut parts: Vec<_> = doc
        .parts
        .iter()
        .filter(|p| p.kind != PartKind::Ground)
        .collect();
    parts.sort_by_key(|p| natural(&p.designator));
    for p in parts {
        let value = p
            .kind
            .main_parameter()
            .and_then(|k| p.parameter(k))
            .map(|v| units::format(v, main_unit(p.kind)))
            .unwrap_or_default();
        let mut ratings = Vec::new();
        if let Some(w) = p.parameter("power_rating") {
            ratings.push(units::format(w, Unit::Watt));
        }
        if let Some(v) = p.parameter("voltage_rating") {
            ratings.push(units::format(v, Unit::Volt));
        }
        let tolerance = p
            .parameter("tolerance")
            .map(|t| format!("{} %", trim(t * 100.0)))
            .unwrap_or_default();
        out += &row(&[
            p.designator.clone(),
            p.kind.word().to_string(),
            value,
            ratings.join(" "),
            tolerance,
            p.preset.clone().unwrap_or_default(),
        ]);
    }
    out
}

fn trim(v: f64) -> String {
    let s = format!("{v:.2}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Sort key that puts R2 before R10.
fn natural(s: &str) -> (String, u64, String) {
    let split = s.find(|c: char| c.is_ascii_digit()).unwrap_or(s.len());
    let (head, rest) = s.split_at(split);
    let end = rest
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(rest.len());
    (
        head.to_string(),
        rest[..end].parse().unwrap_or(0),
        rest[end..].to_string(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fields_with_commas_and_quotes_are_quoted() {
        // source: RFC 4180 §2 (fields containing commas, quotes or line breaks are quoted, quotes doubled).
        assert_eq!(field("a,b"), "\"a,b\"");
        assert_eq!(field("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(field("plain"), "plain");
    }
}
