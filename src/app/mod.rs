//! The dashboard's state machine and event loop. [`AppState`] holds everything
//! shown; [`AppState::update`] is the only place it changes, fed [`Msg`]s from
//! one channel (keys, file data, ticks, signals) by the loop in [`run`], which
//! redraws only when something changed and at most at a fixed frame rate.

pub mod batch;
pub mod feed;
pub mod fleet;
pub mod run;
pub mod speed;
pub mod state;
pub mod stopper;
pub mod update;
pub mod worker;

pub use batch::{Batch, Item};
pub use state::{AppState, Config, Dialog, Event, StopState, View};
pub use update::{Effect, Key, Msg};
