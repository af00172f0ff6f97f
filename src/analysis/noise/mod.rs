//! Noise: output and input-referred noise, noise figure, and which part
//! makes it.
//!
//! Map:
//! - [`network`]: the linearised small-signal network (complex MNA).
//! - [`sources`]: the noise generators (thermal, shot, optional flicker).
//! - [`spectrum`]: output density of every source by one adjoint solve per
//!   frequency; band integration.
//! - [`figures`]: input-referred density, noise factor and figure, en/in,
//!   optimum source resistance, the better collector current.
//! - [`stage_noise`]: each stage's en and in, for a long chain through one
//!   factorization.

pub mod build;
pub mod figures;
pub mod network;
pub mod report;
pub mod scan;
pub mod setup;
pub mod sources;
pub mod spectrum;
pub mod stage_noise;

pub use build::{setup, setup_from, BuildOptions};
pub use network::{Element, Network, Node};
pub use report::{
    output_density, report, report_for_document, Contributor, InputNoise, NoiseReport,
    NoiseSettings, PartShare, SignalToNoise, StageInputNoise,
};
pub use setup::{
    CurrentLaw, NoiseSetup, SignalSource, SourceResistance, StageNoise, TransistorNoise,
};
pub use sources::{Mechanism, NoiseSource};
pub use spectrum::Spectrum;
