//! The integration-test crate: one binary, one module per area.
#![allow(clippy::unwrap_used)]

mod batch_job;
mod blind_catalogue;
mod blind_integrators;
mod demo_sim;
mod detect_checks;
mod detect_eval;
mod evaluate_labels;
mod event_log;
mod external;
mod file_faults;
mod fleet_cli;
mod fuzz_props;
mod guard;
mod hostile_paths;
mod limits_cli;
mod metrics_abuse;
mod parse_cli;
mod parse_formats;
mod parse_props;
mod parse_shapes;
mod properties;
mod real_solvers;
mod report_plot;
mod scan_cli;
mod shell_cli;
mod tmux_support;
mod ui_actions;
mod ui_dashboard;
mod ui_demo;
mod ui_extremes;
mod ui_hangup;
mod ui_readouts;
mod ui_support;
mod ui_tmux;
mod ui_tmux_fleet;
