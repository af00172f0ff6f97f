//! Device equations, one module per device, as published (Gummel–Poon
//! subset for the transistor: Gummel and Poon, Bell System Technical Journal
//! 49, 1970; Shockley diode: Shockley, Bell System Technical Journal 28, 1949).
//!
//! Every model here is evaluated at the analysis temperature: the
//! temperature laws are applied once, when the model is built from a part's
//! parameters (see [`bjt::BjtModel::from_parameters`] and
//! [`diode::DiodeModel::from_parameters`]).

pub mod bjt;
pub mod charge;
pub mod diode;
pub mod fet;

/// Exponent above which `exp` is continued linearly. `exp(80)` ≈ 5.5e34:
/// a junction only gets there (about 2 V across a silicon junction) during
/// wild Newton iterations, never at a physical solution, so the device
/// equations hold unchanged wherever a result is reported; the linear
/// continuation keeps currents and slopes finite and continuous there.
pub const EXP_LIMIT: f64 = 80.0;

/// `exp(x)` and its derivative, continued linearly above [`EXP_LIMIT`].
pub fn limited_exp(x: f64) -> (f64, f64) {
    if x > EXP_LIMIT {
        let e = EXP_LIMIT.exp();
        (e * (1.0 + x - EXP_LIMIT), e)
    } else {
        let e = x.exp();
        (e, e)
    }
}

/// The critical voltage of a junction, n·VT·ln(n·VT / (√2·Is)): the point of
/// the exponential's largest curvature, used by the step limiting below
/// (L. W. Nagel, "SPICE2: a computer program to simulate semiconductor
/// circuits", UC Berkeley ERL memo M520, 1975, section on junction limiting).
pub fn critical_voltage(n_vt: f64, saturation_current: f64) -> f64 {
    n_vt * (n_vt / (std::f64::consts::SQRT_2 * saturation_current)).ln()
}

/// Limit a Newton step of a junction voltage from `old` to `new`
/// (critical-voltage method, Nagel 1975). Above the critical voltage a step
/// that would raise the current by more than a factor e² is replaced by the
/// logarithm of the requested current change, so the exponential cannot
/// overflow and Newton does not overshoot. Returns the limited voltage and
/// whether it differs from `new`.
pub fn limit_junction(new: f64, old: f64, n_vt: f64, v_crit: f64) -> (f64, bool) {
    if new > v_crit && (new - old).abs() > 2.0 * n_vt {
        let limited = if old > 0.0 {
            let arg = 1.0 + (new - old) / n_vt;
            if arg > 0.0 {
                old + n_vt * arg.ln()
            } else {
                v_crit
            }
        } else {
            n_vt * (new / n_vt).ln()
        };
        (limited, true)
    } else {
        (new, false)
    }
}

/// Temperature in kelvin of a Celsius value.
pub fn kelvin(celsius: f64) -> f64 {
    celsius + super::ZERO_CELSIUS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limited_exp_is_continuous_at_the_limit() {
        // invariant: the continuation matches value and slope at the joint.
        let (a, da) = limited_exp(EXP_LIMIT);
        let (b, db) = limited_exp(EXP_LIMIT + 1e-9);
        assert!(((b - a) / a).abs() < 1e-8 && ((db - da) / da).abs() < 1e-12);
    }

    #[test]
    fn limiting_leaves_small_steps_alone_and_caps_large_ones() {
        // source: Nagel 1975, junction limiting — steps below 2·n·VT pass unchanged.
        let vt = 0.025865;
        let vc = critical_voltage(vt, 1e-14);
        assert_eq!(limit_junction(0.70, 0.69, vt, vc), (0.70, false));
        let (v, hit) = limit_junction(5.0, 0.6, vt, vc);
        assert!(hit && v < 0.75 && v > 0.6, "{v}");
        // Below the critical voltage nothing is limited.
        assert!(!limit_junction(vc - 0.01, -3.0, vt, vc).1);
    }
}
