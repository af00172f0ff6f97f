use super::*;

fn chain_of(path: &str) -> Chain {
    let doc = crate::document::load_file(std::path::Path::new(path)).unwrap();
    let nl = crate::netlist::connect(&doc);
    recognise(&doc, &nl)
}

#[test]
fn demo_common_emitter_is_one_bypassed_stage() {
    // common practice (no source): divider bias, RE bypassed by CE → bypassed common emitter
    let c = chain_of("projects/common-emitter.json");
    assert_eq!(c.stages.len(), 1);
    let s = &c.stages[0];
    assert_eq!(s.transistor, "Q1");
    assert_eq!(
        s.configuration,
        Configuration::CommonEmitter(Emitter::Bypassed)
    );
    assert_eq!(s.input_cut_parts, vec!["C1".to_string()]);
    assert_eq!(s.output_cut_parts, vec!["C2".to_string()]);
    let base = s.ac.base.as_ref().unwrap();
    assert_eq!(base.parts.len(), 2);
    // invariant: R1 ‖ R2 = 56k·10k/66k
    assert!((base.resistance - 56e3 * 10e3 / 66e3).abs() < 1e-6);
    assert_eq!(c.source.as_ref().unwrap().series, vec!["RS".to_string()]);
    assert_eq!(s.ac.source.as_ref().unwrap().label, "RS");
    assert_eq!(s.ac.output.as_ref().unwrap().label, "RC");
    assert_eq!(s.ac.loaded_by.as_deref(), Some("RL"));
}

#[test]
fn demo_preamp_is_ce_into_follower() {
    // common practice (no source): a DC-coupled emitter follower after a CE stage
    let c = chain_of("projects/two-stage-preamp.json");
    assert_eq!(c.stages.len(), 2);
    assert_eq!(c.stages[0].transistor, "Q1");
    assert_eq!(c.stages[1].transistor, "Q2");
    assert_eq!(c.stages[1].configuration, Configuration::CommonCollector);
    // Q1's output cut is Q2's base; Q2's input cut is Q1's collector and RC.
    assert_eq!(c.stages[0].output_cut_parts, vec!["Q2".to_string()]);
    let mut cut = c.stages[1].input_cut_parts.clone();
    cut.sort();
    assert_eq!(cut, vec!["Q1".to_string(), "RC".to_string()]);
    assert_eq!(c.stages[1].ac.output.as_ref().unwrap().label, "RE2");
    assert_eq!(c.load.as_ref().unwrap().designator, "RL");
}
