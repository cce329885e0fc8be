//! The streaming reader: cuts fed bytes into physical lines (holding back a
//! partial last line, dropping NUL bytes, skipping over-long lines), decides the
//! format once, reads headers and rows, and reports restarts (a new header after
//! data, time going backwards, truncation). Fed byte slices; never does I/O.

use memchr::memchr;

use super::delimited::{self, LineKind, RowError};
use super::roles::{self, Role, RoleRules};
use super::{Column, Delimiter, Format, ParseOptions, RowSink, Schema, SegmentReason, SkipReason};
use super::{header, jsonl, number::trim, pattern};

/// The layout in use once decided.
#[derive(Debug, Clone)]
enum Mode {
    Undecided,
    Delimited(Option<Delimiter>),
    Json,
    Pattern(regex::bytes::Regex),
}

/// Streaming history reader; see the module documentation.
#[derive(Debug)]
pub struct Reader {
    opts: ParseOptions,
    rules: RoleRules,
    mode: Mode,
    /// Bytes of an incomplete line.
    carry: Vec<u8>,
    /// Set while skipping an over-long line: bytes seen so far.
    discarding: Option<usize>,
    /// Complete physical lines consumed so far.
    line: u64,
    schema: Option<Schema>,
    /// JSON Lines: column names of the schema.
    names: Vec<String>,
    /// Text of the last comment line before the first schema (a header may hide there).
    last_comment: Option<Vec<u8>>,
    /// Text of the header in force, kept until the first row to align names.
    header_text: Option<String>,
    time_col: Option<usize>,
    last_time: Option<f64>,
    rows_in_segment: u64,
    values: Vec<f64>,
    scratch: Vec<f64>,
    clean: Vec<u8>,
}

impl Reader {
    /// A reader with these options; `rules` tells which column is time (for restarts).
    pub fn new(opts: &ParseOptions, rules: &RoleRules) -> Self {
        let mode = initial_mode(&opts.format);
        Self {
            opts: opts.clone(),
            rules: rules.clone(),
            mode,
            carry: Vec::new(),
            discarding: None,
            line: 0,
            schema: None,
            names: Vec::new(),
            last_comment: None,
            header_text: None,
            time_col: None,
            last_time: None,
            rows_in_segment: 0,
            values: Vec::new(),
            scratch: Vec::new(),
            clean: Vec::new(),
        }
    }

    /// Physical lines completed so far.
    pub fn lines(&self) -> u64 {
        self.line
    }

    /// The schema in force, if a header or first row has been read.
    pub fn schema(&self) -> Option<&Schema> {
        self.schema.as_ref()
    }

    /// Feed the next bytes. Only complete lines are read; the rest waits.
    pub fn feed(&mut self, bytes: &[u8], sink: &mut dyn RowSink) {
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

    /// End of input: a last line without a newline is read as a line.
    pub fn finish(&mut self, sink: &mut dyn RowSink) {
        if !self.carry.is_empty() || self.discarding.is_some() {
            self.end_held_line(sink);
        }
    }

    /// The file was truncated or replaced: drop the partial line, forget the
    /// schema and the detected layout, and start counting lines from 1 again.
    pub fn restart(&mut self, sink: &mut dyn RowSink) {
        self.carry.clear();
        self.discarding = None;
        self.line = 0;
        self.schema = None;
        self.names.clear();
        self.last_comment = None;
        self.time_col = None;
        self.last_time = None;
        self.rows_in_segment = 0;
        self.mode = initial_mode(&self.opts.format);
        sink.segment(1, SegmentReason::Truncated);
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
            if self.schema.is_none() {
                let body = t.iter().position(|b| !matches!(b, b'#' | b'%' | b'!'));
                self.last_comment = Some(body.map_or(Vec::new(), |i| t[i..].to_vec()));
            }
            return;
        }
        if matches!(self.mode, Mode::Undecided) {
            self.mode = if first == b'{' {
                Mode::Json
            } else {
                Mode::Delimited(None)
            };
        }
        match self.mode {
            Mode::Json => self.json_line(t, sink),
            Mode::Delimited(d) => {
                let d = d.unwrap_or_else(|| {
                    let g = delimited::guess_delimiter(t);
                    self.mode = Mode::Delimited(Some(g));
                    g
                });
                self.delimited_line(line, t, d, sink);
            }
            _ => {}
        }
    }

    /// One line of delimited text: `raw` as in the file, `t` trimmed.
    fn delimited_line(&mut self, raw: &[u8], t: &[u8], d: Delimiter, sink: &mut dyn RowSink) {
        let err = match delimited::parse_row(t, d, &mut self.values) {
            Ok(()) => {
                let values = std::mem::take(&mut self.values);
                self.data_row(raw, &values, d, sink);
                self.values = values;
                return;
            }
            Err(RowError::NotANumber(i)) => i,
        };
        match delimited::classify(t, d, &mut self.scratch) {
            LineKind::Header => {
                let (text, latin1) = header::decode(t);
                let cols = header::columns(&text, d);
                let plausible = match &self.schema {
                    None => true,
                    Some(s) => plausible_new_header(&s.columns, &cols),
                };
                if !plausible {
                    sink.skipped(self.line, SkipReason::NotANumber { field: err });
                    return;
                }
                if latin1 {
                    sink.skipped(self.line, SkipReason::NonUtf8Header);
                }
                if self.schema.is_some() && self.rows_in_segment > 0 {
                    sink.segment(self.line, SegmentReason::NewHeader);
                }
                self.set_schema(Schema { columns: cols }, sink);
                self.header_text = (d == Delimiter::Whitespace).then(|| header::decode(raw).0);
            }
            LineKind::Mixed | LineKind::Data => {
                if self.schema.is_none() && self.opts_delimiter().is_none() {
                    // Text before the header or the first row: guess again later.
                    self.mode = Mode::Delimited(None);
                }
                sink.skipped(self.line, SkipReason::NotANumber { field: err });
            }
        }
    }

    fn opts_delimiter(&self) -> Option<Delimiter> {
        match self.opts.format {
            Format::Delimited(d) => Some(d),
            _ => None,
        }
    }

    fn data_row(&mut self, line: &[u8], values: &[f64], d: Delimiter, sink: &mut dyn RowSink) {
        let n = values.len();
        let header_text = self.header_text.take();
        match &self.schema {
            None => {
                let cols = self
                    .comment_header(d, n)
                    .unwrap_or_else(|| generic_columns(0, n));
                self.set_schema(Schema { columns: cols }, sink);
            }
            Some(s)
                if s.columns.len() > n && self.rows_in_segment == 0 && header_text.is_some() =>
            {
                // Names with spaces in a whitespace-separated header: align by position.
                let aligned = header_text
                    .as_deref()
                    .and_then(|t| header::align_whitespace(t, line))
                    .filter(|c| c.len() == n);
                match aligned {
                    Some(cols) => self.set_schema(Schema { columns: cols }, sink),
                    None => self.rename_to_fit(n, sink),
                }
            }
            Some(s) if s.columns.len() != n && self.rows_in_segment == 0 => {
                self.rename_to_fit(n, sink);
            }
            _ => {}
        }
        self.emit_row(values, sink);
    }

    /// The header and the rows disagree: keep the names that exist, number the
    /// rest, and say so once.
    fn rename_to_fit(&mut self, n: usize, sink: &mut dyn RowSink) {
        let Some(s) = self.schema.as_ref() else {
            return;
        };
        let names = s.columns.len();
        let mut cols: Vec<Column> = s.columns.iter().take(n).cloned().collect();
        cols.extend(generic_columns(cols.len(), n));
        sink.skipped(self.line, SkipReason::HeaderMismatch { names, fields: n });
        self.set_schema(Schema { columns: cols }, sink);
    }

    fn emit_row(&mut self, values: &[f64], sink: &mut dyn RowSink) {
        let expected = self.schema.as_ref().map_or(0, |s| s.columns.len());
        if values.len() != expected {
            sink.skipped(
                self.line,
                SkipReason::FieldCount {
                    expected,
                    found: values.len(),
                },
            );
            return;
        }
        if let Some(tc) = self.time_col {
            let t = values[tc];
            if t.is_finite() {
                if let Some(prev) = self.last_time
                    && t < prev
                    && self.rows_in_segment > 0
                {
                    sink.segment(self.line, SegmentReason::TimeBackwards);
                    self.rows_in_segment = 0;
                }
                self.last_time = Some(t);
            }
        }
        self.rows_in_segment += 1;
        sink.row(self.line, values);
    }

    fn comment_header(&mut self, d: Delimiter, n: usize) -> Option<Vec<Column>> {
        let text = self.last_comment.take()?;
        if delimited::classify(&text, d, &mut self.scratch) != LineKind::Header {
            return None;
        }
        let cols = header::columns(&header::decode(&text).0, d);
        (cols.len() == n).then_some(cols)
    }

    fn set_schema(&mut self, schema: Schema, sink: &mut dyn RowSink) {
        self.time_col = roles::assign(&schema, &self.rules).find(Role::Time);
        self.last_time = None;
        self.rows_in_segment = 0;
        sink.schema(self.line, &schema);
        self.schema = Some(schema);
    }

    fn json_line(&mut self, t: &[u8], sink: &mut dyn RowSink) {
        let fields = match jsonl::parse_object(t) {
            Ok(f) => f,
            Err(e) => {
                sink.skipped(self.line, SkipReason::Other(e));
                return;
            }
        };
        if self.schema.is_none() {
            if fields.is_empty() {
                sink.skipped(
                    self.line,
                    SkipReason::Other("object has no numeric field".into()),
                );
                return;
            }
            self.names = fields.iter().map(|(k, _)| k.clone()).collect();
            let cols = self.names.iter().map(|k| header::split_unit(k)).collect();
            self.set_schema(Schema { columns: cols }, sink);
        }
        let mut values = std::mem::take(&mut self.values);
        match jsonl::values_for(&self.names, &fields, &mut values) {
            Ok(()) => self.emit_row(&values, sink),
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
                if self.schema.is_none() {
                    self.set_schema(
                        Schema {
                            columns: pattern::columns(re),
                        },
                        sink,
                    );
                }
                self.emit_row(&values, sink);
            }
        }
        self.values = values;
    }
}

/// A line of words after data rows is taken for a new header only when it looks
/// like one: at least half of its names shared with the current header, or, when
/// the columns had no names yet, as many names as there are columns. Otherwise (a
/// log message such as "restarting from checkpoint") it is skipped, and the
/// column names stay.
fn plausible_new_header(current: &[Column], new: &[Column]) -> bool {
    let unnamed = current
        .iter()
        .enumerate()
        .all(|(i, c)| c.name == format!("c{}", i + 1));
    if unnamed {
        return new.len() == current.len();
    }
    let norm = |c: &Column| roles::normalize(&c.name);
    let known: Vec<String> = current.iter().map(norm).collect();
    let shared = new.iter().filter(|c| known.contains(&norm(c))).count();
    new.len() >= 2 && 2 * shared >= new.len()
}

fn initial_mode(format: &Format) -> Mode {
    match format {
        Format::Auto => Mode::Undecided,
        Format::Delimited(d) => Mode::Delimited(Some(*d)),
        Format::JsonLines => Mode::Json,
        Format::Pattern(re) => Mode::Pattern(re.clone()),
    }
}

/// Columns `c{from+1}..c{to}` for a file without (enough) header names.
fn generic_columns(from: usize, to: usize) -> Vec<Column> {
    (from..to)
        .map(|i| Column {
            name: format!("c{}", i + 1),
            unit: None,
        })
        .collect()
}
