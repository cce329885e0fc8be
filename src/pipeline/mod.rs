//! The one path of the data: bytes → rows → detectors → alarms. A
//! [`Pipeline`] owns the [`Reader`], the detector [`Engine`] of the current
//! segment and the [`AlarmBook`]; everything it learns goes to a [`Sink`]
//! ([`sink`]). [`drive`] holds the only loops that feed it — over a plain file
//! (`scan`, `evaluate`) and over a followed file's events (`guard`, the
//! dashboard's data thread, the fleet) — so they all give the same alarms,
//! line for line, on the same bytes; [`split`] reads large runs of bytes on a
//! second thread with the same result. The pipeline itself does no I/O and
//! reads no clock: arrival instants come in as data.

pub mod drive;
pub mod sink;
pub mod split;

use crate::alarm::AlarmBook;
use crate::detect::{DetectSettings, Engine, Sample, Status};
use crate::finding::Finding;
use crate::parse::roles::{RoleMap, RoleRules, assign};
use crate::parse::{Reader, RowSink, Schema, SegmentReason, SkipReason};
use crate::settings::Settings;

use sink::{Progress, Sink};

/// Reader + detectors + alarm book. See the module documentation.
pub struct Pipeline {
    reader: Reader,
    state: State,
}

struct State {
    detect: DetectSettings,
    /// The scheme from `--scheme` or the configuration (it comes before the file's).
    settings_scheme: Option<crate::schemes::Scheme>,
    /// Which scheme is used, and why, in words.
    scheme_note: Option<String>,
    rules: RoleRules,
    schema: Schema,
    roles: RoleMap,
    engine: Option<Engine>,
    book: AlarmBook,
    findings: Vec<(&'static str, Finding)>,
    rows: u64,
    skipped: u64,
    empty: Status,
}

struct Adapter<'a> {
    state: &'a mut State,
    out: &'a mut dyn Sink,
    arrival_s: Option<f64>,
}

impl RowSink for Adapter<'_> {
    fn schema(&mut self, line: u64, schema: &Schema) {
        let s = &mut *self.state;
        s.schema = schema.clone();
        s.roles = assign(schema, &s.rules);
        let (scheme, note) =
            crate::schemes::names::choose(s.settings_scheme, schema.declared.scheme.as_ref());
        s.detect.scheme = scheme;
        s.scheme_note = note;
        s.engine = Some(Engine::new(&s.schema, &s.roles, &s.detect));
        s.book.reset();
        self.out.schema(line, &s.schema, &s.roles);
    }

    fn row(&mut self, line: u64, values: &[f64]) {
        let s = &mut *self.state;
        s.rows += 1;
        self.out.row(line, values);
        let Some(engine) = s.engine.as_mut() else {
            return;
        };
        let sample = Sample {
            line,
            values,
            arrival_s: self.arrival_s,
        };
        engine.feed(&sample, &mut s.findings);
        for (detector, f) in s.findings.drain(..) {
            if let Some(a) = s.book.take(detector, &f) {
                self.out.alarm(&a);
            }
        }
    }

    fn segment(&mut self, line: u64, reason: SegmentReason) {
        let s = &mut *self.state;
        if s.engine.is_some() {
            s.engine = Some(Engine::new(&s.schema, &s.roles, &s.detect));
        }
        s.book.reset();
        self.out.segment(line, reason);
    }

    fn skipped(&mut self, line: u64, reason: SkipReason) {
        if !reason.is_note() {
            self.state.skipped += 1;
        }
        self.out.skipped(line, &reason);
    }
}

impl State {
    fn status(&mut self) -> &Status {
        match self.engine.as_mut() {
            Some(e) => e.status(),
            None => &self.empty,
        }
    }
}

impl Pipeline {
    /// A pipeline reading with these settings.
    pub fn new(settings: &Settings) -> Pipeline {
        Pipeline {
            reader: Reader::new(&settings.parse, &settings.roles),
            state: State {
                detect: settings.detect.clone(),
                settings_scheme: settings.detect.scheme,
                scheme_note: None,
                rules: settings.roles.clone(),
                schema: Schema::default(),
                roles: RoleMap::default(),
                engine: None,
                book: AlarmBook::default(),
                findings: Vec::new(),
                rows: 0,
                skipped: 0,
                empty: Status::default(),
            },
        }
    }

    /// Feed the next bytes of the file; `arrival_s` = monotonic seconds when following live.
    pub fn feed(&mut self, bytes: &[u8], arrival_s: Option<f64>, out: &mut dyn Sink) {
        let mut a = Adapter {
            state: &mut self.state,
            out,
            arrival_s,
        };
        self.reader.feed(bytes, &mut a);
    }

    /// End of input (scan): a last line without newline is read as a row.
    pub fn finish(&mut self, out: &mut dyn Sink) {
        let mut a = Adapter {
            state: &mut self.state,
            out,
            arrival_s: None,
        };
        self.reader.finish(&mut a);
    }

    /// The followed file was truncated or replaced: drop any partial line, start a new segment.
    pub fn restart(&mut self, out: &mut dyn Sink) {
        let mut a = Adapter {
            state: &mut self.state,
            out,
            arrival_s: None,
        };
        self.reader.restart(&mut a);
        self.state.engine = None;
    }

    /// Latest detector estimates (for the dashboard).
    pub fn status(&mut self) -> &Status {
        self.state.status()
    }

    /// Which integration scheme the detectors use and where it came from
    /// (`--scheme` and the configuration before a `# scheme:` line of the file).
    pub fn scheme_note(&self) -> Option<&str> {
        self.state.scheme_note.as_deref()
    }

    /// Data rows read so far.
    pub fn rows(&self) -> u64 {
        self.state.rows
    }

    /// Lines skipped so far (notes such as a Latin-1 header are not counted).
    pub fn skipped(&self) -> u64 {
        self.state.skipped
    }

    /// Physical lines completed so far.
    pub fn lines(&self) -> u64 {
        self.reader.lines()
    }

    /// Why no data row came out of `bytes` bytes of input, in words (for the
    /// error of a command that needs rows): an empty file, a refused encoding,
    /// no table, or a header without rows, and how many lines were skipped.
    pub fn no_data_reason(&self, bytes: u64) -> String {
        let what = if bytes == 0 {
            "the file is empty".to_owned()
        } else if let Some(why) = self.reader.refused() {
            why.to_owned()
        } else if self.state.schema.columns.is_empty() {
            format!("no header or data row in {} lines", self.lines())
        } else {
            format!("a header but no data row in {} lines", self.lines())
        };
        let skipped = if self.skipped() > 0 {
            format!(" ({} lines skipped as unreadable)", self.skipped())
        } else {
            String::new()
        };
        format!("no data row: {what}{skipped}")
    }

    /// The schema of the current segment (empty before the first header or row).
    pub fn schema(&self) -> &Schema {
        &self.state.schema
    }

    /// The roles of the current schema's columns.
    pub fn roles(&self) -> &RoleMap {
        &self.state.roles
    }
}

impl Progress for Pipeline {
    fn status(&mut self) -> &Status {
        Pipeline::status(self)
    }
    fn rows(&self) -> u64 {
        Pipeline::rows(self)
    }
    fn lines(&self) -> u64 {
        Pipeline::lines(self)
    }
    fn skipped(&self) -> u64 {
        Pipeline::skipped(self)
    }
    fn scheme_note(&self) -> Option<&str> {
        Pipeline::scheme_note(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::alarm::Alarm;
    use crate::finding::Level;

    #[test]
    fn alarms_are_the_same_however_the_bytes_arrive() {
        let text = b"# demo\ntime,ke\n0,1\n0.1,2\n0.2,nan\n0.3,nan\n";
        let whole = {
            let mut p = Pipeline::new(&Settings::default());
            let mut out: Vec<Alarm> = Vec::new();
            p.feed(text, None, &mut out);
            p.finish(&mut out);
            assert_eq!(p.rows(), 4);
            out
        };
        let mut p = Pipeline::new(&Settings::default());
        let mut out: Vec<Alarm> = Vec::new();
        for b in text.chunks(1) {
            p.feed(b, Some(0.0), &mut out);
        }
        p.finish(&mut out);
        assert_eq!(whole.len(), 1);
        assert_eq!(whole[0].level, Level::Critical);
        assert_eq!(whole[0].line, 5);
        assert_eq!(out, whole);
    }

    #[test]
    fn restart_resets_the_segment() {
        let mut p = Pipeline::new(&Settings::default());
        let mut out: Vec<Alarm> = Vec::new();
        p.feed(b"t x\n0 1\n1 nan\n", None, &mut out);
        p.restart(&mut out);
        p.feed(b"t x\n0 1\n1 inf\n", None, &mut out);
        assert_eq!(out.len(), 2);
        assert_eq!(out[1].line, 3);
    }
}
