use super::*;

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

#[test]
fn rc_has_its_one_pole_at_minus_one_over_rc() {
    // source: closed form of a first-order RC network (Sedra and Smith, single-time-constant networks): s = −1/RC
    let (r, c) = (4.7e3, 22e-9);
    let mut lc = LinearCircuit::new(2);
    lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    lc.add(Some(1), 1, 2, LinearKind::Conductance(1.0 / r));
    lc.add(Some(2), 2, 0, LinearKind::Capacitor(c));
    let p = poles(&lc).unwrap();
    assert_eq!(p.poles.len(), 1);
    let s = p.poles[0].s;
    assert!(close(s.re, -1.0 / (r * c), 1e-9), "{s}");
    assert!(s.im.abs() < 1e-9 * s.norm());
    assert!(!p.poles[0].unstable);
    assert_eq!(p.poles[0].parts[0].0, 2);
}

#[test]
fn series_rlc_has_the_closed_form_pair() {
    // source: closed form of the series RLC (Nilsson and Riedel, "Electric Circuits", natural
    // response of a series RLC): s = −R/2L ± j√(1/LC − (R/2L)²)
    let (r, l, c) = (47.0, 1e-3, 100e-9);
    let mut lc = LinearCircuit::new(3);
    lc.add(Some(0), 1, 0, LinearKind::VoltageSource);
    lc.add(Some(1), 1, 2, LinearKind::Conductance(1.0 / r));
    lc.add(Some(2), 2, 3, LinearKind::Inductor(l));
    lc.add(Some(3), 3, 0, LinearKind::Capacitor(c));
    let p = poles(&lc).unwrap();
    assert_eq!(p.poles.len(), 1, "{p:?}");
    let s = p.poles[0].s;
    let alpha = r / (2.0 * l);
    let wd = (1.0 / (l * c) - alpha * alpha).sqrt();
    assert!(close(s.re, -alpha, 1e-9), "{s}");
    assert!(close(s.im, wd, 1e-9), "{s}");
    // invariant: ζ = α/ω0 and Q = 1/(2ζ) of the same pair
    let w0 = 1.0 / (l * c).sqrt();
    assert!(close(p.poles[0].damping, alpha / w0, 1e-9));
    assert!(close(p.poles[0].q.unwrap(), w0 / (2.0 * alpha), 1e-9));
    // invariant: the mode stores its energy in L and C only, equal shares on average
    let names: Vec<usize> = p.poles[0].parts.iter().map(|x| x.0).collect();
    assert!(names.contains(&2) && names.contains(&3));
}

#[test]
fn negative_resistance_tank_is_unstable_and_says_where() {
    // invariant: a parallel LC with a net negative conductance has σ = −G/2C > 0
    // (the characteristic equation C·s² + G·s + 1/L = 0)
    let (g, l, c) = (-1e-3, 1e-6, 1e-9);
    let mut lc = LinearCircuit::new(1);
    lc.add(Some(0), 1, 0, LinearKind::Capacitor(c));
    lc.add(Some(1), 1, 0, LinearKind::Inductor(l));
    lc.add(Some(2), 1, 0, LinearKind::Conductance(2e-3));
    // a transconductance from the node to itself: −3 mS
    lc.add(
        Some(3),
        0,
        1,
        LinearKind::Transconductance {
            gm: 3e-3,
            cp: 1,
            cn: 0,
        },
    );
    let p = poles(&lc).unwrap();
    let u: Vec<&Pole> = p.unstable().collect();
    assert_eq!(u.len(), 1, "{p:?}");
    assert!(close(u[0].s.re, -g / (2.0 * c), 1e-9));
    let wd = (1.0 / (l * c) - (g / (2.0 * c)).powi(2)).sqrt();
    assert!(close(u[0].s.im, wd, 1e-9));
    let msg = instability_message(u[0], &|p| format!("X{p}"));
    assert!(
        msg.contains("oscillate near") && msg.contains("X0") && msg.contains("X1"),
        "{msg}"
    );
}

#[test]
fn too_large_a_circuit_is_refused_with_the_limit() {
    // invariant: the dense solve is bounded; the message states the limit
    let n = DENSE_POLE_LIMIT + 5;
    let mut lc = LinearCircuit::new(n);
    for k in 1..=n {
        lc.add(Some(k), k, k - 1, LinearKind::Conductance(1e-3));
        lc.add(Some(k), k, 0, LinearKind::DeviceCapacitance(1e-12));
    }
    let e = poles(&lc).unwrap_err();
    assert!(e.to_string().contains(&DENSE_POLE_LIMIT.to_string()), "{e}");
}
