//! The time domain against the stability figures (issue 20 item 5): an
//! unstable follower's transient grows at the frequency of its
//! right-half-plane pole.

use crate::cli_common::ran;

const FOLLOWER: &str = "tests/fixtures/follower-lead-inductance.json";

/// Upward crossings of the starting value after `from` seconds, from a
/// `time,value` CSV, linearly interpolated.
fn crossings(csv: &str, from: f64) -> (Vec<f64>, Vec<(f64, f64)>) {
    let rows: Vec<(f64, f64)> = csv
        .lines()
        .skip(1)
        .filter_map(|l| {
            let mut it = l.split(',').map(|x| x.parse::<f64>());
            Some((it.next()?.ok()?, it.next()?.ok()?))
        })
        .collect();
    let v0 = rows[0].1;
    let mut up = Vec::new();
    for w in rows.windows(2) {
        let ((t1, a), (t2, b)) = (w[0], w[1]);
        if t1 > from && a < v0 && b >= v0 {
            up.push(t1 + (t2 - t1) * (v0 - a) / (b - a));
        }
    }
    (up, rows)
}

#[test]
fn the_unstable_follower_is_a_warning_and_its_transient_grows() {
    // common practice (no source): an emitter follower with an inductive
    // base and a capacitive load oscillates.
    let r = ran(&["stability", FOLLOWER, "--json"]);
    assert_eq!(r.code, crate::cli_common::EXIT_FINDINGS, "{}", r.message);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    assert_eq!(v["warnings"].as_array().unwrap().len(), 1, "{}", r.out);
    let t = ran(&[
        "transient",
        FOLLOWER,
        "--for",
        "1us",
        "--csv",
        "--net",
        "Q1.emitter",
    ]);
    assert_eq!(t.code, 0, "{}", t.message);
    let (up, rows) = crossings(&t.out, 30e-9);
    assert!(up.len() >= 8, "{} crossings", up.len());
    // invariant: a right-half-plane pair grows: each period's peak above
    // the last.
    let v0 = rows[0].1;
    let peaks: Vec<f64> = up
        .windows(2)
        .take(6)
        .map(|w| {
            rows.iter()
                .filter(|(t, _)| *t >= w[0] && *t < w[1])
                .map(|(_, x)| (x - v0).abs())
                .fold(0.0, f64::max)
        })
        .collect();
    assert!(peaks.windows(2).all(|p| p[1] > p[0]), "{peaks:?}");
}

#[test]
fn the_unstable_follower_grows_at_its_pole_frequency() {
    // invariant: two independent methods — the pencil's eigenvalue and the
    // transient's growing oscillation — agree within 2 % (issue 20's
    // criterion). The period is read from the first five cycles, before the
    // swing grows large. (This check found faer 0.24.4's second member of a
    // complex pair off by a real factor: 9.71 MHz shown for 56.33 MHz.)
    let r = ran(&["stability", FOLLOWER, "--json"]);
    let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
    let f_pole = v["poles"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["unstable"] == true)
        .and_then(|p| p["oscillation_hz"].as_f64())
        .expect("an unstable pole");
    let t = ran(&[
        "transient",
        FOLLOWER,
        "--for",
        "1us",
        "--csv",
        "--net",
        "Q1.emitter",
    ]);
    let (up, _) = crossings(&t.out, 30e-9);
    let f_time = 5.0 / (up[5] - up[0]);
    assert!(
        (f_time / f_pole - 1.0).abs() < 0.02,
        "transient {f_time:.4e} Hz vs pole {f_pole:.4e} Hz"
    );
}

/// The line driver with a step of `step` volts at 1 µs, with or without its compensation
/// capacitor CC, written to a scratch file.
fn line_driver_step(with_cc: bool) -> std::path::PathBuf {
    let path = crate::cli_common::root().join("projects/line-driver.json");
    let mut doc = biasline::document::load_file(&path).unwrap();
    doc.signal.waveform = Some(
        serde_json::from_str(
            r#"{"shape": "pulse", "low": 0, "high": 0.01, "delay": "1 us", "rise": "1 ns",
                "fall": "1 ns", "width": "1 s", "period": "2 s"}"#,
        )
        .unwrap(),
    );
    if !with_cc {
        doc.parts.retain(|p| p.designator != "CC");
    }
    let dir = std::env::temp_dir().join(format!("biasline-step-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join(format!("line-driver-step-{with_cc}.json"));
    std::fs::write(&file, biasline::document::to_json(&doc)).unwrap();
    file
}

/// Overshoot of the output's step response, as a fraction of the step.
fn overshoot(file: &std::path::Path) -> f64 {
    let r = crate::cli_common::ran(&[
        "transient",
        file.to_str().unwrap(),
        "--for",
        "3us",
        "--csv",
        "--net",
        "vout",
    ]);
    assert_eq!(r.code, 0, "{}", r.message);
    let v: Vec<f64> = r
        .out
        .lines()
        .skip(1)
        .map(|l| l.rsplit(',').next().unwrap().parse().unwrap())
        .collect();
    let (start, end) = (v[0], *v.last().unwrap());
    let peak = v.iter().copied().fold(f64::MIN, f64::max);
    (peak - end) / (end - start)
}

#[test]
fn a_step_overshoots_as_the_phase_margin_predicts() {
    // source: a second-order loop (Ogata, Modern Control Engineering; Bode 1945):
    // PM = atan(2ζ/√(√(1 + 4ζ⁴) − 2ζ²)) and the step overshoots by exp(−πζ/√(1 − ζ²)).
    // Stated as an estimate: the line driver's loop is not exactly second order, so the
    // measured overshoot is held to 20 % of the estimate (measured: 44.7 % against 41 %).
    // A short run from the operating point used to stop at the rounding floor of the large
    // capacitors' charges ("a step did not converge even at the shortest step").
    let with = line_driver_step(true);
    let without = line_driver_step(false);
    let pm = |f: &std::path::Path| {
        let r = crate::cli_common::ran(&["stability", f.to_str().unwrap(), "--json"]);
        let v: serde_json::Value = serde_json::from_str(&r.out).unwrap();
        v["break_point"]["phase_margin_degrees"].as_f64().unwrap()
    };
    let pm_of = |zeta: f64| {
        let z2 = zeta * zeta;
        (2.0 * zeta / ((1.0 + 4.0 * z2 * z2).sqrt() - 2.0 * z2).sqrt())
            .atan()
            .to_degrees()
    };
    let zeta_for = |pm: f64| {
        let (mut lo, mut hi) = (1e-6, 0.999);
        for _ in 0..100 {
            let mid = 0.5 * (lo + hi);
            if pm_of(mid) < pm {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        lo
    };
    let poor = pm(&without);
    assert!(poor < 40.0, "{poor}°");
    let z = zeta_for(poor);
    let estimate = (-std::f64::consts::PI * z / (1.0 - z * z).sqrt()).exp();
    let measured = overshoot(&without);
    assert!(
        (measured / estimate - 1.0).abs() < 0.2,
        "PM {poor:.1}°: overshoot {measured:.3} against the estimate {estimate:.3}"
    );
    // With CC the margin is about 90°: no overshoot to speak of (the estimate is 0).
    assert!(pm(&with) > 80.0);
    assert!(overshoot(&with) < 0.01, "{}", overshoot(&with));
}
