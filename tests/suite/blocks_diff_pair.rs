
#[test]
fn a_source_coupled_pair_gains_gm_rd_over_two() {
    let mut doc = document(&[
        p("VDD", Rail, &["vdd"], &[(k::VOLTAGE, 12.0)]),
        p("VSS", Rail, &["vss"], &[(k::VOLTAGE, -12.0)]),
        p("VS", SignalSource, &["in", "0"], &[(k::AMPLITUDE, 1e-3)]),
        with_preset(p("M1", Nmos, &["d1", "in", "tail"], &[]), "small-signal-n-mosfet"),
        with_preset(p("M2", Nmos, &["d2", "0", "tail"], &[]), "small-signal-n-mosfet"),
        p("RD1", Resistor, &["vdd", "d1"], &[(k::RESISTANCE, RC)]),
        p("RD2", Resistor, &["vdd", "d2"], &[(k::RESISTANCE, RC)]),
        p("RT", Resistor, &["tail", "vss"], &[(k::RESISTANCE, 22e3)]),
    ]);
    doc.signal.source = Some("VS".into());
    let a = analyse(&doc);
    let b: Vec<&Block> = a
        .blocks
        .iter()
        .filter(|b| b.kind == BlockKind::DifferentialPair)
        .collect();
    assert_eq!(b.len(), 1, "{:?}", a.blocks);
    let b = b[0];
    let f = a.small_signal.fets.iter().find(|f| f.designator == "M2").unwrap();
    let rd = RC * f.ro() / (RC + f.ro());
    // source: Sedra and Smith, the MOS differential pair: Ad = gm·RD/2 to one
    // drain; within 2 % (ro's path to the tail left out).
    let ad = exact(b, "differential_gain_single_ended");
    assert!((ad / (f.gm * rd / 2.0) - 1.0).abs() < 0.02, "Ad {ad} vs {}", f.gm * rd / 2.0);
    // invariant: a gate draws no current at midband: no estimate, and the
    // reason says so.
    let rid = b.figure("differential_input_resistance").unwrap();
    assert!(rid.estimate.is_none() && rid.no_estimate_because.is_some(), "{rid:?}");
}
