//! Generic device presets (no brands, no part numbers) and parameter names.
//!
//! A part's effective parameters are: the kind's defaults, overlaid by its
//! preset's values, overlaid by the values written on the part.

use crate::document::{Part, PartKind};
use std::collections::BTreeMap;

/// Parameter names, one per idea, used in the file, the code and on screen.
pub mod keys {
    pub const RESISTANCE: &str = "resistance";
    pub const CAPACITANCE: &str = "capacitance";
    pub const INDUCTANCE: &str = "inductance";
    pub const VOLTAGE: &str = "voltage";
    pub const CURRENT: &str = "current";
    /// Signal source: peak amplitude of the AC signal, V.
    pub const AMPLITUDE: &str = "amplitude";
    /// Signal source: DC offset, V.
    pub const DC_OFFSET: &str = "dc_offset";
    /// Signal source: frequency for a single-tone readout, Hz.
    pub const FREQUENCY: &str = "frequency";
    /// Symmetric tolerance as a fraction (0.05 for 5 %).
    pub const TOLERANCE: &str = "tolerance";
    /// Asymmetric tolerance, fraction below nominal (0.2 for −20 %).
    pub const TOLERANCE_MINUS: &str = "tolerance_minus";
    /// Asymmetric tolerance, fraction above nominal (0.8 for +80 %).
    pub const TOLERANCE_PLUS: &str = "tolerance_plus";
    /// Transistor: lowest and highest forward beta of the part type.
    pub const FORWARD_BETA_MIN: &str = "forward_beta_min";
    pub const FORWARD_BETA_MAX: &str = "forward_beta_max";
    /// Transistor: part-to-part spread of VBE at a given IC, ± volts (acts through Is).
    pub const BASE_EMITTER_VOLTAGE_SPREAD: &str = "base_emitter_voltage_spread";
    pub const POWER_RATING: &str = "power_rating";
    pub const VOLTAGE_RATING: &str = "voltage_rating";

    // Bipolar transistor (Gummel–Poon subset) and diode.
    pub const SATURATION_CURRENT: &str = "saturation_current";
    pub const FORWARD_BETA: &str = "forward_beta";
    pub const REVERSE_BETA: &str = "reverse_beta";
    pub const FORWARD_EARLY_VOLTAGE: &str = "forward_early_voltage";
    pub const REVERSE_EARLY_VOLTAGE: &str = "reverse_early_voltage";
    pub const FORWARD_EMISSION: &str = "forward_emission";
    pub const REVERSE_EMISSION: &str = "reverse_emission";
    pub const BASE_RESISTANCE: &str = "base_resistance";
    pub const EMITTER_CAPACITANCE: &str = "emitter_junction_capacitance";
    pub const COLLECTOR_CAPACITANCE: &str = "collector_junction_capacitance";
    pub const EMITTER_POTENTIAL: &str = "emitter_junction_potential";
    pub const COLLECTOR_POTENTIAL: &str = "collector_junction_potential";
    pub const EMITTER_GRADING: &str = "emitter_grading";
    pub const COLLECTOR_GRADING: &str = "collector_grading";
    pub const FORWARD_TRANSIT_TIME: &str = "forward_transit_time";
    /// Transistor: forward knee current, A — where high injection starts to
    /// lower βF (absent: no roll-off).
    pub const FORWARD_KNEE_CURRENT: &str = "forward_knee_current";
    /// Transistor: reverse knee current, A (absent: none).
    pub const REVERSE_KNEE_CURRENT: &str = "reverse_knee_current";
    pub const PARAMETER_CELSIUS: &str = "parameter_celsius";
    pub const BETA_TEMPERATURE_EXPONENT: &str = "beta_temperature_exponent";
    pub const SATURATION_CURRENT_TEMPERATURE_EXPONENT: &str =
        "saturation_current_temperature_exponent";
    pub const BAND_GAP: &str = "band_gap";
    /// Transistor, noise: frequency (Hz) where the base current's flicker
    /// noise equals its shot noise; absent or 0 = no flicker noise.
    pub const FLICKER_CORNER_FREQUENCY: &str = "flicker_corner_frequency";
    /// Current source, noise: 1 marks its current as a junction current that
    /// carries shot noise 2q·I (a photodiode's photocurrent); absent or 0 = noiseless.
    pub const SHOT_NOISE: &str = "shot_noise";
    /// Resistor: 1 marks it as the signal source's own resistance — outside
    /// the amplifier (before its Zin), the reference of the noise figure, no
    /// default tolerance in the spread. Only a marked resistor is the source's:
    /// an unmarked one in series after the source is part of the amplifier.
    pub const SOURCE_RESISTANCE_MARK: &str = "source_resistance_mark";
    // Diode.
    pub const EMISSION_COEFFICIENT: &str = "emission_coefficient";
    pub const SERIES_RESISTANCE: &str = "series_resistance";
    pub const JUNCTION_CAPACITANCE: &str = "junction_capacitance";
    pub const JUNCTION_POTENTIAL: &str = "junction_potential";
    pub const GRADING: &str = "grading";
    pub const TRANSIT_TIME: &str = "transit_time";
    // Ratings.
    pub const MAX_COLLECTOR_EMITTER_VOLTAGE: &str = "max_collector_emitter_voltage";
    pub const MAX_COLLECTOR_BASE_VOLTAGE: &str = "max_collector_base_voltage";
    pub const MAX_EMITTER_BASE_VOLTAGE: &str = "max_emitter_base_voltage";
    pub const MAX_COLLECTOR_CURRENT: &str = "max_collector_current";
    pub const MAX_FORWARD_CURRENT: &str = "max_forward_current";
    pub const MAX_REVERSE_VOLTAGE: &str = "max_reverse_voltage";
    pub const MAX_POWER: &str = "max_power";
    /// Junction-to-ambient thermal resistance, K/W.
    pub const THERMAL_RESISTANCE: &str = "thermal_resistance";
    pub const MAX_JUNCTION_CELSIUS: &str = "max_junction_celsius";
    /// A FET's ratings (its model keys live with its equations).
    pub use crate::analysis::devices::fet::keys::{
        MAX_DRAIN_CURRENT, MAX_DRAIN_SOURCE_VOLTAGE, MAX_GATE_SOURCE_VOLTAGE,
    };
}

use crate::analysis::devices::fet::keys as fet;
use keys::*;

/// A generic device preset.
#[derive(Debug)]
pub struct Preset {
    pub name: &'static str,
    pub kinds: &'static [PartKind],
    pub description: &'static str,
    pub parameters: &'static [(&'static str, f64)],
}

/// Model defaults of the Gummel–Poon model (H. K. Gummel and H. C. Poon, Bell
/// System Technical Journal 49, 1970) for a transistor (used when neither the
/// preset nor the part gives a value). Early voltages default to infinity.
const BJT_DEFAULTS: &[(&str, f64)] = &[
    (SATURATION_CURRENT, 1e-14),
    (FORWARD_BETA, 100.0),
    (REVERSE_BETA, 1.0),
    (FORWARD_EARLY_VOLTAGE, f64::INFINITY),
    (REVERSE_EARLY_VOLTAGE, f64::INFINITY),
    (FORWARD_EMISSION, 1.0),
    (REVERSE_EMISSION, 1.0),
    (BASE_RESISTANCE, 0.0),
    (EMITTER_CAPACITANCE, 0.0),
    (COLLECTOR_CAPACITANCE, 0.0),
    (EMITTER_POTENTIAL, 0.75),
    (COLLECTOR_POTENTIAL, 0.75),
    (EMITTER_GRADING, 0.33),
    (COLLECTOR_GRADING, 0.33),
    (FORWARD_TRANSIT_TIME, 0.0),
    (PARAMETER_CELSIUS, 27.0),
    (BETA_TEMPERATURE_EXPONENT, 1.5),
    (SATURATION_CURRENT_TEMPERATURE_EXPONENT, 3.0),
    (BAND_GAP, 1.11),
];

const DIODE_DEFAULTS: &[(&str, f64)] = &[
    (SATURATION_CURRENT, 1e-14),
    (EMISSION_COEFFICIENT, 1.0),
    (SERIES_RESISTANCE, 0.0),
    (JUNCTION_CAPACITANCE, 0.0),
    (JUNCTION_POTENTIAL, 0.75),
    (GRADING, 0.33),
    (TRANSIT_TIME, 0.0),
    (PARAMETER_CELSIUS, 27.0),
    (SATURATION_CURRENT_TEMPERATURE_EXPONENT, 3.0),
    (BAND_GAP, 1.11),
];

/// Defaults of the field-effect kinds (square law; the equations and the
/// rest of their defaults are in `analysis/devices/fet.rs`): a pinch-off
/// of −2 V for an N-JFET (+2 V for a P-JFET), a threshold of +2 V for an
/// enhancement N-MOSFET (−2 V for a P-MOSFET), β = 1 mA/V², no λ.
const N_JFET_DEFAULTS: &[(&str, f64)] = &[
    (fet::THRESHOLD_VOLTAGE, -2.0),
    (fet::TRANSCONDUCTANCE_PARAMETER, 1e-3),
    (fet::CHANNEL_LENGTH_MODULATION, 0.0),
    (PARAMETER_CELSIUS, 27.0),
];
const P_JFET_DEFAULTS: &[(&str, f64)] = &[
    (fet::THRESHOLD_VOLTAGE, 2.0),
    (fet::TRANSCONDUCTANCE_PARAMETER, 1e-3),
    (fet::CHANNEL_LENGTH_MODULATION, 0.0),
    (PARAMETER_CELSIUS, 27.0),
];
const N_MOSFET_DEFAULTS: &[(&str, f64)] = &[
    (fet::THRESHOLD_VOLTAGE, 2.0),
    (fet::TRANSCONDUCTANCE_PARAMETER, 1e-3),
    (fet::CHANNEL_LENGTH_MODULATION, 0.0),
    (PARAMETER_CELSIUS, 27.0),
];
const P_MOSFET_DEFAULTS: &[(&str, f64)] = &[
    (fet::THRESHOLD_VOLTAGE, -2.0),
    (fet::TRANSCONDUCTANCE_PARAMETER, 1e-3),
    (fet::CHANNEL_LENGTH_MODULATION, 0.0),
    (PARAMETER_CELSIUS, 27.0),
];

/// The shipped presets: typical values for generic parts of each class,
/// invented for this program (not any maker's data).
pub const PRESETS: &[Preset] = &[
    Preset {
        name: "small-signal-npn",
        kinds: &[PartKind::Npn],
        description: "generic small-signal NPN, 40 V, 200 mA",
        parameters: &[
            (SATURATION_CURRENT, 1e-14),
            (FORWARD_BETA, 200.0),
            (REVERSE_BETA, 2.0),
            (FORWARD_EARLY_VOLTAGE, 100.0),
            (BASE_RESISTANCE, 10.0),
            (EMITTER_CAPACITANCE, 8e-12),
            (COLLECTOR_CAPACITANCE, 4e-12),
            (FORWARD_TRANSIT_TIME, 4e-10),
            (MAX_COLLECTOR_EMITTER_VOLTAGE, 40.0),
            (MAX_COLLECTOR_BASE_VOLTAGE, 60.0),
            (MAX_EMITTER_BASE_VOLTAGE, 6.0),
            (MAX_COLLECTOR_CURRENT, 0.2),
            (MAX_POWER, 0.5),
            (THERMAL_RESISTANCE, 250.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "small-signal-pnp",
        kinds: &[PartKind::Pnp],
        description: "generic small-signal PNP, 40 V, 200 mA",
        parameters: &[
            (SATURATION_CURRENT, 1e-14),
            (FORWARD_BETA, 180.0),
            (REVERSE_BETA, 2.0),
            (FORWARD_EARLY_VOLTAGE, 80.0),
            (BASE_RESISTANCE, 10.0),
            (EMITTER_CAPACITANCE, 9e-12),
            (COLLECTOR_CAPACITANCE, 5e-12),
            (FORWARD_TRANSIT_TIME, 5e-10),
            (MAX_COLLECTOR_EMITTER_VOLTAGE, 40.0),
            (MAX_COLLECTOR_BASE_VOLTAGE, 50.0),
            (MAX_EMITTER_BASE_VOLTAGE, 5.0),
            (MAX_COLLECTOR_CURRENT, 0.2),
            (MAX_POWER, 0.5),
            (THERMAL_RESISTANCE, 250.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "power-npn",
        kinds: &[PartKind::Npn],
        description: "generic power NPN, 60 V, 4 A, 40 W on a heat sink held at 25 °C \
                      (power rating and θJA here are in free air, no heat sink: set \
                      thermal_resistance for your heat sink); βF falls above its 1.5 A knee",
        parameters: &[
            (SATURATION_CURRENT, 1e-12),
            (FORWARD_BETA, 100.0),
            (REVERSE_BETA, 3.0),
            (FORWARD_EARLY_VOLTAGE, 100.0),
            (FORWARD_KNEE_CURRENT, 1.5),
            (BASE_RESISTANCE, 5.0),
            (EMITTER_CAPACITANCE, 300e-12),
            (COLLECTOR_CAPACITANCE, 120e-12),
            (FORWARD_TRANSIT_TIME, 3e-8),
            (MAX_COLLECTOR_EMITTER_VOLTAGE, 60.0),
            (MAX_COLLECTOR_BASE_VOLTAGE, 70.0),
            (MAX_EMITTER_BASE_VOLTAGE, 5.0),
            (MAX_COLLECTOR_CURRENT, 4.0),
            (MAX_POWER, 2.0),
            (THERMAL_RESISTANCE, 62.5),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "power-pnp",
        kinds: &[PartKind::Pnp],
        description: "generic power PNP, 60 V, 4 A, 40 W on a heat sink held at 25 °C \
                      (power rating and θJA here are in free air, no heat sink: set \
                      thermal_resistance for your heat sink); βF falls above its 1.2 A knee",
        parameters: &[
            (SATURATION_CURRENT, 1e-12),
            (FORWARD_BETA, 90.0),
            (REVERSE_BETA, 3.0),
            (FORWARD_EARLY_VOLTAGE, 80.0),
            (FORWARD_KNEE_CURRENT, 1.2),
            (BASE_RESISTANCE, 5.0),
            (EMITTER_CAPACITANCE, 350e-12),
            (COLLECTOR_CAPACITANCE, 150e-12),
            (FORWARD_TRANSIT_TIME, 3.5e-8),
            (MAX_COLLECTOR_EMITTER_VOLTAGE, 60.0),
            (MAX_COLLECTOR_BASE_VOLTAGE, 70.0),
            (MAX_EMITTER_BASE_VOLTAGE, 5.0),
            (MAX_COLLECTOR_CURRENT, 4.0),
            (MAX_POWER, 2.0),
            (THERMAL_RESISTANCE, 62.5),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "general-purpose-diode",
        kinds: &[PartKind::Diode],
        description: "generic small-signal silicon diode, 75 V, 150 mA",
        parameters: &[
            (SATURATION_CURRENT, 4e-9),
            (EMISSION_COEFFICIENT, 1.9),
            (SERIES_RESISTANCE, 0.6),
            (JUNCTION_CAPACITANCE, 1e-12),
            (TRANSIT_TIME, 5e-9),
            (MAX_FORWARD_CURRENT, 0.15),
            (MAX_REVERSE_VOLTAGE, 75.0),
            (MAX_POWER, 0.4),
        ],
    },
    Preset {
        name: "small-signal-n-jfet",
        kinds: &[PartKind::NJfet],
        description: "generic small-signal N-channel JFET, 25 V, IDSS 6 mA, pinch-off −2 V",
        parameters: &[
            (fet::THRESHOLD_VOLTAGE, -2.0),
            (fet::ZERO_GATE_DRAIN_CURRENT, 6e-3),
            (fet::CHANNEL_LENGTH_MODULATION, 0.01),
            (fet::GATE_SATURATION_CURRENT, 1e-14),
            (fet::GATE_SOURCE_CAPACITANCE, 4e-12),
            (fet::GATE_DRAIN_CAPACITANCE, 1.5e-12),
            (fet::MAX_DRAIN_SOURCE_VOLTAGE, 25.0),
            (fet::MAX_GATE_SOURCE_VOLTAGE, 25.0),
            (fet::MAX_DRAIN_CURRENT, 0.05),
            (MAX_POWER, 0.35),
            (THERMAL_RESISTANCE, 357.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "small-signal-p-jfet",
        kinds: &[PartKind::PJfet],
        description: "generic small-signal P-channel JFET, 25 V, IDSS 8 mA, pinch-off +2.5 V",
        parameters: &[
            (fet::THRESHOLD_VOLTAGE, 2.5),
            (fet::ZERO_GATE_DRAIN_CURRENT, 8e-3),
            (fet::CHANNEL_LENGTH_MODULATION, 0.01),
            (fet::GATE_SATURATION_CURRENT, 1e-14),
            (fet::GATE_SOURCE_CAPACITANCE, 5e-12),
            (fet::GATE_DRAIN_CAPACITANCE, 2e-12),
            (fet::MAX_DRAIN_SOURCE_VOLTAGE, 25.0),
            (fet::MAX_GATE_SOURCE_VOLTAGE, 25.0),
            (fet::MAX_DRAIN_CURRENT, 0.05),
            (MAX_POWER, 0.35),
            (THERMAL_RESISTANCE, 357.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "small-signal-n-mosfet",
        kinds: &[PartKind::NMosfet],
        description: "generic small-signal N-channel MOSFET, 60 V, 300 mA, threshold 2.1 V",
        parameters: &[
            (fet::THRESHOLD_VOLTAGE, 2.1),
            (fet::TRANSCONDUCTANCE_PARAMETER, 0.05),
            (fet::CHANNEL_LENGTH_MODULATION, 0.02),
            (fet::INPUT_CAPACITANCE, 50e-12),
            (fet::REVERSE_TRANSFER_CAPACITANCE, 5e-12),
            (fet::OUTPUT_CAPACITANCE, 25e-12),
            (fet::CAPACITANCE_TEST_VOLTAGE, 25.0),
            (fet::MAX_DRAIN_SOURCE_VOLTAGE, 60.0),
            (fet::MAX_GATE_SOURCE_VOLTAGE, 20.0),
            (fet::MAX_DRAIN_CURRENT, 0.3),
            (MAX_POWER, 0.4),
            (THERMAL_RESISTANCE, 312.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "small-signal-p-mosfet",
        kinds: &[PartKind::PMosfet],
        description: "generic small-signal P-channel MOSFET, 50 V, 200 mA, threshold −2 V",
        parameters: &[
            (fet::THRESHOLD_VOLTAGE, -2.0),
            (fet::TRANSCONDUCTANCE_PARAMETER, 0.03),
            (fet::CHANNEL_LENGTH_MODULATION, 0.02),
            (fet::INPUT_CAPACITANCE, 60e-12),
            (fet::REVERSE_TRANSFER_CAPACITANCE, 8e-12),
            (fet::OUTPUT_CAPACITANCE, 30e-12),
            (fet::CAPACITANCE_TEST_VOLTAGE, 25.0),
            (fet::MAX_DRAIN_SOURCE_VOLTAGE, 50.0),
            (fet::MAX_GATE_SOURCE_VOLTAGE, 20.0),
            (fet::MAX_DRAIN_CURRENT, 0.2),
            (MAX_POWER, 0.4),
            (THERMAL_RESISTANCE, 312.0),
            (MAX_JUNCTION_CELSIUS, 150.0),
        ],
    },
    Preset {
        name: "switching-n-mosfet",
        kinds: &[PartKind::NMosfet],
        description: "generic switching/power N-channel MOSFET, 100 V, 30 A, threshold 3 V \
                      (power rating in free air, no heat sink)",
        parameters: &[
            (fet::THRESHOLD_VOLTAGE, 3.0),
            (fet::TRANSCONDUCTANCE_PARAMETER, 5.0),
            (fet::CHANNEL_LENGTH_MODULATION, 0.005),
            (fet::BODY_DIODE_SATURATION_CURRENT, 1e-11),
            (fet::INPUT_CAPACITANCE, 1.6e-9),
            (fet::REVERSE_TRANSFER_CAPACITANCE, 100e-12),
            (fet::OUTPUT_CAPACITANCE, 400e-12),
            (fet::CAPACITANCE_TEST_VOLTAGE, 25.0),
            (fet::MAX_DRAIN_SOURCE_VOLTAGE, 100.0),
            (fet::MAX_GATE_SOURCE_VOLTAGE, 20.0),
            (fet::MAX_DRAIN_CURRENT, 30.0),
            (MAX_POWER, 2.5),
            (THERMAL_RESISTANCE, 62.0),
            (MAX_JUNCTION_CELSIUS, 175.0),
        ],
    },
];

pub fn find(name: &str) -> Option<&'static Preset> {
    PRESETS.iter().find(|p| p.name == name)
}

pub fn names() -> Vec<&'static str> {
    PRESETS.iter().map(|p| p.name).collect()
}

/// The kind's default parameters (empty for kinds without a model).
pub fn defaults(kind: PartKind) -> &'static [(&'static str, f64)] {
    match kind {
        PartKind::Npn | PartKind::Pnp => BJT_DEFAULTS,
        PartKind::Diode => DIODE_DEFAULTS,
        PartKind::NJfet => N_JFET_DEFAULTS,
        PartKind::PJfet => P_JFET_DEFAULTS,
        PartKind::NMosfet => N_MOSFET_DEFAULTS,
        PartKind::PMosfet => P_MOSFET_DEFAULTS,
        _ => &[],
    }
}

/// Defaults, then preset, then the part's own values.
pub fn effective_parameters(part: &Part) -> BTreeMap<String, f64> {
    let mut out: BTreeMap<String, f64> = defaults(part.kind)
        .iter()
        .map(|(k, v)| (k.to_string(), *v))
        .collect();
    if let Some(preset) = part.preset.as_deref().and_then(find) {
        for (k, v) in preset.parameters {
            out.insert(k.to_string(), *v);
        }
    }
    for (k, v) in &part.parameters {
        out.insert(k.clone(), *v);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn presets_have_finite_early_voltage() {
        // common practice (no source): a shipped small-signal preset carries a finite Early
        // voltage (about 100 V) so that ro is visible.
        for p in PRESETS
            .iter()
            .filter(|p| p.kinds.iter().any(|k| k.is_bipolar()))
        {
            let va = p
                .parameters
                .iter()
                .find(|(k, _)| *k == FORWARD_EARLY_VOLTAGE)
                .map(|(_, v)| *v);
            assert!(va.is_some_and(|v| v.is_finite() && v > 0.0), "{}", p.name);
        }
    }
}
