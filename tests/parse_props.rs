//! Property tests of the reader: it never panics on arbitrary bytes, and what it
//! reads does not depend on how the bytes are cut into pieces (a live file arrives
//! in arbitrary pieces; a scan reads it in large chunks).

use proptest::prelude::*;
use rhoscope::alarm::Alarm;
use rhoscope::parse::roles::RoleRules;
use rhoscope::parse::{ParseOptions, Reader};
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;

use super::parse_formats::Events;

fn read_in_pieces(bytes: &[u8], piece: usize, opts: &ParseOptions) -> Events {
    let mut r = Reader::new(opts, &RoleRules::default());
    let mut ev = Events::default();
    for c in bytes.chunks(piece.max(1)) {
        r.feed(c, &mut ev);
    }
    r.finish(&mut ev);
    ev
}

/// Bytes that look like a history often enough to reach deep into the reader:
/// digits, signs, exponents, delimiters, comment marks, NaN words, quotes, NULs.
fn history_like() -> impl Strategy<Value = Vec<u8>> {
    let token = prop_oneof![
        Just(b"1.5E-03".to_vec()),
        Just(b"-2.0D+02".to_vec()),
        Just(b"0.1234+105".to_vec()),
        Just(b"nan".to_vec()),
        Just(b"-Infinity".to_vec()),
        Just(b"*****".to_vec()),
        Just(b"time".to_vec()),
        Just(b"Time [s]".to_vec()),
        Just(b"{\"t\": 1}".to_vec()),
        Just(b"\"q\"".to_vec()),
        Just(b"\xb5".to_vec()),
        Just(vec![0u8]),
        Just(b",".to_vec()),
        Just(b";".to_vec()),
        Just(b"\t".to_vec()),
        Just(b" ".to_vec()),
        Just(b"\n".to_vec()),
        Just(b"\r\n".to_vec()),
        Just(b"#".to_vec()),
        // Solver-log shapes: banner words, rules, a second header, markup,
        // byte-order marks, declarations, escapes in names.
        Just(b"Step Temp E_pair TotEng".to_vec()),
        Just(b"Loop time of 0.04 on 1 procs".to_vec()),
        Just(b"-------- stress [GPa] --------".to_vec()),
        Just(b"<NodeOutput nodeTag=\"9\">".to_vec()),
        Just(b"<ResponseType>D1</ResponseType>".to_vec()),
        Just(b"<Data>".to_vec()),
        Just(b"</Data>".to_vec()),
        Just(b"\xEF\xBB\xBF".to_vec()),
        Just(b"\xFF\xFE".to_vec()),
        Just(b"# scheme: central difference".to_vec()),
        Just(b"timestep 0.005".to_vec()),
        Just(b"\x1b]0;t\x07".to_vec()),
        proptest::collection::vec(any::<u8>(), 0..6),
    ];
    proptest::collection::vec(token, 0..80).prop_map(|t| t.concat())
}

/// Rows of a table with a header, then a run of numbers: the shape whose
/// header decision waits for the rows after it.
fn table_like() -> impl Strategy<Value = Vec<u8>> {
    let line = prop_oneof![
        3 => proptest::collection::vec(-1.0e3f64..1.0e3, 3).prop_map(|v| {
            format!("{} {} {}", v[0], v[1], v[2]).into_bytes()
        }),
        1 => Just(b"time ke ie".to_vec()),
        1 => Just(b"Loop time of 0.04 on 1 procs".to_vec()),
        1 => Just(b"1 2".to_vec()),
        1 => Just(b"--------".to_vec()),
        1 => Just(Vec::new()),
    ];
    proptest::collection::vec(line, 0..40).prop_map(|lines| {
        let mut out = Vec::new();
        for l in lines {
            out.extend(l);
            out.push(b'\n');
        }
        out
    })
}

fn utf16le(bytes: &[u8]) -> Vec<u8> {
    let mut out = vec![0xFF, 0xFE];
    for u in String::from_utf8_lossy(bytes).encode_utf16() {
        out.extend(u.to_le_bytes());
    }
    out
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn tables_read_the_same_however_cut_and_encoded(bytes in table_like(), piece in 1usize..40) {
        let opts = ParseOptions::default();
        let whole = read_in_pieces(&bytes, usize::MAX, &opts);
        let cut = read_in_pieces(&bytes, piece, &opts);
        let wide = read_in_pieces(&utf16le(&bytes), piece, &opts);
        for other in [&cut, &wide] {
            prop_assert_eq!(&whole.schemas, &other.schemas);
            prop_assert_eq!(&whole.segments, &other.segments);
            prop_assert_eq!(&whole.rows, &other.rows);
        }
        prop_assert_eq!(&whole.skipped, &cut.skipped);
        // Every line is a row, a skipped line, text outside a table, or nothing
        // (blank lines, headers, rules): never two of these.
        let mut seen = std::collections::BTreeSet::new();
        for (l, _) in &whole.rows {
            prop_assert!(seen.insert(*l));
        }
        for (l, r) in &whole.skipped {
            if !r.is_note() {
                prop_assert!(seen.insert(*l), "line {} both a row and skipped", l);
            }
        }
    }

    #[test]
    fn never_panics_on_arbitrary_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..2000)) {
        let small = ParseOptions { max_line_bytes: 64, ..ParseOptions::default() };
        let _ = read_in_pieces(&bytes, 1 << 20, &ParseOptions::default());
        let _ = read_in_pieces(&bytes, 7, &small);
        let mut p = Pipeline::new(&Settings::default());
        let mut out: Vec<Alarm> = Vec::new();
        p.feed(&bytes, None, &mut out);
        p.finish(&mut out);
        let _ = p.status();
    }

    #[test]
    fn pieces_do_not_change_the_result(bytes in history_like(), piece in 1usize..40) {
        let opts = ParseOptions { max_line_bytes: 256, ..ParseOptions::default() };
        let whole = read_in_pieces(&bytes, usize::MAX, &opts);
        let cut = read_in_pieces(&bytes, piece, &opts);
        prop_assert_eq!(whole.schemas, cut.schemas);
        prop_assert_eq!(whole.segments, cut.segments);
        prop_assert_eq!(whole.skipped, cut.skipped);
        prop_assert_eq!(whole.rows.len(), cut.rows.len());
        for (a, b) in whole.rows.iter().zip(&cut.rows) {
            prop_assert_eq!(a.0, b.0);
            let same = a.1.iter().zip(&b.1).all(|(x, y)| x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()));
            prop_assert!(same && a.1.len() == b.1.len());
        }
    }
}
