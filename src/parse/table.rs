//! Finding the table in delimited text. A solver log may open with a banner and
//! its echoed input, close with run statistics, and hold several runs, each with
//! its own header. The header is the last line of words immediately before a run
//! of numeric rows (blank lines, comments and rules may sit between); text lines
//! outside a table are reported in blocks as notes, not as skipped rows. Inside
//! a table, text lines are held until the next line decides: a row of the table
//! makes them skipped lines (with their line numbers); a new header followed by
//! rows makes them text between two tables. A headerless table is confirmed over
//! a few rows and its roles inferred from its first rows (`infer.rs`); those rows
//! are held back, never lost or read twice. Fed one line at a time; no I/O.

use super::current::Current;
use super::delimited::{self, LineKind, RowError};
use super::infer::{self, INFER_ROWS};
use super::roles;
use super::{Column, Delimiter, NamesFrom, RowSink, Schema, SegmentReason, SkipReason, header};

/// Rows with the same field count that make a headerless table without a header
/// line before them.
const CONFIRM_ROWS: usize = 3;

/// Text lines held inside a table before they are taken for text after it (a
/// table that has gone on with text this long has ended; memory stays bounded).
const MAX_HELD: usize = 1 << 20;

/// Text lines before a word line, inside a table, that make the word line a new
/// header even when it shares few names with the old one (a run summary and a
/// new banner sit between two runs; a single message line does not).
const TEXT_BEFORE_NEW_HEADER: usize = 2;

/// The last line of words, while only blanks, comments and rules follow it.
#[derive(Debug, Clone)]
struct Candidate {
    line: u64,
    text: Vec<u8>,
    /// Its index in `held` (inside a table).
    held_at: Option<usize>,
}

/// Text lines outside any table not yet reported.
#[derive(Debug, Clone, Copy)]
struct Block {
    first: u64,
    last: u64,
    lines: u64,
}

/// See the module documentation.
#[derive(Debug, Clone, Default)]
pub(super) struct Table {
    /// The delimiter the user forced, if any.
    forced: Option<Delimiter>,
    /// The delimiter of the table in force.
    delim: Option<Delimiter>,
    inside: bool,
    /// Text lines since the last row of the table in force.
    held: Vec<(u64, SkipReason)>,
    /// Step sizes declared by held lines (`timestep 0.002` between two runs):
    /// they apply once those lines turn out to be outside the table.
    held_steps: Vec<(u64, f64)>,
    block: Option<Block>,
    candidate: Option<Candidate>,
    /// Rows of a table awaiting confirmation: a headerless one, or one whose
    /// header names a different number of columns than its rows have.
    pending: Vec<(u64, Vec<f64>)>,
    /// The header of the pending rows, if they have one.
    pending_header: Option<(u64, Header)>,
    pending_delim: Option<Delimiter>,
    /// Body and line of the last comment before a table (a header may hide there).
    comment: Option<(u64, Vec<u8>)>,
    scratch: Vec<f64>,
}

/// What the reader passes for each line.
pub(super) struct Line<'a> {
    pub no: u64,
    /// As in the file (for aligning names to fields).
    pub raw: &'a [u8],
    /// Trimmed, non-empty, not a comment.
    pub text: &'a [u8],
}

impl Table {
    pub fn new(forced: Option<Delimiter>) -> Self {
        Self {
            forced,
            ..Self::default()
        }
    }

    /// A comment line's body: a header may hide there (`# time ke ie`).
    pub fn comment(&mut self, no: u64, body: &[u8]) {
        if !self.inside {
            self.comment = Some((no, body.to_vec()));
        }
    }

    /// The next line of delimited text; `values` is scratch for the row.
    pub fn line(
        &mut self,
        l: &Line,
        values: &mut Vec<f64>,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        let d = self
            .forced
            .or(self.delim)
            .unwrap_or_else(|| delimited::guess_delimiter(l.text));
        match delimited::parse_row(l.text, d, values) {
            Ok(()) => {
                if self.inside
                    && self.held.is_empty()
                    && self.candidate.is_none()
                    && values.len() == cur.width()
                {
                    cur.emit_row(l.no, values, sink);
                } else {
                    self.numeric(l, values, d, cur, sink);
                }
            }
            Err(RowError::NotANumber(field)) => self.text(l, d, field, cur, sink),
        }
    }

    /// End of input: a pending headerless table is taken as it is; held text
    /// and a lone word line are text outside the table.
    pub fn finish(&mut self, cur: &mut Current, sink: &mut dyn RowSink) {
        if !self.pending.is_empty() {
            self.establish_headerless(cur, sink);
        }
        self.held_to_block(cur);
        self.candidate_to_block();
        self.report_block(sink);
    }

    /// A numeric row that is not the plain next row of the table in force.
    fn numeric(
        &mut self,
        l: &Line,
        values: &[f64],
        d: Delimiter,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        let n = values.len();
        if self.inside {
            if let Some(c) = self.candidate.take()
                && let Some(cols) = self.new_header(&c, l, n, d, cur)
            {
                if let Some(i) = c.held_at {
                    self.held.truncate(i);
                }
                self.held_to_block(cur);
                self.report_block(sink);
                sink.segment(c.line, SegmentReason::NewHeader);
                self.start(c.line, cols, d, cur, sink);
                cur.emit_row(l.no, values, sink);
                return;
            }
            self.held_skipped(sink);
            cur.emit_row(l.no, values, sink);
            return;
        }
        if let Some(c) = self.candidate.take() {
            match self.header_for(&c, l, n, d) {
                Some(h) if h.mismatch.is_none() => {
                    self.report_block(sink);
                    self.start(c.line, h, d, cur, sink);
                    cur.emit_row(l.no, values, sink);
                    return;
                }
                // Names that do not match the fields: a header only if rows
                // follow.
                Some(h) => self.pending_header = Some((c.line, h)),
                None => self.add_to_block(c.line),
            }
        }
        if self.pending_delim.is_some_and(|p| p != d)
            || self.pending.first().is_some_and(|(_, r)| r.len() != n)
        {
            self.break_pending(cur, sink);
            if self.inside {
                return self.numeric(l, values, d, cur, sink);
            }
        }
        if self.pending.is_empty()
            && self.pending_header.is_none()
            && let Some((at, cols)) = self.comment_header(d, n)
        {
            self.report_block(sink);
            let schema = Schema {
                columns: cols,
                names_from: NamesFrom::CommentLine(at),
                ..Schema::default()
            };
            self.inside = true;
            self.delim = Some(d);
            cur.set_schema(l.no, schema, sink);
            cur.emit_row(l.no, values, sink);
            return;
        }
        self.pending.push((l.no, values.to_vec()));
        self.pending_delim = Some(d);
        let blown = values.iter().any(|v| !v.is_finite());
        let enough = if self.pending_header.is_some() {
            CONFIRM_ROWS
        } else {
            INFER_ROWS
        };
        if self.pending.len() >= enough || blown {
            self.establish_headerless(cur, sink);
        }
    }

    /// A line that is not all numbers.
    fn text(
        &mut self,
        l: &Line,
        d: Delimiter,
        field: usize,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        if !self.pending.is_empty() {
            self.break_pending(cur, sink);
        }
        let rule = delimited::is_rule(l.text);
        let kind = if rule {
            None
        } else {
            Some(delimited::classify(l.text, d, &mut self.scratch))
        };
        if self.inside {
            if let Some(LineKind::Mixed {
                first_is_number: true,
                fields,
            }) = kind
                && fields == cur.width()
            {
                // A damaged row of this table.
                self.held_skipped(sink);
                self.candidate = None;
                sink.skipped(l.no, SkipReason::NotANumber { field });
                return;
            }
            if self.held.len() >= MAX_HELD {
                self.held_to_block(cur);
                self.report_block(sink);
            }
            self.held.push((l.no, SkipReason::NotANumber { field }));
            if let Some(v) = declared_step(l.text) {
                self.held_steps.push((l.no, v));
            }
            match kind {
                Some(LineKind::Header) => {
                    self.candidate = Some(Candidate {
                        line: l.no,
                        text: l.raw.to_vec(),
                        held_at: Some(self.held.len() - 1),
                    });
                }
                None => {}
                _ => self.candidate = None,
            }
            return;
        }
        self.declaration(l, cur);
        match kind {
            Some(LineKind::Header) => {
                self.candidate_to_block();
                self.candidate = Some(Candidate {
                    line: l.no,
                    text: l.raw.to_vec(),
                    held_at: None,
                });
            }
            None => self.add_to_block(l.no),
            _ => {
                self.candidate_to_block();
                self.add_to_block(l.no);
            }
        }
    }

    /// A step size declared by a text line outside the table.
    fn declaration(&self, l: &Line, cur: &mut Current) {
        if let Some(v) = declared_step(l.text) {
            cur.declared.step_size = Some((l.no, v));
        }
    }

    /// Columns for a table whose first row is `l`, from the word line `c`
    /// before it: names as many as the fields, names aligned to the fields,
    /// names around a banner, or (with a note) nearly as many names.
    fn header_for(&self, c: &Candidate, l: &Line, n: usize, d: Delimiter) -> Option<Header> {
        let (text, latin1) = header::decode(&c.text);
        let mut notes = Vec::new();
        let mut cols = header::columns(&text, d);
        let mut mismatch = None;
        if cols.len() != n && d == Delimiter::Whitespace {
            if let Some((banner, note)) = header::banner_columns(&text, n) {
                cols = banner;
                notes.push(note);
            } else if let Some(aligned) = header::align_whitespace(&text, l.raw)
                && aligned.len() == n
            {
                cols = aligned;
            }
        }
        if cols.len() != n {
            let near = cols.len() >= 2 && 2 * cols.len() >= n && cols.len() <= 2 * n;
            if !near {
                return None;
            }
            mismatch = Some(cols.len());
            let mut fit: Vec<Column> = cols.into_iter().take(n).collect();
            fit.extend(generic(fit.len(), n));
            cols = fit;
        }
        Some(Header {
            cols,
            notes,
            latin1,
            mismatch,
        })
    }

    /// Like [`Table::header_for`], for a word line inside a table: it starts a
    /// new table when it shares at least half its names with the header in
    /// force, when the rows after it have another field count, or when it ends a
    /// block of text (a run summary and a new banner).
    fn new_header(
        &self,
        c: &Candidate,
        l: &Line,
        n: usize,
        d: Delimiter,
        cur: &Current,
    ) -> Option<Header> {
        let h = self.header_for(c, l, n, d)?;
        let old = cur
            .schema
            .as_ref()
            .map(|s| s.columns.as_slice())
            .unwrap_or(&[]);
        let text_before = c.held_at.unwrap_or(0);
        let fits = h.mismatch.is_none();
        let ok = shares_names(old, &h.cols)
            || (fits && n != cur.width())
            || (fits && text_before >= TEXT_BEFORE_NEW_HEADER);
        ok.then_some(h)
    }

    /// Start a table with the header `h` at line `at`.
    fn start(
        &mut self,
        at: u64,
        h: Header,
        d: Delimiter,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        if h.latin1 {
            sink.skipped(at, SkipReason::NonUtf8Header);
        }
        if let Some(names) = h.mismatch {
            sink.skipped(
                at,
                SkipReason::HeaderMismatch {
                    names,
                    fields: h.cols.len(),
                },
            );
        }
        let schema = Schema {
            columns: h.cols,
            names_from: NamesFrom::HeaderLine(at),
            notes: h.notes,
            ..Schema::default()
        };
        self.inside = true;
        self.delim = Some(d);
        self.comment = None;
        cur.set_schema(at, schema, sink);
    }

    /// The rows held back make a table: with their header if they have one,
    /// else headerless with roles inferred from them; set the schema, emit them.
    fn establish_headerless(&mut self, cur: &mut Current, sink: &mut dyn RowSink) {
        let rows = std::mem::take(&mut self.pending);
        let Some((first, row0)) = rows.first() else {
            return;
        };
        if let Some((at, h)) = self.pending_header.take() {
            self.report_block(sink);
            let d = self.pending_delim.take().unwrap_or(Delimiter::Whitespace);
            self.start(at, h, d, cur, sink);
            for (no, r) in &rows {
                cur.emit_row(*no, r, sink);
            }
            return;
        }
        let n = row0.len();
        let refs: Vec<&[f64]> = rows.iter().map(|(_, r)| r.as_slice()).collect();
        let inf = infer::headerless(&refs, cur.step_size());
        let schema = Schema {
            columns: generic(0, n),
            names_from: NamesFrom::Generic,
            inferred: inf.inferred,
            notes: inf.notes,
            ..Schema::default()
        };
        self.report_block(sink);
        self.inside = true;
        self.delim = self.pending_delim.take();
        self.comment = None;
        cur.set_schema(*first, schema, sink);
        for (no, r) in &rows {
            cur.emit_row(*no, r, sink);
        }
    }

    /// The run of pending rows was broken: enough of them make a table, fewer
    /// are text outside a table.
    fn break_pending(&mut self, cur: &mut Current, sink: &mut dyn RowSink) {
        if self.pending.len() >= CONFIRM_ROWS {
            self.establish_headerless(cur, sink);
        } else {
            self.drop_pending_to_block();
        }
    }

    fn drop_pending_to_block(&mut self) {
        if let Some((at, _)) = self.pending_header.take() {
            self.add_to_block(at);
        }
        for (no, _) in std::mem::take(&mut self.pending) {
            self.add_to_block(no);
        }
        self.pending_delim = None;
    }

    /// The last comment before the rows, when it names exactly `n` columns.
    fn comment_header(&mut self, d: Delimiter, n: usize) -> Option<(u64, Vec<Column>)> {
        let (at, text) = self.comment.take()?;
        if delimited::classify(&text, d, &mut self.scratch) != LineKind::Header {
            return None;
        }
        let cols = header::columns(&header::decode(&text).0, d);
        (cols.len() == n).then_some((at, cols))
    }

    /// Held text lines turn out to be inside the table: skipped, in order.
    fn held_skipped(&mut self, sink: &mut dyn RowSink) {
        self.candidate = None;
        self.held_steps.clear();
        for (no, why) in self.held.drain(..) {
            sink.skipped(no, why);
        }
    }

    /// Held text lines turn out to be after the table; the step sizes they
    /// declare are the file's from now on.
    fn held_to_block(&mut self, cur: &mut Current) {
        let kept = self.held.last().map_or(0, |(no, _)| *no);
        for (no, v) in self.held_steps.drain(..) {
            if no <= kept {
                cur.declared.step_size = Some((no, v));
            }
        }
        let held = std::mem::take(&mut self.held);
        for (no, _) in held {
            self.add_to_block(no);
        }
        self.candidate = None;
    }

    fn candidate_to_block(&mut self) {
        if let Some(c) = self.candidate.take()
            && c.held_at.is_none()
        {
            self.add_to_block(c.line);
        }
    }

    fn add_to_block(&mut self, no: u64) {
        match &mut self.block {
            Some(b) => {
                b.first = b.first.min(no);
                b.last = b.last.max(no);
                b.lines += 1;
            }
            None => {
                self.block = Some(Block {
                    first: no,
                    last: no,
                    lines: 1,
                })
            }
        }
    }

    fn report_block(&mut self, sink: &mut dyn RowSink) {
        if let Some(b) = self.block.take() {
            sink.skipped(
                b.first,
                SkipReason::OutsideTable {
                    first: b.first,
                    last: b.last,
                    lines: b.lines,
                },
            );
        }
    }
}

/// A header decided for a table.
#[derive(Debug, Clone)]
struct Header {
    cols: Vec<Column>,
    notes: Vec<String>,
    latin1: bool,
    /// Number of names when it differs from the number of fields.
    mismatch: Option<usize>,
}

/// The step size a text line declares (`timestep 0.005`), if any.
fn declared_step(text: &[u8]) -> Option<f64> {
    super::declare::step_size(&header::decode(text).0)
}

/// At least half of `new`'s names (and two or more) appear in `old`.
fn shares_names(old: &[Column], new: &[Column]) -> bool {
    let norm = |c: &Column| roles::normalize(&c.name);
    let known: Vec<String> = old.iter().map(norm).collect();
    let shared = new.iter().filter(|c| known.contains(&norm(c))).count();
    new.len() >= 2 && 2 * shared >= new.len()
}

/// Columns `c{from+1}..c{to}` for a file without (enough) header names.
pub(super) fn generic(from: usize, to: usize) -> Vec<Column> {
    (from..to)
        .map(|i| Column {
            name: format!("c{}", i + 1),
            unit: None,
        })
        .collect()
}
