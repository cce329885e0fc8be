//! A run as the generator records it, before it is written: the columns
//! with their meaning, and the items in file order (rows with what the run
//! knows about them, text lines, repeated headers, the solver's stop
//! message). The label is computed from this record and the written lines.

/// What a column holds; used by the label rule, never written to the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Simulated time.
    Time,
    /// Step counter (written as an integer).
    Step,
    /// Time step.
    Dt,
    /// Kinetic energy.
    Kinetic,
    /// Stored energy: strain, elastic, potential, contact.
    Internal,
    /// Energy dissipated so far: damping, plastic, friction.
    Dissipated,
    /// Work done by external loads so far.
    External,
    /// A total the solver prints (not used by the balance rule).
    Total,
    /// Any other quantity: displacements, forces, temperature, iterations.
    Other,
}

/// One column of the file.
#[derive(Debug, Clone, PartialEq)]
pub struct Column {
    /// Name as written in the header (if any).
    pub name: String,
    /// What it holds.
    pub role: Role,
}

/// One data row and what the run knows about it.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// Values in column order.
    pub values: Vec<f64>,
    /// A step since the previous row had the scheme's one-step map past its
    /// stability limit (spectral radius above 1 + 1e-9).
    pub past_limit: bool,
    /// The step in use at this row.
    pub dt: f64,
    /// Work done by a declared thermostat so far (0 without one).
    pub thermostat_work: f64,
}

/// One item of the file, in order.
#[derive(Debug, Clone, PartialEq)]
pub enum Item {
    /// A data row.
    Row(Row),
    /// A verbatim text line (banner, echo, comment).
    Text(String),
    /// The header, written in the layout's style (nothing when headerless).
    Header,
    /// The solver's own error message, after which it writes nothing.
    Stop(String),
}

/// The record of one run.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Trace {
    /// Columns, in order.
    pub columns: Vec<Column>,
    /// Items, in file order.
    pub items: Vec<Item>,
    /// The file declares a thermostat whose work it does not write.
    pub thermostat: bool,
}

impl Trace {
    /// An empty trace with these columns.
    pub fn new(columns: Vec<Column>) -> Trace {
        Trace {
            columns,
            items: Vec::new(),
            thermostat: false,
        }
    }

    /// Append a text line.
    pub fn text(&mut self, line: impl Into<String>) {
        self.items.push(Item::Text(line.into()));
    }

    /// Append the header.
    pub fn header(&mut self) {
        self.items.push(Item::Header);
    }

    /// Append the solver's stop message.
    pub fn stop(&mut self, message: impl Into<String>) {
        self.items.push(Item::Stop(message.into()));
    }

    /// Append a row.
    pub fn row(&mut self, row: Row) {
        self.items.push(Item::Row(row));
    }

    /// The data rows, in order.
    pub fn rows(&self) -> impl Iterator<Item = &Row> {
        self.items.iter().filter_map(|i| match i {
            Item::Row(r) => Some(r),
            _ => None,
        })
    }

    /// Number of data rows.
    pub fn row_count(&self) -> usize {
        self.rows().count()
    }

    /// Index of the first column with this role.
    pub fn column_of(&self, role: Role) -> Option<usize> {
        self.columns.iter().position(|c| c.role == role)
    }
}

/// A row value that a writer cannot print as a finite number, or one so
/// large that the run has overflowed in all but name.
pub fn overflowed(v: f64) -> bool {
    !v.is_finite() || v.abs() >= 1e300
}
