//! Stage cards from the small-signal analysis: the AC equivalent a designer
//! would redraw, the transistor's model values in each form, and the stage
//! figures exact beside the hand estimate.

use crate::analysis::figures::{Figure, StageFigures};
use crate::analysis::small_signal::{Analysis, FetSmallSignal, TransistorSmallSignal};
use crate::analysis::stages::Lumped;
use crate::scene::ModelKind;
use crate::scene::{
    EquivalentElement, EquivalentRole, ModelFigures, Quantity, StageCard, StageFigure,
};
use crate::units::Unit;

/// Resistances above this are drawn as open (no Early effect, say).
const OPEN_OHMS: f64 = 1e12;

fn element(l: &Option<Lumped>, role: EquivalentRole) -> Option<EquivalentElement> {
    let l = l.as_ref()?;
    (l.resistance.is_finite() && l.resistance < OPEN_OHMS).then(|| EquivalentElement {
        name: l.label.clone(),
        value: l.resistance,
        unit: Unit::Ohm,
        from_parts: l.parts.clone(),
        role,
    })
}

fn models(t: &TransistorSmallSignal) -> Vec<ModelFigures> {
    let m = &t.models;
    let finite_r = |r: f64| r.is_finite() && r < OPEN_OHMS;
    let mut out = Vec::new();
    if let Some(tm) = &m.t {
        let mut values = vec![
            Quantity::new("re", tm.re, Unit::Ohm),
            Quantity::new("α", tm.alpha, Unit::None),
        ];
        if finite_r(tm.ro) {
            values.push(Quantity::new("ro", tm.ro, Unit::Ohm));
        }
        out.push(ModelFigures {
            kind: ModelKind::T,
            values,
        });
    }
    if let Some(h) = &m.h {
        let ce = &h.common_emitter;
        out.push(ModelFigures {
            kind: ModelKind::H,
            values: vec![
                Quantity::new("hie", ce.h11, Unit::Ohm),
                Quantity::new("hfe", ce.h21, Unit::None),
                Quantity::new("hoe", ce.h22, Unit::Siemens),
                Quantity::model_zero("hre", ce.h12, 1.0, Unit::None),
            ],
        });
    }
    let hp = &m.hybrid_pi;
    let mut values = Vec::new();
    if hp.g_pi > 0.0 {
        values.push(Quantity::new("rπ", 1.0 / hp.g_pi, Unit::Ohm));
    }
    values.push(Quantity::new("gm", hp.gm, Unit::Siemens));
    if hp.go > 0.0 && finite_r(1.0 / hp.go) {
        values.push(Quantity::new("ro", 1.0 / hp.go, Unit::Ohm));
    }
    if hp.c_pi > 0.0 {
        values.push(Quantity::new("Cπ", hp.c_pi, Unit::Farad));
    }
    if hp.c_mu > 0.0 {
        values.push(Quantity::new("Cμ", hp.c_mu, Unit::Farad));
    }
    if hp.rb > 0.0 {
        values.push(Quantity::new("rb", hp.rb, Unit::Ohm));
    }
    out.push(ModelFigures {
        kind: ModelKind::HybridPi,
        values,
    });
    out
}

/// A FET's models: the T model (1/gm in the source lead, ro) and the FET
/// hybrid-π (gm, ro, Cgs, Cgd, Cds; the gate draws no current).
fn fet_models(f: &FetSmallSignal) -> Vec<ModelFigures> {
    let finite_r = |r: f64| r.is_finite() && r < OPEN_OHMS;
    let mut t = vec![Quantity::new("1/gm", f.inverse_gm(), Unit::Ohm)];
    let mut pi = vec![Quantity::new("gm", f.gm, Unit::Siemens)];
    if finite_r(f.ro()) {
        t.push(Quantity::new("ro", f.ro(), Unit::Ohm));
        pi.push(Quantity::new("ro", f.ro(), Unit::Ohm));
    }
    for (name, c) in [("Cgs", f.cgs), ("Cgd", f.cgd), ("Cds", f.cds)] {
        if c > 0.0 {
            pi.push(Quantity::new(name, c, Unit::Farad));
        }
    }
    let mut out = Vec::new();
    if f.gm > 0.0 {
        out.push(ModelFigures {
            kind: ModelKind::T,
            values: t,
        });
    }
    out.push(ModelFigures {
        kind: ModelKind::HybridPi,
        values: pi,
    });
    out
}

fn figure(name: &str, unit: Unit, f: &Figure) -> Option<StageFigure> {
    let exact = f.exact.filter(|x| x.is_finite())?;
    Some(StageFigure {
        name: name.into(),
        unit,
        exact,
        estimate: f.re_model.or(f.h_model).filter(|x| x.is_finite()),
    })
}

fn card(
    st: &StageFigures,
    t: Option<&TransistorSmallSignal>,
    models: Vec<ModelFigures>,
    own_load: Option<f64>,
) -> StageCard {
    let ac = &st.ac;
    let mut elements: Vec<EquivalentElement> = [
        element(&ac.source, EquivalentRole::InputSeries),
        element(&ac.base, EquivalentRole::InputShunt),
        element(&ac.emitter, EquivalentRole::Emitter),
        element(&ac.output, EquivalentRole::OutputShunt),
    ]
    .into_iter()
    .flatten()
    .collect();
    if let (Some(by), Some(r)) = (&ac.loaded_by, st.load_resistance) {
        if r.is_finite() && r < OPEN_OHMS {
            let next_stage = !models.is_empty() && by.starts_with('Q');
            // The load part names the element only when it is all there is:
            // a load in parallel with more (a feedback path, a bias network)
            // is R'L, never one part's name on a combination.
            let alone = own_load.is_none_or(|own| (own / r - 1.0).abs() < 1e-6);
            elements.push(EquivalentElement {
                name: if next_stage {
                    format!("Zin({by})")
                } else if alone {
                    by.clone()
                } else {
                    "R'L".into()
                },
                value: r,
                unit: Unit::Ohm,
                // A load part names itself; a next stage is not a part.
                from_parts: if next_stage {
                    Vec::new()
                } else if alone {
                    vec![by.clone()]
                } else {
                    vec![by.clone(), "what else the output drives".into()]
                },
                role: EquivalentRole::Load,
            });
        }
    }
    let figures = [
        figure("Zin", Unit::Ohm, &st.input_impedance),
        figure("Zout", Unit::Ohm, &st.output_impedance),
        figure("Av", Unit::None, &st.voltage_gain),
        figure("Ai", Unit::None, &st.current_gain),
    ]
    .into_iter()
    .flatten()
    .collect();
    let mut warnings = st.caveats.clone();
    if !st.meaningful && warnings.is_empty() {
        warnings.push(if t.is_some() {
            "the transistor is not forward-active: these figures mean nothing".into()
        } else {
            "the transistor is not in saturation: these figures mean nothing".into()
        });
    }
    StageCard {
        transistor: st.transistor.clone(),
        configuration: st.configuration_words.clone(),
        elements,
        models,
        figures,
        warnings,
    }
}

/// One card per recognised stage, in signal order.
pub fn stage_cards(a: &Analysis) -> Vec<StageCard> {
    a.midband
        .stages
        .iter()
        .map(|st| {
            let t = a
                .small_signal
                .transistors
                .iter()
                .find(|t| t.designator == st.transistor);
            let f = a
                .small_signal
                .fets
                .iter()
                .find(|f| f.designator == st.transistor);
            let models = match (t, f) {
                (Some(t), _) => models(t),
                (None, Some(f)) => fet_models(f),
                _ => Vec::new(),
            };
            let own_load = st
                .ac
                .loaded_by
                .as_deref()
                .and_then(|by| crate::analysis::figures::own_resistance(&a.small_signal, by));
            card(st, t, models, own_load)
        })
        .collect()
}

/// One card per block: its figures exact beside the estimate, and why an
/// estimate is absent.
pub fn block_cards(a: &Analysis) -> Vec<crate::scene::BlockCard> {
    let stages = stage_cards(a);
    a.blocks
        .iter()
        .map(|b| crate::scene::BlockCard {
            drawing: half_circuit(b, &stages),
            transistors: b.transistors.clone(),
            words: b.words.clone(),
            figures: b
                .figures
                .iter()
                .map(|f| crate::scene::BlockCardFigure {
                    label: f.label.clone(),
                    unit: f.unit,
                    exact: f.exact,
                    estimate: f.estimate,
                    difference_percent: f.difference_percent,
                })
                .collect(),
            no_estimate: b
                .figures
                .iter()
                .filter(|f| f.estimate.is_none())
                .filter_map(|f| {
                    f.no_estimate_because
                        .as_ref()
                        .map(|why| format!("{}: no estimate, {why}", f.label))
                })
                .collect(),
            warnings: b.warnings.clone(),
        })
        .collect()
}

/// A differential pair's half-circuit: the first side's stage drawing with
/// the tail at AC ground (its element left out), as the half-circuit
/// method redraws it (Sedra and Smith, the differential pair).
fn half_circuit(
    b: &crate::analysis::blocks::Block,
    stages: &[StageCard],
) -> Option<(StageCard, String)> {
    if b.kind != crate::analysis::blocks::BlockKind::DifferentialPair {
        return None;
    }
    let side = b.transistors.first()?;
    let mut card = stages.iter().find(|c| &c.transistor == side)?.clone();
    let tail = b.members.last()?;
    card.elements
        .retain(|e| !(e.role == EquivalentRole::Emitter && e.from_parts.contains(tail)));
    card.figures.clear();
    card.warnings.clear();
    Some((
        card,
        format!("half-circuit of {side}'s side, the tail {tail} at AC ground"),
    ))
}
