//! Bytes → rows. A streaming, allocation-light reader for solver history files:
//! delimited text (comma, semicolon, tab, whitespace), JSON Lines, and free-form
//! log lines through a user regex. It is fed byte slices and never does I/O; it
//! reports rows, schemas, restarts (segments) and skipped lines to a [`RowSink`].

mod current;
pub mod declare;
pub mod delimited;
pub mod header;
pub mod infer;
pub mod jsonl;
mod kinds;
pub mod number;
pub mod pattern;
pub mod reader;
pub mod roles;
mod table;
mod unicode;
pub mod vocab;
pub mod xml;

pub use reader::Reader;

/// How fields of a delimited line are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    /// One or more blanks (spaces, tabs).
    Whitespace,
    /// A single byte: `,`, `;` or tab.
    Byte(u8),
}

/// The layout of the history file.
#[derive(Debug, Clone, Default)]
pub enum Format {
    /// Detect from the first lines: JSON Lines when the first one is an object,
    /// otherwise delimited text with the delimiter guessed.
    #[default]
    Auto,
    /// Delimited text with this delimiter.
    Delimited(Delimiter),
    /// One JSON object per line; numeric fields become columns.
    JsonLines,
    /// Free-form log lines; the named capture groups of this regex are the
    /// columns, lines that do not match are ignored.
    Pattern(regex::bytes::Regex),
}

/// Options of the reader.
#[derive(Debug, Clone)]
pub struct ParseOptions {
    pub format: Format,
    /// Lines longer than this are skipped and reported (default 1 MiB).
    pub max_line_bytes: usize,
    /// The solver's step size given by the user (`--step-size`, `input.step_size`),
    /// in the time column's units: it comes before one the file declares.
    pub step_size: Option<f64>,
}

impl Default for ParseOptions {
    fn default() -> Self {
        Self {
            format: Format::Auto,
            max_line_bytes: 1 << 20,
            step_size: None,
        }
    }
}

/// The solver's step size when no column holds it: given by the user, or
/// declared by a text line of the file. With a step counter and no time column
/// it gives the time (step × it); with a time column and no step counter, the
/// output stride (time per row ÷ it).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepSize {
    pub value: f64,
    pub from: StepFrom,
}

/// Where a [`StepSize`] came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StepFrom {
    /// `--step-size` or `input.step_size`.
    Given,
    /// A text line of the file (`timestep 0.005`), at this line.
    Line(u64),
}

impl std::fmt::Display for StepSize {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.from {
            StepFrom::Given => write!(f, "the step size {:e} given with --step-size", self.value),
            StepFrom::Line(l) => write!(f, "the step size {:e} declared at line {l}", self.value),
        }
    }
}

/// One column of a history file as named by its header (or `c1..cN`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Column {
    /// Name as written, without its unit (`Time [s]` → `Time`).
    pub name: String,
    /// Unit as written in the header, if any (`s`, `J`, `µm`).
    pub unit: Option<String>,
}

/// Where the names of a schema's columns came from.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum NamesFrom {
    /// No names: generic `c1..cN`.
    #[default]
    Generic,
    /// The header line at this 1-based line.
    HeaderLine(u64),
    /// A comment line at this 1-based line (`# time ke ie`).
    CommentLine(u64),
    /// Column descriptions in the markup of a recorder wrapped in XML, on these lines.
    Markup { first: u64, last: u64 },
    /// The keys of the first JSON object, at this line.
    JsonKeys(u64),
    /// The named groups of the user's pattern.
    Pattern,
}

impl std::fmt::Display for NamesFrom {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NamesFrom::Generic => f.write_str("no header: generic names c1..cN"),
            NamesFrom::HeaderLine(l) => write!(f, "header at line {l}"),
            NamesFrom::CommentLine(l) => write!(f, "header in the comment at line {l}"),
            NamesFrom::Markup { first, last } => {
                write!(f, "column descriptions in the markup, lines {first}–{last}")
            }
            NamesFrom::JsonKeys(l) => write!(f, "keys of the JSON object at line {l}"),
            NamesFrom::Pattern => f.write_str("named groups of the pattern"),
        }
    }
}

/// A role the reader inferred for a column from its values (a headerless file)
/// or from the markup that describes it; `--role` overrides it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Inferred {
    /// 0-based column index.
    pub column: usize,
    pub role: roles::Role,
    /// One sentence: why.
    pub reason: String,
}

/// The columns of the segment being read, and what the reader knows about them.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Schema {
    pub columns: Vec<Column>,
    /// Where the names came from.
    pub names_from: NamesFrom,
    /// Roles inferred from values or markup (name matching comes after them,
    /// the user's `--role` before them).
    pub inferred: Vec<Inferred>,
    /// What else the reader inferred or noticed, one sentence each (output
    /// stride, step size from time differences, a banner over some columns).
    pub notes: Vec<String>,
    /// Declarations read from text lines of the file, the latest of each kind.
    pub declared: Declared,
    /// The step size in force when no column holds it: the given one, else the
    /// file's latest declaration.
    pub step_size: Option<StepSize>,
}

/// What the file itself declares in comment or banner lines.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Declared {
    /// `# scheme: central difference` → the scheme text as written, and its line.
    pub scheme: Option<(u64, String)>,
    /// A step size given in a text line outside the table (`timestep 0.005`,
    /// `Time step : 0.005`, `dt = 1e-3`), and its line.
    pub step_size: Option<(u64, f64)>,
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
    /// The header names a different number of columns than the first row has; the
    /// columns were renamed to fit the rows (a note; the row is read).
    HeaderMismatch { names: usize, fields: usize },
    /// A block of text lines outside any table: a banner, an echoed input deck,
    /// run statistics (a note; not counted as skipped rows).
    OutsideTable { first: u64, last: u64, lines: u64 },
    /// What the byte-order mark said about the encoding (a note).
    Encoding(&'static str),
    /// Anything else, explained.
    Other(String),
}

impl SkipReason {
    /// True for notes that do not drop a row (they are not counted as skipped rows).
    pub fn is_note(&self) -> bool {
        matches!(
            self,
            SkipReason::NonUtf8Header
                | SkipReason::HeaderMismatch { .. }
                | SkipReason::OutsideTable { .. }
                | SkipReason::Encoding(_)
        )
    }
}

impl std::fmt::Display for SkipReason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SkipReason::FieldCount { expected, found } => {
                write!(f, "{found} fields where the header has {expected}")
            }
            SkipReason::TooLong { bytes } => write!(f, "line of {bytes} bytes is over the limit"),
            SkipReason::NotANumber { field } => write!(f, "field {} is not a number", field + 1),
            SkipReason::NonUtf8Header => write!(f, "header is not UTF-8; read as Latin-1"),
            SkipReason::HeaderMismatch { names, fields } => write!(
                f,
                "header names {names} columns but rows have {fields}; unnamed ones are c1..cN"
            ),
            SkipReason::OutsideTable { first, last, lines } => {
                write!(
                    f,
                    "text lines outside the table ({lines}), lines {first}–{last}"
                )
            }
            SkipReason::Encoding(s) => f.write_str(s),
            SkipReason::Other(s) => f.write_str(s),
        }
    }
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
