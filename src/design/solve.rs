//! The design solver: Newton on the part values (in log space) over the
//! engine's own DC and midband analysis, then the capacitors on the exact
//! response, then preferred values and re-analysis.

use super::guess::{self, VBE};
use super::layout;
use super::measure::{self, Measured, Probe};
use super::targets::{Targets, Topology};
use super::{DesignError, Values};
use crate::document::Document;
use nalgebra::{DMatrix, DVector};

/// One equation of the design: a figure of the engine set to a value.
#[derive(Debug, Clone, PartialEq)]
pub enum Equation {
    /// Collector current of a transistor, A.
    Current(&'static str, f64),
    /// |gain| from the amplifier input to the load.
    Gain(f64),
    /// Midband input impedance, Ω.
    InputImpedance(f64),
    /// The stage's output swing toward saturation equals the swing toward cut-off.
    SwingCentred(&'static str),
    /// Emitter voltage of a transistor, V.
    EmitterVoltage(&'static str, f64),
    /// βF sensitivity S of a transistor.
    Sensitivity(&'static str, f64),
}

impl Equation {
    /// ln(achieved/target); `None` when the figure does not exist here.
    fn residual(&self, m: &Measured) -> Option<f64> {
        let ln = |a: f64, b: f64| {
            let r = a / b;
            (r.is_finite() && r > 0.0).then(|| r.ln())
        };
        match self {
            Equation::Current(d, i) => ln(m.device(d)?.ic, *i),
            Equation::Gain(a) => ln(m.gain, *a),
            Equation::InputImpedance(z) => ln(m.input_impedance, *z),
            Equation::SwingCentred(d) => {
                let (sat, cut) = m.device(d)?.swing?;
                ln(sat, cut)
            }
            Equation::EmitterVoltage(d, v) => ln(m.device(d)?.ve, *v),
            Equation::Sensitivity(d, s) => ln(m.device(d)?.sensitivity, *s),
        }
    }

    /// How the equation is described in the report.
    pub fn words(&self) -> String {
        use crate::units::{format, Unit};
        match self {
            Equation::Current(d, i) => format!("IC({d}) = {}", format(*i, Unit::Ampere)),
            Equation::Gain(a) => format!("gain = {:.3} dB", 20.0 * a.log10()),
            Equation::InputImpedance(z) => format!("Zin = {}", format(*z, Unit::Ohm)),
            Equation::SwingCentred(d) => format!("swing of {d} centred"),
            Equation::EmitterVoltage(d, v) => format!("VE({d}) = {}", format(*v, Unit::Volt)),
            Equation::Sensitivity(d, s) => format!("S({d}) = {s}"),
        }
    }
}

/// One set of values and what the engine says about them.
#[derive(Debug, Clone)]
pub struct Stage {
    pub values: Values,
    pub measured: Result<Measured, String>,
    pub document: Document,
}

/// First-order bound on how far preferred values can move a target figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Bound {
    /// What the figure is (as in [`Equation::words`]).
    pub figure: String,
    /// Σ |∂ln F/∂ln xᵢ| · ln(step): the relative change (as a log) when every
    /// value moves by at most one step of the series.
    pub log_bound: f64,
}

/// A finished design: the textbook guess, the exact continuous solution and
/// the preferred-value one, each analysed by the engine.
#[derive(Debug, Clone)]
pub struct Design {
    pub targets: Targets,
    pub first_guess: Stage,
    pub continuous: Stage,
    pub snapped: Stage,
    /// The equations the continuous solution meets.
    pub equations: Vec<Equation>,
    /// Why the engine's values differ from the first guess.
    pub reasons: Vec<String>,
    /// Bounds of the snapping, one per target equation.
    pub bounds: Vec<Bound>,
    /// Newton iterations (all attempts) and engine evaluations.
    pub iterations: usize,
    pub evaluations: usize,
    /// The collector current was chosen by the designer, not given.
    pub current_chosen: bool,
}

struct Solver {
    probe: Probe,
    evaluations: usize,
    iterations: usize,
}

impl Solver {
    fn eval(&mut self, vars: &[&str], x: &[f64], eqs: &[Equation]) -> Option<(Vec<f64>, Measured)> {
        let vals: Values = vars
            .iter()
            .zip(x)
            .map(|(k, v)| (k.to_string(), v.exp()))
            .collect();
        layout::set_values(&mut self.probe.doc, &vals);
        self.evaluations += 1;
        let (m, _) = self.probe.measure(false).ok()?;
        let f: Option<Vec<f64>> = eqs.iter().map(|e| e.residual(&m)).collect();
        Some((f?, m))
    }

    /// Forward-difference Jacobian of the residuals in ln(values).
    fn jacobian(
        &mut self,
        vars: &[&str],
        x: &[f64],
        f: &[f64],
        eqs: &[Equation],
    ) -> Result<DMatrix<f64>, String> {
        let n = vars.len();
        let mut j = DMatrix::zeros(n, n);
        for c in 0..n {
            let h = 1e-6;
            let mut xc = x.to_vec();
            xc[c] += h;
            let (fc, _) = self
                .eval(vars, &xc, eqs)
                .ok_or("the engine cannot analyse a nearby design")?;
            for r in 0..n {
                j[(r, c)] = (fc[r] - f[r]) / h;
            }
        }
        Ok(j)
    }

    /// Newton in ln(values): a forward-difference Jacobian, then Broyden's
    /// rank-one updates (refreshed by differences whenever an updated one
    /// fails to lower the residual), steps limited to a factor e per value
    /// and halved until the largest residual falls. Returns the values and a
    /// fresh difference Jacobian at the solution.
    fn newton(
        &mut self,
        vars: &[&str],
        eqs: &[Equation],
        start: &Values,
    ) -> Result<(Values, DMatrix<f64>), String> {
        let mut x: Vec<f64> = vars.iter().map(|k| start[*k].ln()).collect();
        let (mut f, _) = self
            .eval(vars, &x, eqs)
            .ok_or("the engine cannot analyse the starting values")?;
        let norm = |f: &[f64]| f.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        let (lo, hi) = (1f64.ln(), 1e8f64.ln());
        let mut j = self.jacobian(vars, &x, &f, eqs)?;
        let mut fresh = true;
        for _ in 0..80 {
            self.iterations += 1;
            if norm(&f) < 1e-12 {
                if !fresh {
                    j = self.jacobian(vars, &x, &f, eqs)?;
                }
                let vals = vars
                    .iter()
                    .zip(&x)
                    .map(|(k, v)| (k.to_string(), v.exp()))
                    .collect();
                return Ok((vals, j));
            }
            let Some(dx) = j.clone().lu().solve(&(-DVector::from_vec(f.clone()))) else {
                if fresh {
                    return Err("the targets do not fix the part values (singular Jacobian)".into());
                }
                j = self.jacobian(vars, &x, &f, eqs)?;
                fresh = true;
                continue;
            };
            let big = dx.iter().fold(0.0f64, |a, v| a.max(v.abs()));
            let scale = if big > 1.0 { 1.0 / big } else { 1.0 };
            let mut t = 1.0;
            let mut accepted = None;
            let floor = if fresh { 1e-4 } else { 0.3 };
            while t > floor {
                let xn: Vec<f64> = x
                    .iter()
                    .zip(dx.iter())
                    .map(|(a, d)| a + t * scale * d)
                    .collect();
                if xn.iter().all(|v| (lo..=hi).contains(v)) {
                    if let Some((fn_, _)) = self.eval(vars, &xn, eqs) {
                        if norm(&fn_) < norm(&f) {
                            accepted = Some((xn, fn_));
                            break;
                        }
                    }
                }
                t *= 0.5;
            }
            match accepted {
                Some((xn, fn_)) => {
                    // Broyden: J += (Δf − J·Δx)·Δxᵀ / (Δxᵀ·Δx).
                    let s = DVector::from_iterator(x.len(), xn.iter().zip(&x).map(|(a, b)| a - b));
                    let y = DVector::from_iterator(f.len(), fn_.iter().zip(&f).map(|(a, b)| a - b));
                    let ss = s.dot(&s);
                    if ss > 0.0 {
                        let u = (y - &j * &s) / ss;
                        j += u * s.transpose();
                    }
                    x = xn;
                    f = fn_;
                    fresh = false;
                }
                None if !fresh => {
                    j = self.jacobian(vars, &x, &f, eqs)?;
                    fresh = true;
                }
                None => {
                    let worst = vars
                        .iter()
                        .zip(&x)
                        .map(|(k, v)| {
                            format!(
                                "{k} {}",
                                crate::units::format(v.exp(), crate::units::Unit::Ohm)
                            )
                        })
                        .collect::<Vec<_>>()
                        .join(", ");
                    return Err(format!(
                        "no part values meet {} (stopped near {worst}; largest miss {:.2} %)",
                        eqs.iter().map(|e| e.words()).collect::<Vec<_>>().join(", "),
                        (norm(&f).exp() - 1.0) * 100.0
                    ));
                }
            }
        }
        Err("Newton did not converge in 80 steps".into())
    }
}

/// Resistors the solver chooses, and the equations, per topology.
fn problem(t: &Targets, stiff: bool) -> (Vec<&'static str>, Vec<Equation>) {
    use Equation::*;
    let ic = t.ic();
    let a = t.gain().unwrap_or(1.0);
    let z = t.input_impedance.unwrap_or(0.0);
    let last = |d: &'static str| {
        if stiff {
            Sensitivity(d, t.stability)
        } else {
            EmitterVoltage(d, t.supply / 10.0)
        }
    };
    match t.topology {
        Topology::CommonEmitter => (
            vec!["R1", "R2", "RC", "RE1", "RE2"],
            vec![
                Current("Q1", ic),
                Gain(a),
                InputImpedance(z),
                SwingCentred("Q1"),
                last("Q1"),
            ],
        ),
        Topology::CommonCollector => (
            vec!["R1", "R2", "RE"],
            vec![Current("Q1", ic), InputImpedance(z), SwingCentred("Q1")],
        ),
        Topology::CommonBase => {
            let first = match t.input_impedance {
                Some(z) => InputImpedance(z),
                None => Current("Q1", ic),
            };
            (
                vec!["R1", "R2", "RC", "RE"],
                vec![
                    first,
                    Gain(a),
                    EmitterVoltage("Q1", t.supply / 10.0),
                    Sensitivity("Q1", t.stability),
                ],
            )
        }
        Topology::EmitterIntoFollower => (
            vec!["R1", "R2", "RC", "RE1", "RE2", "RE3"],
            vec![
                Current("Q1", ic),
                Current("Q2", t.follower_current.unwrap_or(ic)),
                Gain(a),
                InputImpedance(z),
                SwingCentred("Q1"),
                last("Q1"),
            ],
        ),
    }
}

fn par(a: f64, b: f64) -> f64 {
    a * b / (a + b)
}

/// The Newton start: the first guess with the divider resized for the Zin
/// target by the hand formula, or a refusal when the base alone presents
/// less than the target.
fn start(t: &Targets, guess: &Values) -> Result<Values, DesignError> {
    let mut v = guess.clone();
    let b = guess::beta(t);
    let ic = t.ic();
    let re = guess::vt() / ic;
    let base = match t.topology {
        Topology::CommonEmitter | Topology::EmitterIntoFollower => (b + 1.0) * (re + v["RE1"]),
        Topology::CommonCollector => (b + 1.0) * par(v["RE"], t.load),
        Topology::CommonBase => return Ok(v),
    };
    let z = t.input_impedance.unwrap_or(0.0);
    let fmt = |r: f64| crate::units::format(r, crate::units::Unit::Ohm);
    if z >= 0.9 * base {
        return Err(DesignError(format!(
            "zin {} is above what the bias allows: the base itself presents only about {} here \
             ((βF + 1)·(re + unbypassed RE) at {} and this gain), and the bias divider can only lower it; \
             lower --zin, lower the gain or the collector current, or put a follower in front",
            fmt(z),
            fmt(base),
            crate::units::format(ic, crate::units::Unit::Ampere)
        )));
    }
    let rb = 1.0 / (1.0 / z - 1.0 / base);
    let vcc = t.supply;
    let ve = match t.topology {
        Topology::CommonCollector => vcc / 2.0,
        _ => vcc / 10.0,
    };
    let vth = ve + VBE + ic / b * rb;
    if vth >= vcc {
        return Err(DesignError(format!(
            "zin {} needs a divider of {} whose base current drop leaves no room under the {} V supply",
            fmt(z),
            fmt(rb),
            crate::units::echo(vcc)
        )));
    }
    v.insert("R1".into(), rb * vcc / vth);
    v.insert("R2".into(), rb * vcc / (vcc - vth));
    Ok(v)
}

fn refuse_gain(t: &Targets, guess: &Values) -> Result<(), DesignError> {
    if !matches!(
        t.topology,
        Topology::CommonEmitter | Topology::EmitterIntoFollower
    ) {
        return Ok(());
    }
    let ic = t.ic();
    let re = guess::vt() / ic;
    let rc = guess["RC"];
    let rac = match t.topology {
        Topology::CommonEmitter => par(rc, t.load),
        _ => rc,
    };
    let most = rac / re;
    let a = t.gain().unwrap_or(1.0);
    if a >= 0.8 * most {
        return Err(DesignError(format!(
            "gain {} dB needs two stages: one stage at {} into {} gives at most about {:.1} dB \
             (gm·(RC ‖ load) with the emitter fully bypassed) and the partly bypassed emitter this \
             designer uses needs room below that",
            crate::units::fixed(t.gain_db.unwrap_or(0.0), 1),
            crate::units::format(ic, crate::units::Unit::Ampere),
            crate::units::format(t.load, crate::units::Unit::Ohm),
            20.0 * most.log10()
        )));
    }
    Ok(())
}

/// Collector currents tried, largest first, when none is given (common
/// practice range for small-signal stages).
pub const CURRENT_CHOICES: [f64; 7] = [2e-3, 1e-3, 500e-6, 200e-6, 100e-6, 50e-6, 20e-6];

/// Design a stage for `t`. Without a collector current (and not a
/// common-base stage set by its Zin), the largest of [`CURRENT_CHOICES`]
/// that meets every target is taken.
pub fn design(t: &Targets) -> Result<Design, DesignError> {
    t.check()?;
    if t.low_noise {
        return super::quiet::low_noise(t);
    }
    let chosen = t.collector_current.is_none()
        && !(t.topology == Topology::CommonBase && t.input_impedance.is_some());
    if !chosen {
        return design_at(t);
    }
    let mut errors = Vec::new();
    for ic in CURRENT_CHOICES {
        let mut t2 = t.clone();
        t2.collector_current = Some(ic);
        match design_at(&t2) {
            Ok(mut d) => {
                d.current_chosen = true;
                return Ok(d);
            }
            Err(e) => errors.push(e.0),
        }
    }
    let (first, last) = (&errors[0], &errors[errors.len() - 1]);
    Err(DesignError(if first == last {
        first.clone()
    } else {
        format!(
            "no collector current from 2 mA down to 20 µA meets every target. At 2 mA: {first}. \
             At 20 µA: {last}"
        )
    }))
}

pub(super) fn design_at(t: &Targets) -> Result<Design, DesignError> {
    let guess = guess::first_guess(t)?;
    refuse_gain(t, &guess)?;
    let start = start(t, &guess)?;
    let doc = layout::document(t, &start);
    let mut s = Solver {
        probe: Probe::new(doc),
        evaluations: 0,
        iterations: 0,
    };
    // Equations with VE = VCC/10 first; if S is then above the limit, S = limit instead.
    let (vars, mut eqs) = problem(t, false);
    let mut solved = s.newton(&vars, &eqs, &start);
    let has_ve = eqs
        .iter()
        .any(|e| matches!(e, Equation::EmitterVoltage(..)));
    let too_sensitive = |m: &Measured| {
        m.devices
            .iter()
            .any(|d| d.sensitivity > t.stability * (1.0 + 1e-9))
    };
    if has_ve {
        let retry = match &solved {
            Err(_) => true,
            Ok((vals, _)) => {
                layout::set_values(&mut s.probe.doc, vals);
                s.probe
                    .measure(false)
                    .map(|(m, _)| too_sensitive(&m))
                    .unwrap_or(true)
            }
        };
        if retry {
            let (_, stiff) = problem(t, true);
            let from = match &solved {
                Ok((v, _)) => v.clone(),
                Err(_) => start.clone(),
            };
            if let Ok(r) = s.newton(&vars, &stiff, &from) {
                solved = Ok(r);
                eqs = stiff;
            }
        }
    }
    let (values, jac) = solved.map_err(|e| DesignError(explain(t, &e)))?;
    layout::set_values(&mut s.probe.doc, &values);
    let (m, ss) = s.probe.measure(false).map_err(DesignError)?;
    check_solution(t, &m)?;
    // Capacitors: scale all together so |H(fL)| = |H(midband)|/√2.
    let mut values = values;
    let k = measure::capacitor_scale(&s.probe, ss.expect("small-signal circuit"), t.low_corner)
        .ok_or_else(|| DesignError("the response has no lower −3 dB corner to place".into()))?;
    for name in layout::designed_parts(t.topology) {
        if name.starts_with('C') {
            values.insert(name.to_string(), guess[*name] * k);
        }
    }
    let continuous = stage(t, &values);
    if let Ok(m) = &continuous.measured {
        check_solution(t, m)?;
    }
    let first_guess = stage(t, &guess);
    let snapped = super::snap::snap_design(t, &values, &vars, &eqs, &jac);
    let bounds = bounds(t, &eqs, &jac);
    Ok(Design {
        targets: t.clone(),
        first_guess,
        continuous,
        snapped,
        equations: eqs,
        reasons: guess::reasons(t),
        bounds,
        iterations: s.iterations,
        evaluations: s.evaluations,
        current_chosen: false,
    })
}

/// Build and analyse one set of values.
pub fn stage(t: &Targets, values: &Values) -> Stage {
    let document = layout::document(t, values);
    let probe = Probe::new(document);
    let measured = probe.measure(true).map(|(m, _)| m);
    Stage {
        values: values.clone(),
        measured,
        // Drawn by the layout engine, as every sheet the program places.
        document: crate::layout::tidy(&probe.doc),
    }
}

/// A continuous solution that is not a usable stage is refused, with the reason.
fn check_solution(t: &Targets, m: &Measured) -> Result<(), DesignError> {
    use crate::analysis::dc::Region;
    for d in &m.devices {
        if d.region != Region::ForwardActive || d.saturation_margin <= 0.0 {
            return Err(DesignError(format!(
                "{} would not be forward-active ({}); the targets leave no collector–emitter voltage",
                d.designator,
                d.region.words()
            )));
        }
        if d.sensitivity > t.stability * (1.0 + 1e-6) {
            return Err(DesignError(format!(
                "{}: βF sensitivity S = {:.3} is above the limit {} with these targets: the input impedance \
                 asks for a divider too light for the emitter resistance the supply allows; lower --zin or \
                 raise --stability",
                d.designator, d.sensitivity, t.stability
            )));
        }
        if d.ve > t.supply / 3.0 && t.topology != Topology::CommonCollector && d.designator == "Q1"
        {
            return Err(DesignError(format!(
                "{}: meeting S ≤ {} at this Zin needs VE = {:.2} V, above a third of the supply; lower --zin \
                 or raise --stability",
                d.designator, t.stability, d.ve
            )));
        }
    }
    Ok(())
}

/// Name the target behind a Newton failure.
fn explain(t: &Targets, e: &str) -> String {
    format!(
        "cannot design a {} stage for these targets: {e}",
        t.topology.words()
    )
}

/// First-order bounds of snapping: Σ |∂ln F/∂ln x| · ln(step) per equation
/// that is a target (not a design choice).
fn bounds(t: &Targets, eqs: &[Equation], jac: &DMatrix<f64>) -> Vec<Bound> {
    let ln_step = t.resistor_series.step().ln();
    eqs.iter()
        .enumerate()
        .filter(|(_, e)| {
            matches!(
                e,
                Equation::Current(..) | Equation::Gain(_) | Equation::InputImpedance(_)
            )
        })
        .map(|(r, e)| Bound {
            figure: e.words(),
            log_bound: (0..jac.ncols()).map(|c| jac[(r, c)].abs()).sum::<f64>() * ln_step,
        })
        .collect()
}
