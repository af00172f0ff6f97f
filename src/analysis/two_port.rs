//! Two-port views of a bipolar transistor at an operating point.
//!
//! Everything starts from the common-emitter y-parameters, the Jacobian of
//! (IB, IC) with respect to (VBE, VCE) at the operating point:
//!
//! ```text
//! y11 = ∂IB/∂VBE   y12 = ∂IB/∂VCE   y21 = ∂IC/∂VBE   y22 = ∂IC/∂VCE
//! ```
//!
//! From them, by the standard two-port conversions (Gray, Hurst, Lewis,
//! Meyer, "Analysis and Design of Analog Integrated Circuits", ch. 1):
//! - hybrid-π: gμ = −y12, gπ = y11 + y12, gm = y21 − y12, go = y22 + y12
//!   (plus Cπ, Cμ and rb, which the y-parameters at DC do not carry);
//! - h-parameters in common emitter by the standard two-port conversion, and
//!   the common-base and common-collector sets from the 3×3 indefinite
//!   admittance matrix (rows and columns B, C, E, every current flowing into
//!   the device) with the common terminal grounded;
//! - the T (re) model: α = hfe/(1 + hfe), re = α/gm, ro = 1/go.
//!
//! All quantities are real (low-frequency) conductances, resistances and
//! ratios in SI units.

use serde::Serialize;

/// A real two-port described by its admittance parameters (port 1 input,
/// port 2 output, currents into the ports).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct YParameters {
    pub y11: f64,
    pub y12: f64,
    pub y21: f64,
    pub y22: f64,
}

/// A real two-port described by its hybrid parameters.
/// h11 = input impedance with the output short-circuited (Ω);
/// h12 = reverse voltage ratio with the input open;
/// h21 = forward current ratio with the output short-circuited;
/// h22 = output admittance with the input open (S).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HParameters {
    pub h11: f64,
    pub h12: f64,
    pub h21: f64,
    pub h22: f64,
}

/// The hybrid-π model: gm from B'–E to the collector, rπ across B'–E, rμ
/// across B'–C, ro across C–E, Cπ, Cμ, and rb in the base lead.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HybridPi {
    /// Transconductance, S.
    pub gm: f64,
    /// Base–emitter conductance 1/rπ, S.
    pub g_pi: f64,
    /// Base–collector conductance 1/rμ, S (nearly zero for this model).
    pub g_mu: f64,
    /// Output conductance 1/ro, S.
    pub go: f64,
    /// Base–emitter capacitance Cπ = τF·gm + Cje(VBE), F.
    pub c_pi: f64,
    /// Base–collector capacitance Cμ = Cjc(VBC), F.
    pub c_mu: f64,
    /// Base resistance rb, Ω.
    pub rb: f64,
}

impl HybridPi {
    /// The hybrid-π elements that reproduce these y-parameters exactly.
    pub fn from_y(y: &YParameters, c_pi: f64, c_mu: f64, rb: f64) -> Self {
        HybridPi {
            gm: y.y21 - y.y12,
            g_pi: y.y11 + y.y12,
            g_mu: -y.y12,
            go: y.y22 + y.y12,
            c_pi,
            c_mu,
            rb,
        }
    }

    /// The intrinsic (rb = 0, low-frequency) y-parameters of this model.
    pub fn y(&self) -> YParameters {
        YParameters {
            y11: self.g_pi + self.g_mu,
            y12: -self.g_mu,
            y21: self.gm - self.g_mu,
            y22: self.go + self.g_mu,
        }
    }

    /// rπ = 1/gπ, Ω (infinite when gπ is zero).
    pub fn r_pi(&self) -> f64 {
        recip(self.g_pi)
    }
    /// ro = 1/go, Ω.
    pub fn ro(&self) -> f64 {
        recip(self.go)
    }
    /// rμ = 1/gμ, Ω.
    pub fn r_mu(&self) -> f64 {
        recip(self.g_mu)
    }
}

fn recip(g: f64) -> f64 {
    if g == 0.0 {
        f64::INFINITY
    } else {
        1.0 / g
    }
}

impl YParameters {
    /// From the device derivatives with respect to the junction voltages
    /// (∂/∂VBE at constant VBC and ∂/∂VBC at constant VBE), using
    /// VBC = VBE − VCE: ∂/∂VBE|VCE = ∂/∂VBE + ∂/∂VBC and ∂/∂VCE|VBE = −∂/∂VBC.
    pub fn from_junction_derivatives(
        dib_dvbe: f64,
        dib_dvbc: f64,
        dic_dvbe: f64,
        dic_dvbc: f64,
    ) -> Self {
        YParameters {
            y11: dib_dvbe + dib_dvbc,
            y12: -dib_dvbc,
            y21: dic_dvbe + dic_dvbc,
            y22: -dic_dvbc,
        }
    }

    /// Standard y → h conversion: h11 = 1/y11, h12 = −y12/y11,
    /// h21 = y21/y11, h22 = y22 − y12·y21/y11. `None` when y11 is zero.
    pub fn to_h(&self) -> Option<HParameters> {
        if self.y11 == 0.0 || !self.y11.is_finite() {
            return None;
        }
        Some(HParameters {
            h11: 1.0 / self.y11,
            h12: -self.y12 / self.y11,
            h21: self.y21 / self.y11,
            h22: self.y22 - self.y12 * self.y21 / self.y11,
        })
    }

    /// The 3×3 indefinite admittance matrix, rows and columns B, C, E, of a
    /// device whose common-emitter y-parameters these are. Every row and
    /// every column sums to zero (KCL, and invariance to a common shift of
    /// all terminal voltages).
    pub fn indefinite(&self) -> IndefiniteMatrix {
        let YParameters { y11, y12, y21, y22 } = *self;
        IndefiniteMatrix {
            y: [
                [y11, y12, -(y11 + y12)],
                [y21, y22, -(y21 + y22)],
                [-(y11 + y21), -(y12 + y22), y11 + y12 + y21 + y22],
            ],
        }
    }
}

impl HParameters {
    /// Standard h → y conversion: y11 = 1/h11, y12 = −h12/h11,
    /// y21 = h21/h11, y22 = h22 − h12·h21/h11. `None` when h11 is zero.
    pub fn to_y(&self) -> Option<YParameters> {
        if self.h11 == 0.0 || !self.h11.is_finite() {
            return None;
        }
        Some(YParameters {
            y11: 1.0 / self.h11,
            y12: -self.h12 / self.h11,
            y21: self.h21 / self.h11,
            y22: self.h22 - self.h12 * self.h21 / self.h11,
        })
    }
}

/// A device terminal, in the order of the indefinite matrix.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Terminal {
    Base = 0,
    Collector = 1,
    Emitter = 2,
}

/// The indefinite admittance matrix of a three-terminal device.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct IndefiniteMatrix {
    /// `y[row][col]`, rows and columns B, C, E; currents into the device.
    pub y: [[f64; 3]; 3],
}

impl IndefiniteMatrix {
    /// The two-port y-parameters with `common` grounded, port 1 at `input`
    /// and port 2 at `output` (each voltage taken against the common terminal).
    pub fn grounded(&self, input: Terminal, output: Terminal) -> YParameters {
        let (i, o) = (input as usize, output as usize);
        YParameters {
            y11: self.y[i][i],
            y12: self.y[i][o],
            y21: self.y[o][i],
            y22: self.y[o][o],
        }
    }
}

/// The three h-parameter sets of one transistor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct HSets {
    /// Common emitter: input base, output collector (hie, hre, hfe, hoe).
    pub common_emitter: HParameters,
    /// Common base: input emitter, output collector (hib, hrb, hfb, hob).
    pub common_base: HParameters,
    /// Common collector: input base, output emitter (hic, hrc, hfc, hoc).
    pub common_collector: HParameters,
}

impl HSets {
    /// All three sets from the common-emitter y-parameters. `None` when an
    /// input admittance is zero (a transistor in cut-off).
    pub fn from_y(y: &YParameters) -> Option<Self> {
        let m = y.indefinite();
        Some(HSets {
            common_emitter: y.to_h()?,
            common_base: m.grounded(Terminal::Emitter, Terminal::Collector).to_h()?,
            common_collector: m.grounded(Terminal::Base, Terminal::Emitter).to_h()?,
        })
    }
}

/// The T (re) model with ro from collector to emitter: the base feeds the
/// top of re, a controlled current α·ie (= gm·v across re) flows from the
/// collector into that node, re runs to the emitter. With ro (and rμ, when
/// not zero) it is an exact redraw of the hybrid-π model.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TModel {
    /// α = hfe/(1 + hfe).
    pub alpha: f64,
    /// re = α/gm, Ω.
    pub re: f64,
    /// gm, S (the controlled source is gm times the voltage across re).
    pub gm: f64,
    /// ro = 1/go, Ω.
    pub ro: f64,
    /// rμ from base to collector, Ω (infinite in the usual drawing).
    pub r_mu: f64,
}

impl TModel {
    /// From the hybrid-π model and the small-signal current gain hfe.
    pub fn new(pi: &HybridPi, hfe: f64) -> Self {
        let alpha = hfe / (1.0 + hfe);
        TModel {
            alpha,
            re: if pi.gm == 0.0 {
                f64::INFINITY
            } else {
                alpha / pi.gm
            },
            gm: pi.gm,
            ro: pi.ro(),
            r_mu: pi.r_mu(),
        }
    }

    /// Terminal common-emitter y-parameters of the T circuit (rb = 0):
    /// IB = vbe/re − gm·vbe + (vbe − vce)/rμ,
    /// IC = gm·vbe + vce/ro + (vce − vbe)/rμ.
    pub fn y(&self) -> YParameters {
        let g_mu = recip(self.r_mu);
        let go = recip(self.ro);
        let g_re = recip(self.re);
        YParameters {
            y11: g_re - self.gm + g_mu,
            y12: -g_mu,
            y21: self.gm - g_mu,
            y22: go + g_mu,
        }
    }
}

/// Every model of one transistor at its operating point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TransistorModels {
    pub y: YParameters,
    pub hybrid_pi: HybridPi,
    /// `None` when the transistor conducts no base current (cut-off).
    pub h: Option<HSets>,
    pub t: Option<TModel>,
}

impl TransistorModels {
    pub fn new(y: YParameters, c_pi: f64, c_mu: f64, rb: f64) -> Self {
        let hybrid_pi = HybridPi::from_y(&y, c_pi, c_mu, rb);
        let h = HSets::from_y(&y);
        let t = h.map(|h| TModel::new(&hybrid_pi, h.common_emitter.h21));
        TransistorModels { y, hybrid_pi, h, t }
    }
    /// hfe, the small-signal current gain ∂IC/∂IB at constant VCE.
    pub fn hfe(&self) -> Option<f64> {
        self.h.map(|h| h.common_emitter.h21)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> YParameters {
        // A forward-active point: IC = 1 mA, VT = 25.865 mV, hfe ≈ 200, VA = 100 V.
        let gm = 1e-3 / 25.865e-3;
        YParameters {
            y11: gm / 200.0 + 1e-9,
            y12: -1e-9,
            y21: gm - 1e-9,
            y22: 1e-5 + 1e-9,
        }
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * a.abs().max(b.abs()) + 1e-300
    }

    #[test]
    fn hybrid_pi_reproduces_y() {
        // invariant: the hybrid-π redraw has the same terminal y-parameters
        let y = sample();
        let pi = HybridPi::from_y(&y, 0.0, 0.0, 0.0);
        let back = pi.y();
        for (a, b) in [
            (y.y11, back.y11),
            (y.y12, back.y12),
            (y.y21, back.y21),
            (y.y22, back.y22),
        ] {
            assert!(close(a, b, 1e-12), "{a} vs {b}");
        }
    }

    #[test]
    fn h_y_round_trip() {
        // invariant: h → y → h is the identity (two-port conversion round trip)
        let y = sample();
        let h = y.to_h().unwrap();
        let y2 = h.to_y().unwrap();
        assert!(close(y.y11, y2.y11, 1e-12));
        assert!(close(y.y12, y2.y12, 1e-9));
        assert!(close(y.y21, y2.y21, 1e-12));
        assert!(close(y.y22, y2.y22, 1e-12));
    }

    #[test]
    fn indefinite_rows_and_columns_sum_to_zero() {
        // invariant: Kirchhoff's current law (rows) and invariance to a common voltage shift (columns)
        let m = sample().indefinite();
        for i in 0..3 {
            let row: f64 = m.y[i].iter().sum();
            let col: f64 = (0..3).map(|r| m.y[r][i]).sum();
            assert!(row.abs() < 1e-15 && col.abs() < 1e-15);
        }
    }

    #[test]
    fn hfc_is_minus_one_plus_hfe_exactly() {
        // from memory: the h-parameter conversion between configurations — hfc = −(1 + hfe) from the indefinite matrix
        let s = HSets::from_y(&sample()).unwrap();
        let hfe = s.common_emitter.h21;
        assert!(close(s.common_collector.h21, -(1.0 + hfe), 1e-12));
    }

    #[test]
    fn hfb_is_minus_alpha() {
        // from memory: the h-parameter conversion between configurations — hfb = −α, α = hfe/(1 + hfe); exact
        // when y12 = y22 = 0, otherwise off by the order of go/gm
        let mut y = sample();
        let s = HSets::from_y(&y).unwrap();
        let hfe = s.common_emitter.h21;
        let alpha = hfe / (1.0 + hfe);
        let gm = y.y21;
        assert!((s.common_base.h21 + alpha).abs() < 2.0 * y.y22 / gm);
        y.y12 = 0.0;
        y.y22 = 0.0;
        let s = HSets::from_y(&y).unwrap();
        let hfe = s.common_emitter.h21;
        assert!(close(s.common_base.h21, -hfe / (1.0 + hfe), 1e-13));
    }

    #[test]
    fn t_model_is_hybrid_pi_at_terminals() {
        // invariant: the T model with ro (and rμ) is an exact redraw of the hybrid-π model
        let mut y = sample();
        y.y12 = 0.0; // the T model's α = hfe/(1+hfe) redraw is exact when gμ = 0
        y.y11 = 1e-3 / 25.865e-3 / 200.0;
        let m = TransistorModels::new(y, 0.0, 0.0, 0.0);
        let t = m.t.unwrap();
        let ty = t.y();
        assert!(close(ty.y11, y.y11, 1e-9), "{} {}", ty.y11, y.y11);
        assert!(close(ty.y21, y.y21, 1e-12));
        assert!(close(ty.y22, y.y22, 1e-12));
        assert_eq!(ty.y12, 0.0);
        // source: Sedra and Smith, "Microelectronic Circuits", BJT chapter (T model) — without ro, hie = (hfe + 1)·re
        let hie = m.h.unwrap().common_emitter.h11;
        let hfe = m.hfe().unwrap();
        assert!(close(hie, (hfe + 1.0) * t.re, 1e-12));
    }
}
