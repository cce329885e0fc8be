//! Messages and the one function that changes the dashboard state. Keys, data
//! batches, ticks, resizes, signals and action reports all arrive as [`Msg`];
//! [`AppState::update`] applies them and returns the [`Effect`]s the event loop
//! must carry out (quit, take the stop actions). No terminal, no clock, no files.

use crate::alarm::Alarm;
use crate::finding::Evidence;
use crate::finding::Level;
use crate::parse::SegmentReason;
use crate::parse::roles::Role;
use crate::readout::Standing;

use super::batch::{Batch, Item};
use super::state::{AppState, Dialog, Event, MAX_ZOOM, StopState};

/// A key, independent of the terminal library.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Key {
    Char(char),
    Enter,
    Esc,
    Tab,
    BackTab,
    /// Ctrl-C (raw mode turns it into a key).
    Interrupt,
    Other,
}

/// Everything that can happen to the dashboard.
#[derive(Debug, Clone)]
pub enum Msg {
    Key(Key),
    /// New rows, alarms and estimates from the followed file.
    Data(Box<Batch>),
    /// Periodic tick with the monotonic clock (seconds).
    Tick {
        now_s: f64,
    },
    /// The terminal changed size.
    Resize,
    /// A note from the follower: waiting for the file, truncated, read error.
    Source(String),
    /// The stop actions finished: success and one line per step taken.
    StopReport {
        ok: bool,
        report: Vec<String>,
    },
    /// A termination signal arrived (name, e.g. `SIGHUP`).
    Signal(&'static str),
    /// The terminal's input ended or failed (the terminal closed).
    HangUp,
    /// A thread the dashboard needs (data, stop actions) failed: leave.
    Fatal(String),
}

/// What the event loop must do after an update.
#[derive(Debug, Clone, PartialEq)]
pub enum Effect {
    Quit,
    /// The user confirmed the stop: hand this (critical) alarm to the armed
    /// actions, which fire at most once. (Alarms raised while armed for
    /// alarms reach the actions from the data thread, not through here.)
    Stop(Box<Alarm>),
}

/// Detector name of the alarm that stands for a stop confirmed by hand.
pub const BY_HAND: &str = "dashboard";

/// Every key of the dashboard and what it does, for the help overlay and the
/// footer. Keep in step with [`AppState::update`].
pub const KEYS: &[(&str, &str)] = &[
    ("q, Ctrl-C", "quit (the run is not touched)"),
    (
        "space, p",
        "pause the display (rows are still read and alarms still raised)",
    ),
    ("+ / -", "zoom the time window in / out (each step ×4)"),
    ("0", "show the whole run"),
    ("Tab, s / Shift-Tab, S", "next / previous probe signal"),
    ("a", "acknowledge the alarm in the banner"),
    ("X", "stop the run: shows what will be done and asks y/N"),
    ("?, h", "this help (any key closes it)"),
];

/// Rows before skipped-line events are no longer listed one by one.
const SKIP_EVENTS: u64 = 20;

impl AppState {
    /// Apply one message; returns what the loop must do.
    pub fn update(&mut self, msg: Msg) -> Vec<Effect> {
        let mut fx = Vec::new();
        match msg {
            Msg::Key(k) => self.key(k, &mut fx),
            Msg::Data(b) => self.ingest(&b),
            Msg::Tick { now_s } => {
                self.now_s = now_s;
                // Countdowns in the header move with the clock.
                self.dirty = true;
            }
            Msg::Resize => self.dirty = true,
            Msg::Source(text) => {
                if self.note.as_deref() != Some(text.as_str()) {
                    self.note = Some(text.clone());
                    self.push_event(Event {
                        level: Level::Ok,
                        source: "file".into(),
                        line: None,
                        time: None,
                        text,
                    });
                }
            }
            Msg::StopReport { ok, report } => {
                for line in &report {
                    self.push_event(Event {
                        level: if ok { Level::Warning } else { Level::Critical },
                        source: "stop".into(),
                        line: None,
                        time: None,
                        text: line.clone(),
                    });
                }
                // Reports of an escalation accumulate: later steps come after a grace period.
                self.stop = match std::mem::replace(&mut self.stop, StopState::Idle) {
                    StopState::Done {
                        ok: was_ok,
                        report: mut all,
                    } => {
                        all.extend(report);
                        StopState::Done {
                            ok: was_ok && ok,
                            report: all,
                        }
                    }
                    _ => StopState::Done { ok, report },
                };
                self.dirty = true;
            }
            Msg::Signal(name) => {
                self.note = Some(format!("{name} received: leaving"));
                self.quit = true;
                self.leave_all = true;
                fx.push(Effect::Quit);
            }
            Msg::Fatal(text) => {
                self.note = Some(format!("{text}; leaving"));
                self.fatal = Some(text);
                self.quit = true;
                self.leave_all = true;
                fx.push(Effect::Quit);
            }
            Msg::HangUp => {
                self.note = Some("the terminal closed: leaving".into());
                self.quit = true;
                self.leave_all = true;
                fx.push(Effect::Quit);
            }
        }
        fx
    }

    fn key(&mut self, k: Key, fx: &mut Vec<Effect>) {
        self.dirty = true;
        if k == Key::Interrupt {
            self.quit = true;
            fx.push(Effect::Quit);
            return;
        }
        match self.dialog {
            Some(Dialog::ConfirmStop) => {
                self.dialog = None;
                let asked = !self.config.actions.is_empty() && self.stop == StopState::Idle;
                if !asked {
                    // The dialog only said there is nothing to do.
                } else if matches!(k, Key::Char('y') | Key::Char('Y')) {
                    self.request_stop(fx);
                } else {
                    self.push_event(Event {
                        level: Level::Ok,
                        source: "you".into(),
                        line: None,
                        time: None,
                        text: "stop cancelled; nothing was done".into(),
                    });
                }
                return;
            }
            Some(Dialog::Help) => {
                // Any key closes the help; q still quits.
                self.dialog = None;
                if k == Key::Char('q') {
                    self.quit = true;
                    fx.push(Effect::Quit);
                }
                return;
            }
            None => {}
        }
        match k {
            Key::Char('q') => {
                self.quit = true;
                fx.push(Effect::Quit);
            }
            Key::Esc if self.esc_quits => {
                self.quit = true;
                fx.push(Effect::Quit);
            }
            Key::Char('?') | Key::Char('h') => self.dialog = Some(Dialog::Help),
            Key::Char(' ') | Key::Char('p') => {
                self.view.paused_at = match self.view.paused_at {
                    Some(_) => None,
                    None => Some(self.table.last_x().unwrap_or(0.0)),
                };
            }
            Key::Char('+') | Key::Char('=') => {
                self.view.zoom = (self.view.zoom + 1).min(MAX_ZOOM);
            }
            Key::Char('-') | Key::Char('_') => self.view.zoom = self.view.zoom.saturating_sub(1),
            Key::Char('0') => self.view.zoom = 0,
            Key::Tab | Key::Char('s') => self.view.probe = self.view.probe.wrapping_add(1),
            Key::BackTab | Key::Char('S') => {
                let n = self.probe_columns().len().max(1);
                self.view.probe = (self.view.probe % n + n - 1) % n;
            }
            Key::Char('a') => {
                if let Some(b) = self.banner.take() {
                    self.push_event(Event {
                        level: Level::Ok,
                        source: "you".into(),
                        line: b.line,
                        time: b.time,
                        text: format!("acknowledged: {}", b.text),
                    });
                }
            }
            Key::Char('X') => self.dialog = Some(Dialog::ConfirmStop),
            _ => self.dirty = false,
        }
    }

    /// Hand a by-hand stop to the armed actions once; later requests only
    /// leave a note.
    fn request_stop(&mut self, fx: &mut Vec<Effect>) {
        let note = |text: &str| Event {
            level: Level::Warning,
            source: "stop".into(),
            line: None,
            time: None,
            text: text.into(),
        };
        if self.config.actions.is_empty() {
            self.push_event(note("no stop action is armed; nothing was done"));
            return;
        }
        if self.stop != StopState::Idle {
            self.push_event(note(
                "the stop actions were already taken once; not repeated",
            ));
            return;
        }
        let reason = "stop confirmed by hand from the dashboard".to_string();
        self.stop = StopState::Requested {
            reason: reason.clone(),
        };
        self.push_event(note(&format!("taking the stop actions: {reason}")));
        fx.push(Effect::Stop(Box::new(Alarm {
            level: Level::Critical,
            detector: BY_HAND,
            line: self.last_line,
            time: self.time_now(),
            message: reason,
            evidence: Evidence::default(),
        })));
    }

    fn ingest(&mut self, b: &Batch) {
        self.dirty = true;
        let mut pending_break = false;
        for item in &b.items {
            match item {
                Item::Schema { schema, roles, .. } => {
                    let names: Vec<String> =
                        schema.columns.iter().map(|c| c.name.clone()).collect();
                    if names != self.table.names() {
                        self.table = crate::history::Table::with_sizes(
                            names,
                            self.config.retention_rows,
                            crate::history::DEFAULT_ENVELOPE_BUCKETS,
                        );
                    }
                    self.schema = schema.clone();
                    self.roles = roles.clone();
                    self.speed.clear();
                }
                Item::Row { line, start, len } => {
                    let v = b.row_values(*start, *len);
                    let x = self.row_x(*line, v);
                    if pending_break {
                        self.table.mark_break(x);
                        self.derived.mark_break(x);
                        pending_break = false;
                    }
                    self.table.push(x, v);
                    self.rows += 1;
                    self.last_line = *line;
                }
                Item::Segment { line, reason } => {
                    self.segments += 1;
                    self.readouts.segment();
                    self.level = Level::Ok;
                    pending_break = true;
                    self.push_event(Event {
                        level: Level::Ok,
                        source: "file".into(),
                        line: Some(*line),
                        time: None,
                        text: format!("new segment: {}", segment_words(*reason)),
                    });
                }
                Item::Skipped { line, reason } => {
                    let word = if reason.is_note() {
                        "note"
                    } else {
                        self.skipped += 1;
                        "line skipped"
                    };
                    if self.skipped <= SKIP_EVENTS {
                        self.push_event(Event {
                            level: Level::Ok,
                            source: "file".into(),
                            line: Some(*line),
                            time: None,
                            text: format!("{word}: {reason}"),
                        });
                    }
                }
                Item::Alarm(a) => {
                    let ev = Event {
                        level: a.level,
                        source: a.detector.to_string(),
                        line: Some(a.line),
                        time: a.time,
                        text: a.message.clone(),
                    };
                    self.push_event(ev.clone());
                    self.level = self.level.max(a.level);
                    self.readouts.alarm(a);
                    if a.level > Level::Ok
                        && self.banner.as_ref().is_none_or(|x| a.level >= x.level)
                    {
                        self.banner = Some(ev);
                    }
                }
            }
        }
        if let Some(s) = &b.status {
            self.scheme.clone_from(&b.scheme);
            self.readouts.status(s);
            if let Some(x) = self.table.last_x() {
                let r = &self.readouts;
                let nan = f64::NAN;
                let rho = r.growth_per_step().unwrap_or(nan);
                let (confirmed, approx) = match r.growth {
                    Standing::Confirmed => (rho, nan),
                    _ => (nan, rho),
                };
                self.derived.push(
                    x,
                    &[confirmed, approx, r.evidence.balance_error.unwrap_or(nan)],
                );
            }
        }
        if b.undrawn_rows > 0 {
            self.rows += b.undrawn_rows;
            self.push_event(Event {
                level: Level::Warning,
                source: "screen".into(),
                line: None,
                time: None,
                text: format!(
                    "{} rows read while the screen was held up are not drawn; \
                     the detectors saw every one",
                    b.undrawn_rows
                ),
            });
        }
        let had_rows = b.undrawn_rows > 0 || b.items.iter().any(|i| matches!(i, Item::Row { .. }));
        if had_rows {
            // Rows are flowing: a note about finding or waiting for the file is stale.
            self.note = None;
        }
        if let Some(w) = b.arrival_s {
            self.now_s = self.now_s.max(w);
            if had_rows {
                self.last_row_s = Some(w);
            }
            let step_col = self.col(Role::StepNumber);
            let steps = step_col.and_then(|c| self.table.last(c));
            let (count, rows) = match steps {
                Some(s) => (s, false),
                None => (self.rows as f64, true),
            };
            let t = self.time_now();
            self.speed.mark(w, count, t, rows);
        }
    }

    /// x of a row: its simulated time, or its line without a time column.
    fn row_x(&self, line: u64, v: &[f64]) -> f64 {
        match self.col(Role::Time).and_then(|c| v.get(c)) {
            Some(t) if t.is_finite() => *t,
            // A non-finite time keeps the row just after the previous one.
            Some(_) => self.table.last_x().unwrap_or(0.0),
            None => line as f64,
        }
    }
}

fn segment_words(r: SegmentReason) -> &'static str {
    match r {
        SegmentReason::NewHeader => "a header line after data (restart)",
        SegmentReason::TimeBackwards => "time went backwards (restart)",
        SegmentReason::Truncated => "the file was truncated or replaced",
    }
}
