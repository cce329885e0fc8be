//! A scripted source for tests: plays a fixed list of events and quiet polls,
//! deterministically, with no file and no clock.

use std::collections::VecDeque;
use std::io;
use std::time::Duration;

use super::{Event, Source};

/// One step of a script.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Step {
    /// Deliver this event on the next poll.
    Event(Event),
    /// The next poll finds nothing new.
    Quiet,
    /// The next poll fails with this message.
    Fail(String),
}

/// A source that plays a script, then stays quiet forever.
#[derive(Debug, Clone, Default)]
pub struct Scripted {
    steps: VecDeque<Step>,
    /// How long `wait` really sleeps (default: not at all).
    pub wait_sleep: Duration,
    /// What [`Source::start_size`] answers: the bytes "already in the file"
    /// when following began (default: unknown).
    pub start_size: Option<u64>,
}

impl Scripted {
    /// A source that will play `steps` in order.
    pub fn new(steps: Vec<Step>) -> Self {
        Self {
            steps: steps.into(),
            wait_sleep: Duration::ZERO,
            start_size: None,
        }
    }

    /// Append more steps to the script.
    pub fn push(&mut self, step: Step) {
        self.steps.push_back(step);
    }

    /// True when the whole script has been played.
    pub fn finished(&self) -> bool {
        self.steps.is_empty()
    }
}

impl Source for Scripted {
    fn poll(&mut self) -> io::Result<Option<Event>> {
        match self.steps.pop_front() {
            Some(Step::Event(e)) => Ok(Some(e)),
            Some(Step::Quiet) | None => Ok(None),
            Some(Step::Fail(m)) => Err(io::Error::other(m)),
        }
    }

    fn ended(&self) -> bool {
        self.steps.is_empty()
    }

    fn start_size(&self) -> Option<u64> {
        self.start_size
    }

    fn wait(&mut self, max: Duration) {
        let d = self.wait_sleep.min(max);
        if !d.is_zero() {
            std::thread::sleep(d);
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn plays_steps_then_stays_quiet() {
        let mut s = Scripted::new(vec![
            Step::Event(Event::Missing),
            Step::Quiet,
            Step::Fail("disk gone".into()),
        ]);
        assert_eq!(s.poll().unwrap(), Some(Event::Missing));
        assert_eq!(s.poll().unwrap(), None);
        assert!(s.poll().is_err());
        assert!(s.finished());
        assert_eq!(s.poll().unwrap(), None);
    }
}
