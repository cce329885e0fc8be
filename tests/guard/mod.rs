//! `rhoscope guard` and its parts, with real processes: a writer child that
//! follows a script of lines and stops when the stop file appears, the guard
//! binary beside it, and the file manipulated under it.

mod actions;
mod contract;
mod files;
mod parity;
mod support;
