//! The schema in force and the rows of its segment, shared by every layout:
//! sets a schema (with the declarations read so far), emits rows, and starts a
//! new segment when the time column goes backwards.

use super::roles::{self, Role, RoleRules};
use super::{Declared, NamesFrom, RowSink, Schema, SegmentReason, SkipReason, StepFrom, StepSize};

/// See the module documentation.
#[derive(Debug, Clone)]
pub(super) struct Current {
    rules: RoleRules,
    pub schema: Option<Schema>,
    time_col: Option<usize>,
    last_time: Option<f64>,
    pub rows_in_segment: u64,
    /// Declarations read so far, attached to each schema set from now on.
    pub declared: Declared,
    /// The step size the user gave, before any the file declares.
    given_step: Option<f64>,
}

impl Current {
    pub fn new(rules: &RoleRules, given_step: Option<f64>) -> Self {
        Self {
            given_step,
            rules: rules.clone(),
            schema: None,
            time_col: None,
            last_time: None,
            rows_in_segment: 0,
            declared: Declared::default(),
        }
    }

    /// Number of columns of the schema in force (0 before the first).
    pub fn width(&self) -> usize {
        self.schema.as_ref().map_or(0, |s| s.columns.len())
    }

    /// The step size in force when no column holds it: the given one, else the
    /// file's latest declaration.
    pub fn step_size(&self) -> Option<StepSize> {
        let given = self.given_step.map(|value| StepSize {
            value,
            from: StepFrom::Given,
        });
        given.or(self.declared.step_size.map(|(at, value)| StepSize {
            value,
            from: StepFrom::Line(at),
        }))
    }

    /// The schema in force applies from `line` on.
    pub fn set_schema(&mut self, line: u64, mut schema: Schema, sink: &mut dyn RowSink) {
        schema.declared = self.declared.clone();
        schema.step_size = self.step_size();
        let roles = roles::assign(&schema, &self.rules);
        self.time_col = roles.find(Role::Time);
        let step_col = roles.find(Role::StepNumber);
        let dt_col = roles.find(Role::StepSize);
        // A headerless table's stride was said where it was inferred.
        let inferred = schema.names_from == NamesFrom::Generic;
        match (self.time_col, step_col, dt_col, schema.step_size) {
            (None, Some(step), _, Some(h)) => schema.notes.push(format!(
                "no time column: time is taken as {} × {dt:e}, {h} \
                 (exact while the step size stays the same)",
                schema.columns[step].name,
                dt = h.value
            )),
            (Some(_), None, None, Some(h)) if !inferred => schema.notes.push(format!(
                "no step counter: the output stride is the time per row ÷ {h}"
            )),
            (Some(_), None, None, None) if !inferred => schema.notes.push(
                "no step counter or step size: the output stride is unknown, so growth is \
                 per output row; --step-size gives the solver's step"
                    .to_owned(),
            ),
            _ => {}
        }
        self.last_time = None;
        self.rows_in_segment = 0;
        sink.schema(line, &schema);
        self.schema = Some(schema);
    }

    /// A row at `line`: skipped when its field count differs from the schema's;
    /// a time earlier than the previous row's starts a new segment.
    pub fn emit_row(&mut self, line: u64, values: &[f64], sink: &mut dyn RowSink) {
        let expected = self.width();
        if values.len() != expected {
            sink.skipped(
                line,
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
                    sink.segment(line, SegmentReason::TimeBackwards);
                    self.rows_in_segment = 0;
                }
                self.last_time = Some(t);
            }
        }
        self.rows_in_segment += 1;
        sink.row(line, values);
    }
}
