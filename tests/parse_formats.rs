//! Every file layout the reader accepts, fed through `parse::Reader` with the
//! events recorded: schemas, rows with their physical lines, segments, skips.

use rhoscope::parse::roles::RoleRules;
use rhoscope::parse::{
    Delimiter, Format, ParseOptions, Reader, RowSink, Schema, SegmentReason, SkipReason,
    is_field_overflow,
};

/// Everything the reader reported, in order.
#[derive(Debug, Default)]
pub struct Events {
    pub schemas: Vec<(u64, Vec<String>)>,
    /// The schemas as reported, whole (names' origin, inferences, notes).
    pub full: Vec<Schema>,
    pub rows: Vec<(u64, Vec<f64>)>,
    pub segments: Vec<(u64, SegmentReason)>,
    pub skipped: Vec<(u64, SkipReason)>,
}

impl RowSink for Events {
    fn schema(&mut self, line: u64, schema: &Schema) {
        let names = schema.columns.iter().map(|c| c.name.clone()).collect();
        self.schemas.push((line, names));
        self.full.push(schema.clone());
    }
    fn row(&mut self, line: u64, values: &[f64]) {
        self.rows.push((line, values.to_vec()));
    }
    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.segments.push((line, reason));
    }
    fn skipped(&mut self, line: u64, reason: SkipReason) {
        self.skipped.push((line, reason));
    }
}

/// Read `bytes` whole with `opts`.
pub fn read_with(bytes: &[u8], opts: &ParseOptions) -> Events {
    let mut r = Reader::new(opts, &RoleRules::default());
    let mut ev = Events::default();
    r.feed(bytes, &mut ev);
    r.finish(&mut ev);
    ev
}

pub fn read(bytes: &[u8]) -> Events {
    read_with(bytes, &ParseOptions::default())
}

/// Relative tolerance for values that went through a decimal string: the parse
/// is correctly rounded, so one ulp (about 2.2e-16) is the most it can be off.
const REL: f64 = 1e-15;

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= REL * b.abs().max(f64::MIN_POSITIVE)
}

fn names(ev: &Events, i: usize) -> Vec<&str> {
    ev.schemas[i].1.iter().map(String::as_str).collect()
}

#[test]
fn comma_with_header_units_and_comments() {
    let ev = read(b"# solver history\n% produced by a test\n! fortran comment\n\nTime [s], kinetic energy (J),W_ext\n0.0,1.5,2\n1.0e-3, 1.0D+03 , -0.1234+105\n");
    assert_eq!(ev.schemas.len(), 1);
    assert_eq!(ev.schemas[0].0, 5);
    assert_eq!(names(&ev, 0), ["Time", "kinetic energy", "W_ext"]);
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(ev.rows[1].0, 7);
    assert!(close(ev.rows[1].1[1], 1.0e3));
    assert!(close(ev.rows[1].1[2], -0.1234e105));
    assert!(ev.skipped.is_empty());
}

#[test]
fn semicolon_tab_and_whitespace() {
    let ev = read(b"t;ke;ie\n0;1;2\n1;2;3\n");
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(names(&ev, 0), ["t", "ke", "ie"]);
    let ev = read(b"time [s]\tkinetic energy\n0.5\t1\n");
    assert_eq!(names(&ev, 0), ["time", "kinetic energy"]);
    assert_eq!(ev.rows[0].1.len(), 2);
    let ev = read(b"   time [s]   ke (J)   ie\n  0.0   1.0E+00   2.0\n  1.0   NaN  -Infinity\n");
    assert_eq!(names(&ev, 0), ["time", "ke", "ie"]);
    assert!(ev.rows[1].1[1].is_nan());
    assert_eq!(ev.rows[1].1[2], f64::NEG_INFINITY);
}

#[test]
fn no_header_gives_generic_names_or_comment_header() {
    let ev = read(b"0 1 2\n1 2 3\n");
    assert_eq!(names(&ev, 0), ["c1", "c2", "c3"]);
    assert_eq!(ev.schemas[0].0, 1);
    let ev = read(b"# time ke ie\n0 1 2\n");
    assert_eq!(names(&ev, 0), ["time", "ke", "ie"]);
}

#[test]
fn non_finite_spellings_and_asterisks_are_values() {
    let ev = read(b"t a b c d e f\n0 nan -nan NaN inf -Infinity *********\n");
    assert!(ev.skipped.is_empty(), "{:?}", ev.skipped);
    let v = &ev.rows[0].1;
    assert!(v[1].is_nan() && v[2].is_nan() && v[3].is_nan());
    assert_eq!(v[4], f64::INFINITY);
    assert_eq!(v[5], f64::NEG_INFINITY);
    assert!(is_field_overflow(v[6]));
}

#[test]
fn nul_bytes_are_dropped() {
    let ev = read(b"t x\n0 1\n\0\0\0\0\0\x001 2\n\0\0\n2 3\n");
    assert_eq!(ev.rows.len(), 3);
    assert_eq!(ev.rows[1].0, 3);
    assert_eq!(ev.rows[2].0, 5);
}

#[test]
fn latin1_header_is_a_note() {
    let ev = read(b"t [s] disp [\xb5m]\n0 1\n");
    assert_eq!(ev.rows.len(), 1);
    assert_eq!(ev.skipped, [(1, SkipReason::NonUtf8Header)]);
}

#[test]
fn partial_last_line_is_held_back() {
    let mut r = Reader::new(&ParseOptions::default(), &RoleRules::default());
    let mut ev = Events::default();
    r.feed(b"t x\n0 1\n1 2", &mut ev);
    assert_eq!(ev.rows.len(), 1);
    r.feed(b".5\n2 ", &mut ev);
    assert_eq!(ev.rows.len(), 2);
    assert!(close(ev.rows[1].1[1], 2.5));
    r.finish(&mut ev);
    // "2 " alone has one field: counted as a skip, not read as a row.
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(ev.skipped[0].0, 4);
}

#[test]
fn over_long_line_is_skipped_and_reported() {
    let opts = ParseOptions {
        max_line_bytes: 64,
        ..ParseOptions::default()
    };
    let mut text = b"t x\n0 1\n".to_vec();
    text.extend(std::iter::repeat_n(b'9', 200));
    text.extend(b"\n1 2\n");
    // Fed in small pieces so that the long line crosses many chunks.
    let mut r = Reader::new(&opts, &RoleRules::default());
    let mut ev = Events::default();
    for c in text.chunks(7) {
        r.feed(c, &mut ev);
    }
    r.finish(&mut ev);
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(ev.rows[1].0, 4);
    assert_eq!(ev.skipped, [(3, SkipReason::TooLong { bytes: 200 })]);
}

#[test]
fn restarts_new_header_and_time_backwards() {
    let ev = read(b"time ke\n0 1\n1 2\ntime ke\n0 1\n1 1\n2 1\n1.5 1\n");
    assert_eq!(
        ev.segments,
        [
            (4, SegmentReason::NewHeader),
            (8, SegmentReason::TimeBackwards)
        ]
    );
    assert_eq!(ev.rows.len(), 6);
}

#[test]
fn bad_rows_are_counted_with_lines() {
    let ev = read(b"t,x\n0,1\n1,2,3\n2,abc\n3,4\n");
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(
        ev.skipped,
        [
            (
                3,
                SkipReason::FieldCount {
                    expected: 2,
                    found: 3
                }
            ),
            (4, SkipReason::NotANumber { field: 1 })
        ]
    );
}

#[test]
fn json_lines() {
    let ev = read(b"{\"t\": 0, \"ke\": 1.5, \"phase\": \"ramp\"}\n{\"t\": 1e-3, \"ke\": null}\n{\"t\": 2e-3}\nnot json\n");
    assert_eq!(names(&ev, 0), ["t", "ke"]);
    assert_eq!(ev.rows.len(), 2);
    assert!(ev.rows[1].1[1].is_nan());
    assert_eq!(ev.skipped.len(), 2);
    assert_eq!(ev.skipped[0].0, 3);
}

#[test]
fn pattern_on_log_lines() {
    let re =
        regex::bytes::Regex::new(r"step (?P<step>\d+) t=(?P<time>\S+) E=(?P<energy>\S+)").unwrap();
    let opts = ParseOptions {
        format: Format::Pattern(re),
        ..ParseOptions::default()
    };
    let log = b"starting solver\nstep 1 t=1.0D-03 E=2.5\n# step 2 t=2.0D-03 E=2.6\nwriting restart\nstep 3 t=3.0D-03 E=NaN\n";
    let ev = read_with(log, &opts);
    assert_eq!(names(&ev, 0), ["step", "time", "energy"]);
    assert_eq!(ev.rows.iter().map(|r| r.0).collect::<Vec<_>>(), [2, 3, 5]);
    assert!(ev.rows[2].1[2].is_nan());
}

#[test]
fn forced_delimiter() {
    let opts = ParseOptions {
        format: Format::Delimited(Delimiter::Byte(b';')),
        ..ParseOptions::default()
    };
    let ev = read_with(b"a;b\n1;2\n", &opts);
    assert_eq!(ev.rows[0].1.len(), 2);
}

#[test]
fn crlf_line_ends() {
    let ev = read(b"t,x\r\n0,1\r\n1,2\r\n");
    assert_eq!(names(&ev, 0), ["t", "x"]);
    assert_eq!(ev.rows.len(), 2);
}

#[test]
fn fixtures_parse() {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures");
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        let bytes = std::fs::read(&path).unwrap();
        let ev = read(&bytes);
        assert!(!ev.rows.is_empty(), "{}", path.display());
    }
}

#[test]
fn fixed_width_fortran_table() {
    let path =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/fortran_fixed.txt");
    let ev = read(&std::fs::read(path).unwrap());
    assert_eq!(
        names(&ev, ev.schemas.len() - 1),
        ["step", "time", "kinetic", "internal", "ext work"]
    );
    assert!(ev.skipped.is_empty(), "{:?}", ev.skipped);
    assert_eq!(ev.rows.len(), 5);
    assert!(close(ev.rows[3].1[2], 0.981234e105));
    assert!(is_field_overflow(ev.rows[4].1[3]));
    assert_eq!(ev.rows[4].0, 8);
}

#[test]
fn decimal_commas_with_semicolons() {
    let ev = read(b"Zeit [s];kinetische Energie [J]\n0,0;1,5\n0,001;1,25E-03\n");
    assert_eq!(ev.rows.len(), 2);
    assert!(close(ev.rows[1].1[0], 0.001));
    assert!(close(ev.rows[1].1[1], 1.25e-3));
}

#[test]
fn a_log_message_mid_file_is_not_a_header() {
    let ev = read(b"time ke ie\n0 1 2\nrestarting from checkpoint\n1 1 2\n");
    assert_eq!(ev.schemas.len(), 1);
    assert!(ev.segments.is_empty());
    assert_eq!(ev.rows.len(), 2);
    assert_eq!(ev.skipped.len(), 1);
    assert_eq!(ev.skipped[0].0, 3);
    // A restart header with one more column, sharing the old names, is a new header.
    let ev = read(b"time ke\n0 1\ntime ke ie\n0 1 2\n");
    assert_eq!(names(&ev, 1), ["time", "ke", "ie"]);
    assert_eq!(ev.segments, [(3, SegmentReason::NewHeader)]);
}
