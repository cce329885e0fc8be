//! Bytes → rows. A streaming, allocation-light reader for solver history files:
//! delimited text (comma, semicolon, tab, whitespace), JSON Lines, and free-form
//! log lines through a user regex. It is fed byte slices and never does I/O; it
//! reports rows, schemas, restarts (segments) and skipped lines to a [`RowSink`].

pub mod roles;

/// One column of a history file as named by its header (or `c1..cN`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Column {
    /// Name as written, without its unit (`Time [s]` → `Time`).
    pub name: String,
    /// Unit as written in the header, if any (`s`, `J`, `µm`).
    pub unit: Option<String>,
}

/// The columns of the segment being read.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Schema {
    pub columns: Vec<Column>,
}

/// Why a new segment (a restart) began.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SegmentReason {
    /// A header line appeared after data rows.
    NewHeader,
    /// The time column went backwards.
    TimeBackwards,
    /// The file was truncated or replaced while being followed.
    Truncated,
}

/// Why a line was not turned into a row.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SkipReason {
    /// The line has a different number of fields than the schema.
    FieldCount { expected: usize, found: usize },
    /// The line is longer than the reader's limit (1 MiB).
    TooLong { bytes: usize },
    /// A field could not be read as a number (and is not a known non-finite spelling).
    NotANumber { field: usize },
    /// The header line held bytes that are not UTF-8 (the row is not skipped; this is a note).
    NonUtf8Header,
    /// Anything else, explained.
    Other(String),
}

/// Receives what the reader finds, in file order.
pub trait RowSink {
    /// A schema applies from `line` on (the first one, and each new header).
    fn schema(&mut self, line: u64, schema: &Schema);
    /// A data row at 1-based physical `line`. Non-finite values are kept as such;
    /// a Fortran field of asterisks is [`field_overflow`].
    fn row(&mut self, line: u64, values: &[f64]);
    /// A new segment (restart) begins at `line`.
    fn segment(&mut self, line: u64, reason: SegmentReason);
    /// A line was skipped or noted; counted and reported, never fatal.
    fn skipped(&mut self, line: u64, reason: SkipReason);
}

/// Bit pattern of the quiet NaN that marks a field a program filled with asterisks
/// because the value did not fit its print width.
const FIELD_OVERFLOW_BITS: u64 = 0x7ff8_0000_0000_0a57;

/// The value that stands for a printed field that overflowed (`*******`).
pub fn field_overflow() -> f64 {
    f64::from_bits(FIELD_OVERFLOW_BITS)
}

/// True when `v` is the marker of an overflowed print field.
pub fn is_field_overflow(v: f64) -> bool {
    v.to_bits() == FIELD_OVERFLOW_BITS
}
