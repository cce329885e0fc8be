//! What the guard does with the pipeline's output, as a [`Sink`]: every alarm
//! and note goes to the event log; a triggering alarm starts the
//! [`Escalation`] — at once when it is live, and when it was already in the
//! file at start (the backlog) only once the run writes another row in that
//! same segment: an old crash before a restart, or a finished crashed file,
//! stops nothing. A checkpoint stops the reading once every action is taken.

use std::time::Instant;

use crate::act::{Escalation, EventLog};
use crate::alarm::Alarm;
use crate::parse::SegmentReason;
use crate::pipeline::sink::{Flow, Note, Progress, Sink};

/// The guard's sink; see the module documentation.
pub struct Reactor<'a> {
    pub escalation: &'a mut Escalation,
    pub log: &'a mut EventLog,
    /// Every alarm raised, in file order.
    pub alarms: Vec<Alarm>,
    caught_up: bool,
    /// A triggering alarm from the backlog, waiting for proof the segment goes on.
    held: Option<Alarm>,
}

impl<'a> Reactor<'a> {
    /// A reactor writing to `log` and acting through `escalation`.
    pub fn new(escalation: &'a mut Escalation, log: &'a mut EventLog) -> Self {
        Self {
            escalation,
            log,
            alarms: Vec::new(),
            caught_up: false,
            held: None,
        }
    }

    fn act(&mut self, a: &Alarm) {
        for r in self.escalation.on_alarm(a, Instant::now()) {
            self.log.action(&r);
        }
    }

    fn new_segment(&mut self) {
        if let Some(a) = self.held.take() {
            self.log.note(&format!(
                "the alarm at line {} belongs to a run that was restarted: no action",
                a.line
            ));
        }
    }

    /// The reading is over: say so when an alarm of the backlog was never acted on.
    pub fn finish(&mut self) {
        if let Some(a) = &self.held {
            self.log.note(&format!(
                "the alarm at line {} was in the file before guard started and the run wrote \
                 nothing after it: no action taken",
                a.line
            ));
        }
    }
}

impl Sink for Reactor<'_> {
    fn alarm(&mut self, a: &Alarm) {
        self.log.alarm(a);
        if self.escalation.triggered_by(a) {
            if self.caught_up {
                self.act(a);
            } else if self.held.is_none() {
                self.held = Some(a.clone());
            }
        }
        self.alarms.push(a.clone());
    }

    fn row(&mut self, _line: u64, _values: &[f64]) {
        if self.caught_up
            && let Some(a) = self.held.take()
        {
            self.log.note(&format!(
                "the run goes on writing after the alarm at line {} found when guard \
                 started: acting on it",
                a.line
            ));
            self.act(&a);
        }
    }

    fn segment(&mut self, _line: u64, _reason: SegmentReason) {
        self.new_segment();
    }

    fn note(&mut self, note: &Note) {
        match note {
            Note::Arrived { .. } => {}
            Note::Restarted(_) => {
                self.log.note(&note.describe());
                self.new_segment();
            }
            Note::CaughtUp { .. } => {
                self.caught_up = true;
                self.log.note(&note.describe());
                if let Some(a) = &self.held {
                    self.log.note(&format!(
                        "a {} alarm at line {} was already in the file: acting only if the run \
                         writes on in that segment",
                        serde_json::to_value(a.level)
                            .ok()
                            .and_then(|v| v.as_str().map(str::to_owned))
                            .unwrap_or_default(),
                        a.line
                    ));
                }
            }
            Note::Appeared | Note::Missing | Note::ReadError(_) | Note::Shrank { .. } => {
                self.log.note(&note.describe())
            }
        }
    }

    fn checkpoint(&mut self, _arrival_s: Option<f64>, _progress: &mut dyn Progress) -> Flow {
        if self.escalation.finished() {
            Flow::Stop
        } else {
            Flow::Go
        }
    }
}
