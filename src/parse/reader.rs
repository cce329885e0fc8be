//! The streaming reader: decodes a byte-order mark, cuts fed bytes into physical
//! lines (holding back a partial last line, dropping NUL bytes, skipping
//! over-long lines), reads comment lines (a header hidden there, a declared
//! scheme or step size), decides the layout once, and hands each line to it:
//! delimited text (`table.rs`), an XML recorder (`xml.rs`), JSON Lines or the
//! user's pattern. Fed byte slices; never does I/O.

use memchr::memchr;

use super::current::Current;
use super::roles::RoleRules;
use super::table::{Line, Table};
use super::unicode::{Encoding, Sniffed};
use super::xml::Xml;
use super::{Format, NamesFrom, ParseOptions, RowSink, Schema, SegmentReason, SkipReason};
use super::{declare, header, jsonl, number::trim, pattern};

/// The layout in use once decided.
#[derive(Debug, Clone)]
enum Mode {
    Undecided,
    Delimited,
    Xml,
    Json,
    Pattern(regex::bytes::Regex),
}

/// Streaming history reader; see the module documentation.
#[derive(Debug)]
pub struct Reader {
    opts: ParseOptions,
    rules: RoleRules,
    mode: Mode,
    encoding: Encoding,
    /// Reused buffer for decoded UTF-16 input.
    decoded: Vec<u8>,
    /// Bytes of an incomplete line.
    carry: Vec<u8>,
    /// Set while skipping an over-long line: bytes seen so far.
    discarding: Option<usize>,
    /// Complete physical lines consumed so far.
    line: u64,
    cur: Current,
    table: Table,
    xml: Xml,
    /// JSON Lines: column names of the schema.
    names: Vec<String>,
    values: Vec<f64>,
    clean: Vec<u8>,
}

impl Reader {
    /// A reader with these options; `rules` tells which column is time (for restarts).
    pub fn new(opts: &ParseOptions, rules: &RoleRules) -> Self {
        Self {
            opts: opts.clone(),
            rules: rules.clone(),
            mode: initial_mode(&opts.format),
            encoding: Encoding::start(),
            decoded: Vec::new(),
            carry: Vec::new(),
            discarding: None,
            line: 0,
            cur: Current::new(rules, opts.step_size),
            table: Table::new(forced_delimiter(&opts.format)),
            xml: Xml::default(),
            names: Vec::new(),
            values: Vec::new(),
            clean: Vec::new(),
        }
    }

    /// Physical lines completed so far.
    pub fn lines(&self) -> u64 {
        self.line
    }

    /// Why nothing of the input is read, when its encoding is refused.
    pub fn refused(&self) -> Option<&'static str> {
        matches!(self.encoding, Encoding::Refused).then_some(super::unicode::UTF32_REFUSED)
    }

    /// The schema in force, if a header or first row has been read.
    pub fn schema(&self) -> Option<&Schema> {
        self.cur.schema.as_ref()
    }

    /// Feed the next bytes. Only complete lines are read; the rest waits.
    pub fn feed(&mut self, bytes: &[u8], sink: &mut dyn RowSink) {
        match &self.encoding {
            Encoding::Bytes => self.feed_text(bytes, sink),
            Encoding::Sniffing(_) => self.sniff(bytes, false, sink),
            _ => {
                let mut buf = std::mem::take(&mut self.decoded);
                buf.clear();
                self.encoding.decode(bytes, &mut buf);
                self.feed_text(&buf, sink);
                self.decoded = buf;
            }
        }
    }

    /// End of input: a last line without a newline is read as a line, and what
    /// was held back to decide (a headerless table's first rows, text after a
    /// table) is settled.
    pub fn finish(&mut self, sink: &mut dyn RowSink) {
        if matches!(self.encoding, Encoding::Sniffing(_)) {
            self.sniff(&[], true, sink);
        }
        if !self.carry.is_empty() || self.discarding.is_some() {
            self.end_held_line(sink);
        }
        if matches!(self.mode, Mode::Delimited) {
            self.table.finish(&mut self.cur, sink);
        }
    }

    /// The file was truncated or replaced: drop the partial line and what was
    /// held back, forget the schema and the detected layout, and start counting
    /// lines from 1 again.
    pub fn restart(&mut self, sink: &mut dyn RowSink) {
        let (opts, rules) = (self.opts.clone(), self.rules.clone());
        *self = Reader::new(&opts, &rules);
        sink.segment(1, SegmentReason::Truncated);
    }

    fn sniff(&mut self, bytes: &[u8], end: bool, sink: &mut dyn RowSink) {
        if let Sniffed::Decided { rest, note } = self.encoding.sniff(bytes, end) {
            if let Some(note) = note {
                sink.skipped(1, SkipReason::Encoding(note));
            }
            self.feed_text(&rest, sink);
        }
    }

    fn feed_text(&mut self, bytes: &[u8], sink: &mut dyn RowSink) {
        let mut rest = bytes;
        if !self.carry.is_empty() || self.discarding.is_some() {
            match memchr(b'\n', rest) {
                None => {
                    self.hold(rest);
                    return;
                }
                Some(i) => {
                    self.hold(&rest[..i]);
                    rest = &rest[i + 1..];
                    self.end_held_line(sink);
                }
            }
        }
        let has_nul = memchr(0, rest).is_some();
        while let Some(i) = memchr(b'\n', rest) {
            self.line += 1;
            self.process(&rest[..i], has_nul, sink);
            rest = &rest[i + 1..];
        }
        self.hold(rest);
    }

    fn hold(&mut self, part: &[u8]) {
        if part.is_empty() {
            return;
        }
        if let Some(n) = &mut self.discarding {
            *n += part.len();
            return;
        }
        let total = self.carry.len() + part.len();
        if total > self.opts.max_line_bytes {
            self.discarding = Some(total);
            self.carry.clear();
            self.carry.shrink_to(64 * 1024);
        } else {
            self.carry.extend_from_slice(part);
        }
    }

    fn end_held_line(&mut self, sink: &mut dyn RowSink) {
        self.line += 1;
        if let Some(bytes) = self.discarding.take() {
            sink.skipped(self.line, SkipReason::TooLong { bytes });
            return;
        }
        let line = std::mem::take(&mut self.carry);
        self.process(&line, true, sink);
        self.carry = line;
        self.carry.clear();
    }

    fn process(&mut self, line: &[u8], maybe_nul: bool, sink: &mut dyn RowSink) {
        if line.len() > self.opts.max_line_bytes {
            sink.skipped(self.line, SkipReason::TooLong { bytes: line.len() });
            return;
        }
        if maybe_nul && memchr(0, line).is_some() {
            let mut clean = std::mem::take(&mut self.clean);
            clean.clear();
            clean.extend(line.iter().copied().filter(|&b| b != 0));
            self.process_clean(&clean, sink);
            self.clean = clean;
        } else {
            self.process_clean(line, sink);
        }
    }

    fn process_clean(&mut self, line: &[u8], sink: &mut dyn RowSink) {
        if matches!(self.mode, Mode::Pattern(_)) {
            // Borrow the regex out of `self` for the line (cloning it per line
            // would build a fresh match cache each time).
            let mode = std::mem::replace(&mut self.mode, Mode::Undecided);
            if let Mode::Pattern(re) = &mode {
                self.pattern_line(re, line, sink);
            }
            self.mode = mode;
            return;
        }
        let t = trim(line);
        let Some(&first) = t.first() else { return };
        if matches!(first, b'#' | b'%' | b'!') {
            self.comment(t, sink);
            return;
        }
        if matches!(self.mode, Mode::Undecided) {
            self.mode = match first {
                b'{' => Mode::Json,
                b'<' => Mode::Xml,
                _ => Mode::Delimited,
            };
        }
        let no = self.line;
        match self.mode {
            Mode::Delimited => {
                let l = Line {
                    no,
                    raw: line,
                    text: t,
                };
                self.table.line(&l, &mut self.values, &mut self.cur, sink);
            }
            Mode::Xml => self.xml.line(no, t, &mut self.values, &mut self.cur, sink),
            Mode::Json => self.json_line(t, sink),
            _ => {}
        }
    }

    /// A comment line: a scheme or step size it declares, and (for delimited
    /// text) a header it may hold.
    fn comment(&mut self, t: &[u8], sink: &mut dyn RowSink) {
        let at = t
            .iter()
            .position(|b| !matches!(b, b'#' | b'%' | b'!'))
            .unwrap_or(t.len());
        let body = trim(&t[at..]);
        let (text, _) = header::decode(body);
        let mut declared = false;
        if let Some(scheme) = declare::scheme(&text) {
            self.cur.declared.scheme = Some((self.line, scheme.to_owned()));
            declared = true;
        }
        if let Some(dt) = declare::step_size(&text) {
            self.cur.declared.step_size = Some((self.line, dt));
            declared = true;
        }
        if declared
            && self.cur.rows_in_segment == 0
            && let Some(schema) = self.cur.schema.take()
        {
            // No row read under this schema yet: it takes the declaration now.
            self.cur.set_schema(self.line, schema, sink);
        }
        if matches!(self.mode, Mode::Undecided | Mode::Delimited) {
            self.table.comment(self.line, body);
        }
    }

    fn json_line(&mut self, t: &[u8], sink: &mut dyn RowSink) {
        let fields = match jsonl::parse_object(t) {
            Ok(f) => f,
            Err(e) => {
                sink.skipped(self.line, SkipReason::Other(e));
                return;
            }
        };
        if self.cur.schema.is_none() {
            if fields.is_empty() {
                sink.skipped(
                    self.line,
                    SkipReason::Other("object has no numeric field".into()),
                );
                return;
            }
            self.names = fields.iter().map(|(k, _)| k.clone()).collect();
            let schema = Schema {
                columns: self.names.iter().map(|k| header::split_unit(k)).collect(),
                names_from: NamesFrom::JsonKeys(self.line),
                ..Schema::default()
            };
            self.cur.set_schema(self.line, schema, sink);
        }
        let mut values = std::mem::take(&mut self.values);
        match jsonl::values_for(&self.names, &fields, &mut values) {
            Ok(()) => self.cur.emit_row(self.line, &values, sink),
            Err(name) => sink.skipped(
                self.line,
                SkipReason::Other(format!("field \"{name}\" is missing")),
            ),
        }
        self.values = values;
    }

    fn pattern_line(&mut self, re: &regex::bytes::Regex, line: &[u8], sink: &mut dyn RowSink) {
        let mut values = std::mem::take(&mut self.values);
        match pattern::read(re, line, &mut values) {
            pattern::Match::NoMatch => {}
            pattern::Match::Bad(field) => sink.skipped(self.line, SkipReason::NotANumber { field }),
            pattern::Match::Row => {
                if self.cur.schema.is_none() {
                    let schema = Schema {
                        columns: pattern::columns(re),
                        names_from: NamesFrom::Pattern,
                        ..Schema::default()
                    };
                    self.cur.set_schema(self.line, schema, sink);
                }
                self.cur.emit_row(self.line, &values, sink);
            }
        }
        self.values = values;
    }
}

fn initial_mode(format: &Format) -> Mode {
    match format {
        Format::Auto => Mode::Undecided,
        Format::Delimited(_) => Mode::Delimited,
        Format::JsonLines => Mode::Json,
        Format::Pattern(re) => Mode::Pattern(re.clone()),
    }
}

fn forced_delimiter(format: &Format) -> Option<super::Delimiter> {
    match format {
        Format::Delimited(d) => Some(*d),
        _ => None,
    }
}
