//! rhoscope follows the time-history file that a running transient solver writes,
//! estimates the effective amplification of its time integration from successive
//! states, checks the energy balance and the step size, forecasts overflow, and
//! warns (or stops the run, as the user chose) before cluster hours are wasted.
//!
//! Data flows one way: bytes → rows ([`parse`]) → detectors ([`detect`]) →
//! alarms ([`alarm`]) → report, guard actions or dashboard.

pub mod act;
pub mod alarm;
pub mod app;
pub mod blind;
pub mod cli;
pub mod commands;
pub mod demo;
pub mod detect;
pub mod envelope;
pub mod evaluate;
pub mod finding;
pub mod fleet;
pub mod glob;
pub mod guard;
pub mod history;
pub mod limits;
pub mod metrics;
pub mod outfile;
pub mod parse;
pub mod pipeline;
pub mod readout;
pub mod report;
pub mod report_plot;
pub mod scale;
pub mod scan;
pub mod schemes;
pub mod settings;
pub mod source;
pub mod tui;
pub mod ui;
