//! From the walk's findings to stage topologies: cuts, AC equivalent, notes.

use super::view::View;
use super::*;
use std::collections::BTreeMap;

pub(super) fn build_stages(
    v: &View,
    chain: &mut Chain,
    found: Vec<(usize, Configuration, NetId, NetId, bool)>,
    load: Option<usize>,
) {
    let doc = v.doc;
    let nl = v.nl;
    let mut claimed: BTreeSet<usize> = BTreeSet::new();
    if let Some(s) = &chain.source {
        claimed.extend(s.series_parts.iter().copied());
        claimed.insert(s.part);
    }
    if let Some(l) = load {
        claimed.insert(l);
    }
    let mut prev_output: Option<Lumped> = chain
        .source
        .as_ref()
        .and_then(|s| v.series(&s.series_parts));
    // What drives each stage input found so far: a stage whose input is the
    // chain's input, or an earlier stage's input (both bases of a pair on one
    // net), is driven by what drives that net, not by the previous stage.
    let mut driven: Vec<(NetId, Option<Lumped>)> = Vec::new();
    // Each found transistor's terminals, looked up once (the pair checks
    // below compare every two of them).
    let terminals: Vec<_> = found.iter().map(|f| v.terminals(f.0)).collect();
    // Which found transistors have their collector, base or emitter on a
    // net: a cascode or Darlington partner shares one with this stage, so
    // only those are looked at (in found order), not every other stage.
    let mut on_net: [BTreeMap<NetId, Vec<usize>>; 3] = Default::default();
    for (j, t) in terminals.iter().enumerate() {
        if let Some((c2, b2, e2)) = *t {
            for (map, net) in on_net.iter_mut().zip([c2, b2, e2]) {
                map.entry(net).or_default().push(j);
            }
        }
    }
    for (k, &(q, cfg, input, output, overridden)) in found.iter().enumerate() {
        let shared_input = k > 0
            && found[..k].iter().any(|f| f.2 == input && f.3 != input)
            && !found[..k].iter().any(|f| f.3 == input);
        let source = if shared_input {
            prev_output.take();
            driven
                .iter()
                .find(|d| d.0 == input)
                .and_then(|d| d.1.clone())
        } else {
            prev_output.take()
        };
        driven.push((input, source.clone()));
        let (c, b, e) = terminals[k].unwrap_or((output, input, input));
        // Own parts on the input net: the transistor and bias resistors to AC ground
        // not already claimed as the previous stage's output load.
        let in_own: BTreeSet<usize> = v
            .resistors_to_ground(input, &claimed)
            .into_iter()
            .chain([q])
            .collect();
        let input_cut: Vec<usize> = v
            .parts_on(input)
            .into_iter()
            .filter(|p| !in_own.contains(p))
            .collect();
        claimed.extend(in_own.iter().copied());
        let out_res = v.resistors_to_ground(output, &claimed);
        let out_own: BTreeSet<usize> = out_res.iter().copied().chain([q]).collect();
        let output_cut: Vec<usize> = v
            .parts_on(output)
            .into_iter()
            .filter(|p| !out_own.contains(p) && *p != q)
            .collect();
        claimed.extend(out_own.iter().copied());

        let bias: Vec<usize> = in_own.iter().copied().filter(|&p| p != q).collect();
        let emitter = match cfg {
            Configuration::CommonEmitter(_) => v.emitter_kind(e).1,
            Configuration::CommonBase => bias.clone(),
            Configuration::CommonCollector => Vec::new(),
        };
        let emitter = match cfg {
            Configuration::CommonEmitter(Emitter::PartlyBypassed) => v.series(&emitter),
            _ => v.parallel(&emitter),
        };
        let loaded_by = if let Some(next) = found.get(k + 1) {
            Some(doc.parts[next.0].label())
        } else {
            load.map(|l| doc.parts[l].label())
        };
        let output_lumped = v.parallel(&out_res);
        let mut notes = Vec::new();
        let mut pair_with = None;
        let mut feedback_from = None;
        // Differential pair: emitters joined on a net off AC ground.
        if !v.ac_grounded(e) {
            for other in v.parts_on(e) {
                if other != q
                    && doc.parts[other].kind.is_transistor()
                    && v.common_terminal(other) == Some(e)
                {
                    let joined = match Family::of(doc.parts[q].kind) {
                        Some(Family::FieldEffect) => "sources",
                        _ => "emitters",
                    };
                    pair_with = pair_with.or(Some(other));
                    notes.push(format!(
                        "differential pair with {} ({joined} joined on {})",
                        doc.parts[other].label(),
                        nl.nets[e].name
                    ));
                }
            }
        }
        // Partners: emitter on this collector, collector or base on this emitter.
        let mut partners: Vec<usize> = [(2, c), (0, e), (1, e)]
            .iter()
            .filter_map(|&(role, net)| on_net[role].get(&net))
            .flatten()
            .copied()
            .collect();
        partners.sort_unstable();
        partners.dedup();
        for (other, t) in partners
            .into_iter()
            .map(|j| (&found[j], terminals[j]))
            .filter(|f| f.0 .0 != q)
        {
            let Some((c2, b2, e2)) = t else {
                continue;
            };
            let name = doc.parts[other.0].label();
            let fam2 = Family::of(doc.parts[other.0].kind).unwrap_or_default();
            let [collector2, _, emitter2] = fam2.pins();
            if c == e2 && other.1 == Configuration::CommonBase {
                notes.push(format!(
                    "cascode: drives the {emitter2} of {name} ({})",
                    Configuration::CommonBase.words_for(fam2)
                ));
            }
            // The upper device: its emitter (source) is the other's collector (drain).
            if c2 == e && matches!(cfg, Configuration::CommonBase) {
                notes.push(format!("cascode: fed from the {collector2} of {name}"));
            }
            if e == b2 && c == c2 {
                notes.push(format!("Darlington pair with {name}"));
            }
        }
        // Feedback pair: the next stage's output returns to this stage's emitter.
        if let Some(next) = found.get(k + 1) {
            if let Some((c2, _, e2)) = v.terminals(next.0) {
                // Emitters joined: a differential pair, not a feedback pair.
                // A rail is not a path back: a resistor from it to this
                // emitter is a bias resistor (a push-pull half's collector
                // on the rail this emitter's resistor returns to).
                let back = e2 != e
                    && [c2, e2]
                        .into_iter()
                        .filter(|&n| !v.ac_grounded(n))
                        .any(|n| {
                            n == e && !v.ac_grounded(e)
                                || v.parts_on(n).into_iter().any(|p| {
                                    doc.parts[p].kind == PartKind::Resistor
                                        && v.other(p, n) == Some(e)
                                        && !v.ac_grounded(e)
                                })
                        });
                if back {
                    feedback_from = Some(next.0);
                    notes.push(format!(
                        "feedback pair with {}: its output returns to this {}",
                        doc.parts[next.0].label(),
                        Family::of(doc.parts[q].kind).unwrap_or_default().pins()[2]
                    ));
                }
            }
        }
        let names = |v: &[usize]| v.iter().map(|&p| doc.parts[p].label()).collect();
        chain.stages.push(StageTopology {
            transistor: doc.parts[q].label(),
            family: Family::of(doc.parts[q].kind).unwrap_or_default(),
            part: q,
            configuration: cfg,
            input,
            output,
            input_net: nl.nets[input].name.clone(),
            output_net: nl.nets[output].name.clone(),
            input_cut_parts: names(&input_cut),
            output_cut_parts: names(&output_cut),
            input_cut,
            output_cut,
            notes,
            overridden,
            pair_with,
            feedback_from,
            ac: AcEquivalent {
                source,
                base: if cfg == Configuration::CommonBase {
                    None
                } else {
                    v.parallel(&bias)
                },
                output: output_lumped.clone(),
                emitter,
                loaded_by,
            },
        });
        prev_output = output_lumped;
        let _ = b;
    }
}
