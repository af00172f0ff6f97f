//! Live annotation: what every edit reruns. Connectivity and the rules check
//! run at once; the DC analysis produces [`Figures`], the numbers the sheet,
//! the readouts and the inspector show. Plain Rust, no GUI types.

use crate::document::Document;
use crate::netlist::{self, Finding, Netlist, Severity};

/// The DC figures of one part.
#[derive(Debug, Clone, PartialEq)]
pub struct PartFigures {
    /// A, positive into the pin, in `pin_names` order.
    pub pin_currents: Vec<f64>,
    /// W absorbed (negative: delivered).
    pub power: f64,
    /// The transistor's region in plain words, if it is one.
    pub region: Option<String>,
    /// A transistor's bias figures in plain words (margins, gm, hFE).
    pub details: Vec<String>,
}

/// The DC operating point as the editor shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct Figures {
    /// By net id.
    pub net_voltages: Vec<f64>,
    /// By part index.
    pub parts: Vec<PartFigures>,
    /// Designer warnings from the analysis.
    pub warnings: Vec<Finding>,
    /// Plain-words notes on how the solution was found.
    pub aids: Vec<String>,
    /// What the scene draws from this solution (the same adapter the
    /// command-line export uses, so screen and files agree).
    pub annotations: crate::scene::Annotations,
    /// The response from the signal source to the load, once the circuit has
    /// a signal path (for the response panel).
    pub response: Option<super::response::ResponseData>,
    /// The phase margin readout (at the file's break point, else the least
    /// of the transistors' return ratios), for the findings panel.
    pub loop_margin: Option<String>,
}

/// What is derived from the document at once, on every edit.
#[derive(Debug, Clone)]
pub struct Derived {
    pub netlist: Netlist,
    pub findings: Vec<Finding>,
}

impl Derived {
    pub fn of(doc: &Document) -> Self {
        let netlist = netlist::connect(doc);
        let findings = netlist::check(doc, &netlist);
        Derived { netlist, findings }
    }

    pub fn has_errors(&self) -> bool {
        self.findings.iter().any(|f| f.severity == Severity::Error)
    }
}

/// Run the DC analysis. Errors come back as one plain sentence.
/// With `distortion`, the stage cards also get the `distortion` layer's
/// figures (a steady-state run and a clip search, ≈ 0.15 s on the demo).
pub fn analyse(doc: &Document, nl: &Netlist, distortion: bool) -> Result<Figures, String> {
    // A part just placed and not yet wired keeps the rest of the circuit's
    // results: analyse the connected circuit without it, and say so.
    let loose = loose_parts(doc, nl);
    if !loose.is_empty() && loose.len() < doc.parts.len() {
        let mut trimmed = doc.clone();
        let mut k = 0;
        trimmed.parts.retain(|_| {
            k += 1;
            !loose.contains(&(k - 1))
        });
        let tnl = netlist::connect(&trimmed);
        if let Ok(f) = analyse_connected(&trimmed, &tnl, distortion) {
            return Ok(spread_back(doc, nl, &loose, &tnl, f));
        }
    }
    analyse_connected(doc, nl, distortion)
}

/// Parts none of whose pins meets another part or a label: being placed,
/// not wired yet. Ground symbols and rails count too (a lone one has
/// nothing to hold).
pub fn loose_parts(doc: &Document, nl: &Netlist) -> Vec<usize> {
    (0..doc.parts.len())
        .filter(|&i| {
            nl.part_nets.get(i).is_some_and(|nets| {
                nets.iter().all(|&n| {
                    let net = &nl.nets[n];
                    net.labels.is_empty() && net.pins.iter().all(|p| p.part == i)
                })
            })
        })
        .collect()
}

/// Figures of the trimmed document put back on the whole document's parts
/// and nets (by part order and net name), with a note naming the loose parts.
fn spread_back(
    doc: &Document,
    nl: &Netlist,
    loose: &[usize],
    tnl: &Netlist,
    mut f: Figures,
) -> Figures {
    let mut kept = f.parts.into_iter();
    f.parts = (0..doc.parts.len())
        .map(|i| {
            if loose.contains(&i) {
                PartFigures {
                    pin_currents: Vec::new(),
                    power: f64::NAN,
                    region: None,
                    details: Vec::new(),
                }
            } else {
                kept.next().expect("one figure per kept part")
            }
        })
        .collect();
    let by_name: std::collections::HashMap<&str, f64> = tnl
        .nets
        .iter()
        .zip(&f.net_voltages)
        .map(|(n, v)| (n.name.as_str(), *v))
        .collect();
    f.net_voltages = nl
        .nets
        .iter()
        .map(|n| by_name.get(n.name.as_str()).copied().unwrap_or(f64::NAN))
        .collect();
    let names: Vec<String> = loose.iter().map(|&i| doc.parts[i].label()).collect();
    f.aids.insert(
        0,
        format!(
            "{} not wired yet: the results are those of the connected circuit without {}",
            names.join(", "),
            if names.len() == 1 { "it" } else { "them" }
        ),
    );
    f
}

/// The analysis of a document whose every part is meant to be connected.
fn analyse_connected(doc: &Document, nl: &Netlist, distortion: bool) -> Result<Figures, String> {
    use crate::document::PartKind;
    if doc
        .parts
        .iter()
        .all(|p| matches!(p.kind, PartKind::Ground | PartKind::Rail))
    {
        return Err("nothing to analyse yet: place parts and wire them".into());
    }
    // A fault inside the solver must never take the editor (and unsaved
    // work) down with it.
    let solved = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        crate::analysis::dc::solve(doc, nl)
    }))
    .map_err(|_| {
        "the DC analysis stopped on an internal fault; the sheet is safe — save it and report the file"
            .to_string()
    })?;
    let op = solved.map_err(|e| match e {
        crate::analysis::AnalysisError::Rules(_) => {
            "fix the errors in the findings first".to_string()
        }
        other => other.to_string().trim().to_string(),
    })?;
    let mut parts: Vec<PartFigures> = op
        .parts
        .iter()
        .map(|p| PartFigures {
            pin_currents: p.pin_currents.clone(),
            power: p.power,
            region: None,
            details: Vec::new(),
        })
        .collect();
    // Every device alike, through its report: a new kind's hover needs no
    // change here.
    for dev in &op.devices {
        let r = dev.report();
        if let Some(p) = parts.get_mut(r.part()) {
            p.region = Some(r.state_words().to_string());
            p.details = r.readout();
        }
    }
    let mut annotations = crate::results::annotations_from_dc(doc, nl, &op);
    // Stage cards and the response: the same small-signal adapter as the
    // export; a fault there costs the cards, never the sheet.
    let response = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let a = crate::results::small_signal::analysis(doc, nl, &op).ok()?;
        crate::results::annotations::add_stage_cards(&mut annotations, &a);
        let r = crate::results::small_signal::response(doc, &a);
        r.gain.as_ref().map(|g| super::response::ResponseData {
            frequencies: r.frequencies.clone(),
            magnitude_db: g.magnitude_db.clone(),
            phase_degrees: unwrap_degrees(&g.phase_degrees),
            lower_corner: r.lower_corner,
            upper_corner: r.upper_corner,
            noise_density: output_noise(doc, nl, &r.frequencies),
            loop_gain: None,
        })
    }))
    .ok()
    .flatten();
    // Stability: a right-half-plane pole is a finding; the phase margin a
    // readout. A fault there costs these lines, never the sheet.
    let (unstable, loop_margin) = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        crate::results::stability::for_editor(doc, nl, &op)
    }))
    .unwrap_or_default();
    // The feedback loop marked on the sheet, as the export marks it.
    annotations.loops = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        crate::results::loop_tags::loop_tags(doc, nl, &op)
    }))
    .unwrap_or_default();
    let mut response = response;
    if let (Some(r), Some(curve)) = (
        response.as_mut(),
        annotations.loops.first().and_then(|l| l.curve.clone()),
    ) {
        r.loop_gain = Some(curve);
    }
    let mut warnings = op.warnings;
    for message in unstable {
        warnings.push(Finding {
            severity: Severity::Warning,
            subject: netlist::Subject::Sheet,
            position: None,
            message,
        });
    }
    if distortion {
        // A time-domain fault costs the distortion lines (the title block
        // says why), never the sheet.
        let _ = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            crate::results::layers::add_optional(doc, &mut annotations, false, false, true)
        }));
    }
    Ok(Figures {
        annotations,
        response,
        net_voltages: op.net_voltages,
        parts,
        warnings,
        aids: op.aids,
        loop_margin,
    })
}

/// The DC voltage above which the safety caution is shown (between any two nets).
pub const CAUTION_VOLTS: f64 = crate::analysis::dc::SAFETY_LIMIT_VOLTS;

/// The largest voltage between any two nets, when it passes the caution threshold.
pub fn caution(figures: &Figures) -> Option<f64> {
    let hi = figures
        .net_voltages
        .iter()
        .cloned()
        .fold(f64::NEG_INFINITY, f64::max);
    let lo = figures
        .net_voltages
        .iter()
        .cloned()
        .fold(f64::INFINITY, f64::min);
    let span = hi - lo;
    (span.is_finite() && span > CAUTION_VOLTS).then_some(span)
}

/// What the scene is told about the results (plain data, by net and pin name).
pub fn scene_annotations(
    doc: &Document,
    nl: &Netlist,
    figures: Option<&Result<Figures, String>>,
) -> crate::scene::Annotations {
    use crate::scene::{Annotations, ResultState, TitleInfo};
    let _ = nl;
    match figures {
        Some(Ok(f)) => f.annotations.clone(),
        other => {
            let mut ann = Annotations {
                title: TitleInfo::for_document(doc),
                ..Annotations::default()
            };
            ann.title.assumptions = crate::results::annotations::dc_assumptions(doc);
            if let Some(Err(e)) = other {
                if !doc.parts.is_empty() {
                    ann.title.state = ResultState::NotSolvable(e.clone());
                }
            }
            ann
        }
    }
}

/// The output noise density on the sweep's frequency grid, V/√Hz (None when
/// the noise analysis has no result, e.g. no load is marked).
fn output_noise(doc: &Document, nl: &Netlist, frequencies: &[f64]) -> Option<Vec<f64>> {
    crate::analysis::noise::output_density(doc, nl, frequencies).ok()
}

pub use crate::analysis::ac::unwrap_degrees;

#[cfg(test)]
mod unwrap_tests {
    use super::unwrap_degrees;

    #[test]
    fn a_wrap_through_180_degrees_is_removed() {
        // invariant: unwrapping keeps every angle equal modulo 360° and makes neighbours
        // differ by less than 180°.
        let raw = [-170.0, -178.0, 176.0, 170.0];
        let u = unwrap_degrees(&raw);
        assert_eq!(u, vec![-170.0, -178.0, -184.0, -190.0]);
        for (a, b) in raw.iter().zip(&u) {
            assert!(((a - b) / 360.0f64).fract().abs() < 1e-12);
        }
    }
}

#[cfg(test)]
mod small_signal_tests {
    use super::*;

    #[test]
    fn the_two_stage_demo_gets_stage_cards_and_a_response() {
        // invariant: the editor's results carry the same stage cards as the export
        // (one per recognised stage) and a response whose corners bracket midband.
        let path =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/two-stage-preamp.json");
        let doc = crate::document::load_file(&path).unwrap();
        let nl = netlist::connect(&doc);
        let f = analyse(&doc, &nl, false).unwrap();
        let export = crate::results::annotations_for(&doc);
        assert_eq!(f.annotations.stages.len(), 2);
        assert_eq!(f.annotations.stages, export.stages);
        let r = f.response.expect("a response");
        // invariant: the noise density comes on the sweep's own frequency grid.
        assert_eq!(
            r.noise_density.as_ref().map(Vec::len),
            Some(r.frequencies.len())
        );
        let (lo, hi) = (r.lower_corner.unwrap(), r.upper_corner.unwrap());
        assert!(lo < 1e3 && hi > 1e3 && lo < hi);
        // invariant: the unwrapped phase never jumps by 180° or more between neighbours.
        assert!(r
            .phase_degrees
            .windows(2)
            .all(|w| (w[1] - w[0]).abs() < 180.0));
    }

    #[test]
    fn the_line_driver_gets_its_loop_on_the_sheet_and_its_loop_gain_in_the_drawer() {
        // invariant: the editor marks the same loop as the export, and the
        // drawer's loop gain is that loop's |T| on the response's own grid,
        // crossing 0 dB where the tag says.
        let path =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/line-driver.json");
        let doc = crate::document::load_file(&path).unwrap();
        let nl = netlist::connect(&doc);
        let f = analyse(&doc, &nl, false).unwrap();
        let export = crate::results::annotations_for(&doc);
        assert_eq!(f.annotations.loops, export.loops);
        assert_eq!(f.annotations.loops.len(), 1);
        let r = f.response.expect("a response");
        let l = r.loop_gain.expect("the loop gain in the drawer");
        assert_eq!(l.frequencies, r.frequencies);
        let fc = l.crossover_hz.unwrap();
        let k = l.frequencies.partition_point(|x| *x < fc);
        assert!(l.magnitude_db[k - 1] >= 0.0 && l.magnitude_db[k] <= 0.0);
    }
}
