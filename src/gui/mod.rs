//! The editor. `edit`, `history`, `value` and `recover` are plain Rust (they
//! build and test without iced); the window (`app` and friends) needs the
//! `gui` feature.

pub mod edit;
pub mod history;
pub mod value;
