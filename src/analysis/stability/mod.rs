//! Feedback and stability (issue 20): the circuit's own poles and the loop
//! gain of its feedback loops.
//!
//! - [`poles`]: the natural frequencies of the small-signal circuit at the
//!   operating point, as the generalized eigenvalues s of (G + s·C)·x = 0
//!   (the pencil of [`crate::analysis::linear::System::pencil`]).
//! - [`loop_gain`]: Bode's return ratio of every transistor's controlled
//!   source, and the exact loop gain at a break point the user names
//!   (Middlebrook 1975; Tian, Visvanathan, Hantgan and Kundert 2001), with
//!   crossover, phase and gain margins and the asymptotic-gain split
//!   (Rosenstark 1986).

pub mod at_pin;
pub mod feedback;
pub mod loop_gain;
pub mod margins;
pub mod poles;

pub use feedback::{blackman, feedback_reading, Blackman, FeedbackReading};
pub use loop_gain::{
    asymptotic_split, double_injection, return_ratio, return_ratios, BreakError, BreakPoint,
    LoopGain, Split,
};
pub use margins::{margins, Margins};
pub use poles::{poles, Pole, Poles, PolesError, DENSE_POLE_LIMIT};
