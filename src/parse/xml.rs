//! Recorders wrapped in XML: a declaration and elements describing each column
//! come first, then a data element holding whitespace-separated rows, then the
//! closing markup. The layout read here is the one structural codes write for a
//! node or element recorder in XML (the OpenSees `-xml` recorder, as written by
//! `NodeRecorder::initialize`: a `TimeOutput` element holding
//! `<ResponseType>time</ResponseType>`, one `NodeOutput nodeTag="9" coord1=…`
//! per node holding one `ResponseType` per recorded value (`D1`, `V2`, …), then
//! `<Data>`); element recorders nest `GaussPoint`, section and material elements
//! the same way.
//!
//! Each `ResponseType` leaf, in document order, is a column, named from the
//! identifying attributes of the elements around it and its own text:
//! `node 9 D1`, `element 3 gauss point 2 P`. The time output is recognised.
//! The markup is parsed (with quick-xml) once the first numeric row shows where
//! it ends, so a file that is still being written is read as its rows come;
//! rows are read line by line, and incomplete markup after them is ignored.

use quick_xml::events::{BytesStart, Event};

use super::current::Current;
use super::delimited;
use super::roles::Role;
use super::table::generic;
use super::{Delimiter, Inferred, NamesFrom, RowSink, Schema, SkipReason, header};

/// Markup kept while waiting for the data element (a recorder's description of
/// its columns is far smaller; past this the columns get generic names).
const MAX_MARKUP_BYTES: usize = 16 << 20;

/// State of a file read as an XML recorder.
#[derive(Debug, Clone, Default)]
pub(super) struct Xml {
    /// Markup lines since the last data element.
    markup: Vec<u8>,
    first_line: u64,
    last_line: u64,
    in_data: bool,
    /// The markup outgrew [`MAX_MARKUP_BYTES`].
    overflow: bool,
}

impl Xml {
    /// The next line: `text` trimmed and non-empty.
    pub fn line(
        &mut self,
        no: u64,
        text: &[u8],
        values: &mut Vec<f64>,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        if self.in_data {
            // A row, possibly followed by the closing tag on the same line.
            let (row, rest) = match memchr::memchr(b'<', text) {
                Some(i) => (&text[..i], Some(&text[i..])),
                None => (text, None),
            };
            let row = super::number::trim(row);
            if !row.is_empty() {
                self.row(no, row, values, cur, sink);
            }
            if let Some(markup) = rest {
                self.in_data = false;
                self.add_markup(no, markup);
            }
            return;
        }
        // Markup, possibly followed by the first row on the same line.
        let (markup, row) = match text.iter().rposition(|&b| b == b'>') {
            Some(i) if text[0] == b'<' => (&text[..=i], super::number::trim(&text[i + 1..])),
            _ => (&text[..0], text),
        };
        if !markup.is_empty() {
            self.add_markup(no, markup);
        }
        if row.is_empty() {
            return;
        }
        if delimited::parse_row(row, Delimiter::Whitespace, values).is_ok() {
            self.start_data(no, values.len(), cur, sink);
            cur.emit_row(no, values, sink);
        } else {
            // Text outside the data element (markup split across lines, stray words).
            self.add_markup(no, text);
        }
    }

    fn add_markup(&mut self, no: u64, text: &[u8]) {
        if self.markup.is_empty() {
            self.first_line = no;
        }
        self.last_line = no;
        if self.markup.len() + text.len() > MAX_MARKUP_BYTES {
            self.overflow = true;
            self.markup.clear();
            return;
        }
        self.markup.extend_from_slice(text);
        self.markup.push(b'\n');
    }

    fn row(
        &mut self,
        no: u64,
        row: &[u8],
        values: &mut Vec<f64>,
        cur: &mut Current,
        sink: &mut dyn RowSink,
    ) {
        match delimited::parse_row(row, Delimiter::Whitespace, values) {
            Ok(()) => cur.emit_row(no, values, sink),
            Err(delimited::RowError::NotANumber(field)) => {
                sink.skipped(no, SkipReason::NotANumber { field })
            }
        }
    }

    /// The data element begins: name the columns from the markup before it.
    fn start_data(&mut self, no: u64, n: usize, cur: &mut Current, sink: &mut dyn RowSink) {
        self.in_data = true;
        let described = if self.overflow {
            Vec::new()
        } else {
            describe(&String::from_utf8_lossy(&self.markup))
        };
        let mut schema = Schema {
            names_from: NamesFrom::Markup {
                first: self.first_line,
                last: self.last_line,
            },
            ..Schema::default()
        };
        for (i, d) in described.iter().enumerate().take(n) {
            schema.columns.push(header::split_unit(&d.name));
            if d.is_time {
                schema.inferred.push(Inferred {
                    column: i,
                    role: Role::Time,
                    reason: "the markup describes it as the time output".to_owned(),
                });
            }
        }
        if described.len() != n {
            let have = schema.columns.len();
            schema.columns.extend(generic(have, n));
            schema.notes.push(if described.is_empty() {
                "the markup describes no column: generic names".to_owned()
            } else {
                format!(
                    "the markup describes {} columns but the rows have {n}: unnamed ones are c1..cN",
                    described.len()
                )
            });
        }
        if cur.schema.is_some() && cur.rows_in_segment > 0 {
            sink.segment(self.first_line, super::SegmentReason::NewHeader);
        }
        self.markup.clear();
        self.overflow = false;
        cur.set_schema(no, schema, sink);
    }
}

/// One column as the markup describes it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Described {
    pub name: String,
    pub is_time: bool,
}

/// Columns described by recorder markup, in document order: each
/// `ResponseType` leaf, named from the identifying attributes of its enclosing
/// elements. Markup that ends early (a file still being written) gives the
/// columns described so far.
pub fn describe(markup: &str) -> Vec<Described> {
    let mut reader = quick_xml::Reader::from_str(markup);
    let mut stack: Vec<Option<String>> = Vec::new();
    let mut in_response = false;
    let mut time_output = 0usize;
    let mut out = Vec::new();
    loop {
        match reader.read_event() {
            Ok(Event::Start(e)) => {
                let local = e.local_name().as_ref().to_owned();
                if local == "ResponseType" {
                    in_response = true;
                } else {
                    if local == "TimeOutput" {
                        time_output += 1;
                    }
                    stack.push(label(&e));
                }
            }
            Ok(Event::End(e)) => {
                if e.local_name().as_ref() == "ResponseType" {
                    in_response = false;
                } else {
                    if e.local_name().as_ref() == "TimeOutput" {
                        time_output = time_output.saturating_sub(1);
                    }
                    stack.pop();
                }
            }
            Ok(Event::Text(t)) if in_response => {
                let what = t.as_ref().trim();
                let is_time = time_output > 0 || what.eq_ignore_ascii_case("time");
                let mut parts: Vec<&str> = stack.iter().flatten().map(String::as_str).collect();
                parts.push(what);
                let name = if is_time {
                    "time".to_owned()
                } else {
                    parts.join(" ")
                };
                out.push(Described { name, is_time });
            }
            Ok(Event::Eof) | Err(_) => break,
            Ok(_) => {}
        }
    }
    out
}

/// `NodeOutput nodeTag="9"` → `node 9`; `GaussPoint number="2"` → `gauss point 2`;
/// an element without an identifying attribute adds nothing.
fn label(e: &BytesStart) -> Option<String> {
    let id = e.attributes().flatten().find_map(|a| {
        let key = a.key.local_name();
        let key = key.as_ref();
        let identifying = key.ends_with("Tag") || matches!(key, "tag" | "id" | "number");
        identifying.then(|| a.value.trim().to_owned())
    })?;
    let local = e.local_name();
    let kind = local.as_ref().trim_end_matches("Output");
    Some(format!("{} {id}", words(kind)))
}

/// `GaussPoint` → `gauss point`; `NdMaterial` → `nd material`.
fn words(camel: &str) -> String {
    let mut s = String::new();
    for (i, c) in camel.chars().enumerate() {
        if c.is_uppercase() && i > 0 && !s.ends_with(' ') {
            let prev_upper = camel.chars().nth(i - 1).is_some_and(char::is_uppercase);
            if !prev_upper {
                s.push(' ');
            }
        }
        s.extend(c.to_lowercase());
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn node_and_time_columns_are_named() {
        let markup = r#"<?xml version="1.0" encoding="UTF-8" ?>
<OpenSees>
  <TimeOutput>
    <ResponseType>time</ResponseType>
  </TimeOutput>
  <NodeOutput nodeTag="9" coord1="1.5" coord2="0" coord3="0">
    <ResponseType>D1</ResponseType>
    <ResponseType>D2</ResponseType>
  </NodeOutput>
  <ElementOutput eleTag="3" classType="4" nodes="2 9">
    <GaussPoint number="2" eta="0.57">
      <SectionForceDeformation classType="5">
        <ResponseType>P</ResponseType>
      </SectionForceDeformation>
    </GaussPoint>
  </ElementOutput>
  <Data>
"#;
        let cols = describe(markup);
        let names: Vec<_> = cols.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(
            names,
            [
                "time",
                "node 9 D1",
                "node 9 D2",
                "element 3 gauss point 2 P"
            ]
        );
        assert!(cols[0].is_time && !cols[1].is_time);
    }

    #[test]
    fn markup_cut_short_gives_the_columns_so_far() {
        let cols =
            describe("<R>\n<NodeOutput nodeTag=\"4\">\n<ResponseType>V1</ResponseType>\n<Respo");
        assert_eq!(cols.len(), 1);
        assert_eq!(cols[0].name, "node 4 V1");
    }
}
