//! The event log: every alarm, action and note as one JSON object per line
//! (JSON Lines), and echoed as one line on stderr. The file is opened with
//! `O_APPEND` and each record, newline included, goes out in one `write()`, so
//! that many guards appending to one shared log never interleave inside a
//! line (POSIX appends each such write whole at the end of a regular file on a
//! local filesystem; network filesystems may not honour `O_APPEND` across
//! hosts). Nothing is buffered, so nothing is lost if the job is killed.

use std::fs::{File, OpenOptions};
use std::io::{self, Write};
use std::path::Path;
use std::time::SystemTime;

use serde::Serialize;

use super::{ActionReport, Outcome};
use crate::alarm::Alarm;
use crate::finding::Level;

/// One record of the event log.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
pub struct Record {
    /// Wall-clock time, UTC, ISO 8601 with milliseconds.
    pub clock: String,
    /// `alarm`, `action` or `note`.
    pub event: String,
    /// Level of the alarm (of the triggering alarm for an action).
    pub level: Option<Level>,
    /// Detector that raised the alarm.
    pub detector: Option<String>,
    /// 1-based line of the history file.
    pub line: Option<u64>,
    /// Simulated time at that line.
    pub sim_time: Option<f64>,
    /// One sentence.
    pub message: String,
    /// What was done (`touch PATH`, `signal TERM to 1234`, `run CMD`).
    pub action: Option<String>,
    /// `done`, `dry run`, `failed`, `refused`, `timed out`.
    pub outcome: Option<String>,
}

/// UTC date and time of `t` as `YYYY-MM-DDTHH:MM:SS.mmmZ`.
pub fn utc_clock(t: SystemTime) -> String {
    let since = t.duration_since(SystemTime::UNIX_EPOCH).unwrap_or_default();
    let secs = since.as_secs() as i64;
    let (days, sod) = (secs.div_euclid(86_400), secs.rem_euclid(86_400));
    // Civil date from days since 1970-01-01: H. Hinnant, "chrono-Compatible
    // Low-Level Date Algorithms" (2013), civil_from_days.
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}.{:03}Z",
        sod / 3600,
        sod / 60 % 60,
        sod % 60,
        since.subsec_millis()
    )
}

/// Writes records to an optional file and to stderr.
pub struct EventLog {
    file: Option<File>,
    stderr: bool,
    write_failed: bool,
}

impl EventLog {
    /// Append to `path` (created if needed) when given; echo on stderr when `stderr`.
    pub fn open(path: Option<&Path>, stderr: bool) -> io::Result<Self> {
        let file = match path {
            Some(p) => Some(
                OpenOptions::new()
                    .create(true)
                    .append(true)
                    .open(p)
                    .map_err(|e| {
                        io::Error::new(
                            e.kind(),
                            format!("cannot open event log '{}': {e}", p.display()),
                        )
                    })?,
            ),
            None => None,
        };
        Ok(Self {
            file,
            stderr,
            write_failed: false,
        })
    }

    /// Write one record (and its stderr line).
    pub fn write(&mut self, r: &Record) {
        if self.stderr {
            eprintln!("{}", stderr_line(r));
        }
        let Some(f) = self.file.as_mut() else {
            return;
        };
        let res = record_line(r).and_then(|line| f.write_all(line.as_bytes()));
        if let Err(e) = res
            && !self.write_failed
        {
            self.write_failed = true;
            eprintln!("rhoscope guard: cannot write the event log: {e}");
        }
    }

    /// Log an alarm.
    pub fn alarm(&mut self, a: &Alarm) {
        self.write(&Record {
            clock: utc_clock(SystemTime::now()),
            event: "alarm".into(),
            level: Some(a.level),
            detector: Some(a.detector.to_string()),
            line: Some(a.line),
            sim_time: a.time,
            message: a.message.clone(),
            action: None,
            outcome: None,
        });
    }

    /// Log an action and its outcome.
    pub fn action(&mut self, r: &ActionReport) {
        self.write(&Record {
            clock: utc_clock(SystemTime::now()),
            event: "action".into(),
            level: Some(r.alarm.level),
            detector: Some(r.alarm.detector.to_string()),
            line: Some(r.alarm.line),
            sim_time: r.alarm.time,
            message: r.outcome.detail().to_string(),
            action: Some(r.action.clone()),
            outcome: Some(r.outcome.word().to_string()),
        });
    }

    /// Log a note (start, end, file events).
    pub fn note(&mut self, message: &str) {
        self.write(&Record {
            clock: utc_clock(SystemTime::now()),
            event: "note".into(),
            level: None,
            detector: None,
            line: None,
            sim_time: None,
            message: message.to_string(),
            action: None,
            outcome: None,
        });
    }
}

/// A record as one JSON line, newline included: the whole of one `write()`.
pub fn record_line(r: &Record) -> io::Result<String> {
    let mut line = serde_json::to_string(r).map_err(io::Error::other)?;
    line.push('\n');
    Ok(line)
}

/// The one-line stderr form of a record.
pub fn stderr_line(r: &Record) -> String {
    let clock = r.clock.get(11..19).unwrap_or(&r.clock);
    let mut s = format!("rhoscope guard {clock}Z");
    match r.event.as_str() {
        "alarm" => {
            let level = r.level.unwrap_or(Level::Ok).word();
            s.push_str(&format!(
                " {level} [{}]",
                r.detector.as_deref().unwrap_or("")
            ));
            if let Some(l) = r.line {
                s.push_str(&format!(" line {l}"));
            }
            if let Some(t) = r.sim_time {
                s.push_str(&format!(" t={t}"));
            }
            s.push_str(&format!(": {}", r.message));
        }
        "action" => {
            s.push_str(&format!(
                " action {}: {}",
                r.action.as_deref().unwrap_or(""),
                r.outcome.as_deref().unwrap_or("")
            ));
            if !r.message.is_empty() {
                s.push_str(&format!(" ({})", r.message));
            }
        }
        _ => s.push_str(&format!(": {}", r.message)),
    }
    s
}

impl Outcome {
    /// One word for the log's `outcome` field.
    pub fn word(&self) -> &'static str {
        match self {
            Outcome::Done(_) => "done",
            Outcome::DryRun(_) => "dry run",
            Outcome::Started(_) => "started",
            Outcome::Failed(_) => "failed",
            Outcome::Refused(_) => "refused",
            Outcome::TimedOut(_) => "timed out",
        }
    }

    /// The explanation that goes with it.
    pub fn detail(&self) -> &str {
        match self {
            Outcome::Done(s)
            | Outcome::DryRun(s)
            | Outcome::Started(s)
            | Outcome::Failed(s)
            | Outcome::Refused(s)
            | Outcome::TimedOut(s) => s,
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::time::Duration;

    #[test]
    fn clock_matches_known_dates() {
        // Reference: GNU coreutils date(1), `date -u -d @951868800` prints
        // 2000-03-01 00:00:00 UTC and `date -u -d @1796168706` 2026-12-01 23:45:06 UTC.
        let t = SystemTime::UNIX_EPOCH + Duration::from_secs(951_868_800);
        assert_eq!(utc_clock(t), "2000-03-01T00:00:00.000Z");
        let t = SystemTime::UNIX_EPOCH + Duration::from_millis(1_796_168_706_789);
        assert_eq!(utc_clock(t), "2026-12-01T23:45:06.789Z");
        assert_eq!(
            utc_clock(SystemTime::UNIX_EPOCH),
            "1970-01-01T00:00:00.000Z"
        );
    }

    #[test]
    fn records_are_one_json_object_per_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("events.jsonl");
        let mut log = EventLog::open(Some(&p), false).unwrap();
        log.note("started");
        log.note("second");
        let text = std::fs::read_to_string(&p).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 2);
        let r: Record = serde_json::from_str(lines[0]).unwrap();
        assert_eq!(r.event, "note");
        assert_eq!(r.message, "started");
        assert!(stderr_line(&r).contains("started"));
    }
}
