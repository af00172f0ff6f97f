//! Fill the scene's [`Annotations`] from analysis results: past here
//! everything is plain data (the scene reads no analysis type).

use crate::analysis::dc::OperatingPoint;
use crate::analysis::AnalysisError;
use crate::document::{Document, PartKind};
use crate::netlist::Netlist;
use crate::scene::{Annotations, ResultState, TitleInfo};
use std::collections::BTreeMap;

/// What every DC result assumes, in plain words.
pub fn dc_assumptions(doc: &Document) -> Vec<String> {
    let mut out = vec!["capacitors open, inductors shorted at DC".to_string()];
    if doc.parts.iter().any(|p| p.kind.is_transistor()) {
        out.push("currents positive in the direction of the arrow".to_string());
    }
    out
}

/// Net voltages, pin currents and the title block from a DC operating point.
pub fn annotations_from_dc(doc: &Document, nl: &Netlist, op: &OperatingPoint) -> Annotations {
    let mut ann = Annotations::default();
    for (id, net) in nl.nets.iter().enumerate() {
        if let Some(&v) = op.net_voltages.get(id) {
            if v.is_finite() {
                ann.net_voltages.insert(net.name.clone(), v);
            }
        }
    }
    for (index, part) in doc.parts.iter().enumerate() {
        if part.kind == PartKind::Ground || part.designator.is_empty() {
            continue;
        }
        let Some(p) = op.parts.get(index) else {
            continue;
        };
        let pins: BTreeMap<String, f64> = part
            .kind
            .pin_names()
            .iter()
            .zip(&p.pin_currents)
            .filter(|(_, i)| i.is_finite())
            .map(|(n, i)| (n.to_string(), *i))
            .collect();
        if !pins.is_empty() {
            ann.pin_currents.insert(part.designator.clone(), pins);
        }
    }
    let mut title = TitleInfo::for_document(doc);
    title.assumptions = dc_assumptions(doc);
    for aid in &op.aids {
        title.assumptions.push(format!("solver: {aid}"));
    }
    title.warnings = op
        .warnings
        .iter()
        .map(|f| format!("{}: {}", f.subject, f.message))
        .collect();
    title.state = if op.warnings.is_empty() {
        ResultState::Solved
    } else {
        ResultState::Warnings(op.warnings.len())
    };
    ann.title = title;
    ann
}

/// Annotations for a document whose analysis failed: the drawing and a
/// title block that says why.
pub fn annotations_from_failure(doc: &Document, err: &AnalysisError) -> Annotations {
    let mut title = TitleInfo::for_document(doc);
    let why = match err {
        AnalysisError::Rules(f) => {
            title.warnings = f.iter().map(|x| x.to_string()).collect();
            format!("the rules check found {} problem(s)", f.len())
        }
        other => other.to_string().trim_end().to_string(),
    };
    title.state = ResultState::NotSolvable(why);
    Annotations {
        title,
        ..Annotations::default()
    }
}

/// Solve and adapt in one step (what the export and the editor call).
pub fn annotations_for(doc: &Document) -> Annotations {
    from_session(&super::Session::new(doc))
}

/// The annotations of a session's results: voltages, currents, stage cards
/// and the title block with every warning of the one assessment (the rules
/// warnings count in the title block as they do in `check` and `analyze`).
pub fn from_session(s: &super::Session) -> Annotations {
    let rule_warnings: Vec<String> = s
        .rule_warnings()
        .iter()
        .map(|f| format!("{}: {}", f.subject, f.message))
        .collect();
    match s.operating_point() {
        Ok(op) => {
            let mut ann = annotations_from_dc(s.doc, &s.netlist, op);
            if !rule_warnings.is_empty() {
                let mut all = rule_warnings;
                all.append(&mut ann.title.warnings);
                ann.title.state = ResultState::Warnings(all.len());
                ann.title.warnings = all;
            }
            if let Some(Ok(a)) = s.small_signal() {
                add_stage_cards(&mut ann, a);
            }
            ann.loops = super::loop_tags::loop_tags(s.doc, &s.netlist, op);
            ann
        }
        Err(e) => annotations_from_failure(s.doc, e),
    }
}

/// Put the stage cards of a small-signal analysis on the annotations, and say
/// in the title block under which assumptions their figures hold.
pub fn add_stage_cards(ann: &mut Annotations, a: &crate::analysis::small_signal::Analysis) {
    ann.stages = super::stage_cards::stage_cards(a);
    ann.blocks = super::stage_cards::block_cards(a);
    // A stage a block takes in is shown on the block's card.
    let taken: Vec<&str> = a
        .blocks
        .iter()
        .flat_map(|b| b.stages.iter())
        .filter_map(|&k| a.midband.stages.get(k))
        .map(|s| s.transistor.as_str())
        .collect();
    ann.stages
        .retain(|c| !taken.contains(&c.transistor.as_str()));
    if !ann.stages.is_empty() || !ann.blocks.is_empty() {
        ann.title.assumptions.push(
            "stage figures at midband: coupling and bypass capacitors short, device capacitances open"
                .into(),
        );
    }
}
