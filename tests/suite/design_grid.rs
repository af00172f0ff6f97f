//! The stage designer over grids of target sets: every design it returns
//! meets every target by the engine's own analysis (re-run from the saved
//! file), the preferred-value design stays within the bound it states, and
//! what it cannot meet it refuses with a reason.

use biasline::design::measure::Probe;
use biasline::design::solve::Equation;
use biasline::design::{design, Targets, Topology};
use biasline::document;

struct Tally {
    designed: usize,
    refused: usize,
}

fn check_one(t: &Targets, tally: &mut Tally) {
    let d = match design(t) {
        Ok(d) => d,
        Err(e) => {
            // invariant: a refusal says which target and why, in words.
            assert!(e.0.len() > 40, "{t:?}: terse refusal {e}");
            tally.refused += 1;
            return;
        }
    };
    tally.designed += 1;
    // Re-analyse the continuous design from its saved file, from scratch.
    let text = document::to_json(&d.continuous.document);
    let doc = document::load_str(&text).expect("the designed project loads");
    let (m, _) = Probe::new(doc)
        .measure(true)
        .expect("the designed project solves");
    let rel = |a: f64, b: f64| (a / b - 1.0).abs();
    for e in &d.equations {
        // invariant: the continuous solution meets each equation to 1e-6 by the engine's own analysis.
        let miss = match e {
            Equation::Current(q, i) => rel(m.device(q).unwrap().ic, *i),
            Equation::Gain(a) => rel(m.gain, *a),
            Equation::InputImpedance(z) => rel(m.input_impedance, *z),
            Equation::EmitterVoltage(q, v) => rel(m.device(q).unwrap().ve, *v),
            Equation::Sensitivity(q, s) => rel(m.device(q).unwrap().sensitivity, *s),
            Equation::SwingCentred(q) => {
                let (a, b) = m.device(q).unwrap().swing.unwrap();
                rel(a, b)
            }
        };
        assert!(miss < 1e-6, "{t:?}: {} missed by {miss:e}", e.words());
    }
    // The user's targets are among the equations (IC unless Zin sets it).
    let has = |f: &dyn Fn(&Equation) -> bool| d.equations.iter().any(f);
    if t.topology != Topology::CommonCollector {
        assert!(has(&|e| matches!(e, Equation::Gain(_))));
    }
    if t.input_impedance.is_some() {
        assert!(has(&|e| matches!(e, Equation::InputImpedance(_))));
    }
    // invariant: the low corner is placed exactly (1e-6) and S within the limit.
    let fl = m.low_corner.expect("a low corner");
    assert!(rel(fl, t.low_corner) < 1e-6, "{t:?}: low corner {fl}");
    for q in &m.devices {
        assert!(
            q.sensitivity <= t.stability * (1.0 + 1e-6),
            "{t:?}: S {}",
            q.sensitivity
        );
        assert_eq!(q.region, biasline::analysis::dc::Region::ForwardActive);
        assert!(q.saturation_margin > 0.0 && q.cutoff_margin > 0.0);
    }
    // The preferred-value design: each target figure within the stated
    // first-order bound Σ|∂lnF/∂ln x|·ln(step), with 25 % allowed for
    // second-order terms (invariant: Taylor bound of a smooth function).
    let s = d
        .snapped
        .measured
        .as_ref()
        .expect("the snapped design solves");
    for b in &d.bounds {
        let e = d.equations.iter().find(|e| e.words() == b.figure).unwrap();
        let miss = match e {
            Equation::Current(q, i) => (s.device(q).unwrap().ic / i).ln().abs(),
            Equation::Gain(a) => (s.gain / a).ln().abs(),
            Equation::InputImpedance(z) => (s.input_impedance / z).ln().abs(),
            _ => continue,
        };
        assert!(
            miss <= 1.25 * b.log_bound + 1e-9,
            "{t:?}: snapped {} off by {miss} > bound {}",
            b.figure,
            b.log_bound
        );
    }
    // invariant: every designed value is a member of its series.
    for (k, v) in &d.snapped.values {
        let series = if k.starts_with('C') {
            t.capacitor_series
        } else {
            t.resistor_series
        };
        assert!(series.contains(*v), "{k} = {v} not in {}", series.name);
    }
}

fn finish(name: &str, tally: &Tally) {
    let total = tally.designed + tally.refused;
    eprintln!(
        "{name}: {total} target sets, {} designed, {} refused",
        tally.designed, tally.refused
    );
    assert!(total >= 50);
    // A grid mostly inside the reachable region: at least half designed.
    assert!(
        tally.designed * 2 >= total,
        "{name}: only {} designed",
        tally.designed
    );
}

#[test]
fn common_emitter_grid() {
    let mut tally = Tally {
        designed: 0,
        refused: 0,
    };
    for (i, supply) in [9.0, 12.0, 15.0].into_iter().enumerate() {
        for gain in [20.0, 26.0, 32.0, 38.0] {
            for zin in [5e3, 10e3, 20e3] {
                for load in [10e3, 47e3] {
                    let mut t = Targets::new(
                        Topology::CommonEmitter,
                        supply,
                        load,
                        [20.0, 50.0, 100.0][i],
                    );
                    t.gain_db = Some(gain);
                    t.input_impedance = Some(zin);
                    t.collector_current = Some(500e-6);
                    check_one(&t, &mut tally);
                }
            }
        }
    }
    finish("ce", &tally);
}

#[test]
fn follower_grid() {
    let mut tally = Tally {
        designed: 0,
        refused: 0,
    };
    for supply in [5.0, 9.0, 12.0, 15.0] {
        for zin in [10e3, 30e3, 60e3, 100e3] {
            for load in [1e3, 4.7e3, 10e3, 47e3] {
                let mut t = Targets::new(Topology::CommonCollector, supply, load, 20.0);
                t.input_impedance = Some(zin);
                t.collector_current = Some(1e-3);
                check_one(&t, &mut tally);
            }
        }
    }
    finish("cc", &tally);
}

#[test]
fn common_base_grid() {
    let mut tally = Tally {
        designed: 0,
        refused: 0,
    };
    for supply in [5.0, 9.0, 12.0] {
        for gain in [10.0, 16.0, 20.0, 26.0] {
            for zin in [50.0, 100.0, 200.0, 400.0] {
                for load in [4.7e3, 22e3] {
                    let mut t = Targets::new(Topology::CommonBase, supply, load, 50.0);
                    t.gain_db = Some(gain);
                    t.input_impedance = Some(zin);
                    check_one(&t, &mut tally);
                }
            }
        }
    }
    finish("cb", &tally);
}

#[test]
fn emitter_into_follower_grid() {
    let mut tally = Tally {
        designed: 0,
        refused: 0,
    };
    for supply in [12.0, 15.0] {
        for gain in [30.0, 36.0, 40.0, 46.0] {
            for zin in [10e3, 20e3, 40e3] {
                for load in [600.0, 1e3, 2.2e3] {
                    let mut t = Targets::new(Topology::EmitterIntoFollower, supply, load, 20.0);
                    t.gain_db = Some(gain);
                    t.input_impedance = Some(zin);
                    t.collector_current = Some(200e-6);
                    t.follower_current = Some(2e-3);
                    check_one(&t, &mut tally);
                }
            }
        }
    }
    finish("ce-cc", &tally);
}
