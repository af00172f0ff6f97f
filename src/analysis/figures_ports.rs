//! Measurements at a stage's or load's ports the figures share: the second
//! node of a floating load, the impedance between two nodes, and a load
//! part's own resistance.

use super::linear::{Cut, Mode, Node, System, Test};
use super::small_signal::SmallSignal;

/// The second node of a floating load (`None`: the load returns to AC ground).
pub fn load_other_node(ss: &SmallSignal, l: &super::stages::LoadSide) -> Option<Node> {
    l.other_net
        .map(|net| ss.net_node.get(net).copied().unwrap_or(0))
        .filter(|&m| m != 0)
}

/// Impedance between nodes `a` and `b` with `cut` applied, midband: a 1 A
/// test current into `a` and out of `b`, v(a) − v(b).
pub fn impedance_between(ss: &SmallSignal, a: Node, b: Node, cut: &[Cut]) -> Option<f64> {
    if a == 0 || b == 0 {
        return None;
    }
    let sys = System::new(&ss.circuit, Mode::Midband, cut, Some(Test::Between(a, b)));
    sys.solve(0.0, &[]).ok().map(|s| (s.v(a) - s.v(b)).re)
}

/// The resistance of the resistor part named `designator` in the
/// small-signal circuit: a part that is one conductance and nothing else
/// (None otherwise — a transistor, a capacitor, no such part).
pub fn own_resistance(ss: &SmallSignal, designator: &str) -> Option<f64> {
    let mut of_part = ss
        .circuit
        .elements
        .iter()
        .filter(|e| e.part.is_some_and(|p| ss.designator(p) == designator));
    match (of_part.next(), of_part.next()) {
        (Some(e), None) => match e.kind {
            super::linear::LinearKind::Conductance(g) if g > 0.0 => Some(1.0 / g),
            _ => None,
        },
        _ => None,
    }
}
