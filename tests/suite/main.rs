//! Every integration test in one binary (one link instead of one per file:
//! that matters on two cores and in CI). One module per concern; the shared
//! helpers are the `common` (circuits by net names), `cli_common` (running the
//! built command), `ss_common` (small-signal set-up) and `scene_common`
//! (scene checks) modules.
//!
//! Run one concern: `cargo test --release --test suite dc_reference`.
//!
//! invariant: every module names the source of each check beside it
//! (`source:`, `common practice`, `from memory:`, `invariant:`).

mod cli_common;
mod common;
mod scene_common;
mod ss_common;

mod architecture;

mod blocks_compound;
mod blocks_diff_pair;
mod blocks_mirror;
mod blocks_push_pull;
mod cascode_estimate;
mod cli;
mod dc_cli;
mod dc_invariants;
mod dc_reference;
mod design_cli;
mod design_fet;
mod design_grid;
mod design_low_noise;
mod design_mos;
mod design_yield;
mod distortion_layer;
mod eseries;
mod export_cli;
mod fet_noise;
mod fet_parts;
mod fet_spread;
mod fet_stages;
mod fet_time;
mod fit_cli;
mod fuzz_loader;
#[cfg(feature = "gui")]
mod gui_simulator;
mod hardening_engine;
mod hardening_output;
mod hardening_output_readme;
mod hardening_output_render;
mod hardening_property;
mod knee_current;
mod layers;
mod layout_drawing;
mod layout_editor;
mod layout_round_trip;
mod loader;
mod long_chain_local;
mod long_chain_paths;
mod netlist;
mod noise_cli;
mod noise_invariants;
mod noise_reference;
mod preferred_cli;
mod render;
mod report;
mod report_browser;
mod scene_geometry;
mod schema;
mod small_signal_cli;
mod small_signal_figures;
mod small_signal_response;
mod small_signal_stages;
mod small_signal_two_port;
mod spread_circuits;
mod spread_closed_form;
mod stability_cli;
mod stability_feedback;
mod stability_loops;
mod stability_spread;
mod stability_time;
mod steady_shooting;
mod transient_cli;
mod transient_invariants;
mod transient_reference;
mod trust_editor;
mod trust_mutation;
mod trust_output;
mod trust_printed;
mod trust_scale;
mod trust_spread;
