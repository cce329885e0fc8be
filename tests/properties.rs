//! Properties that must hold for any input, written once and driven twice: by
//! the property tests on stable (`fuzz_props.rs`, part of `cargo test`) and by
//! the libFuzzer targets in `fuzz/` (which include this file by path). Each
//! function panics when its property fails. They depend on the library alone.
#![allow(dead_code)]

use rhoscope::alarm::Alarm;
use rhoscope::parse::roles::RoleRules;
use rhoscope::parse::{ParseOptions, Reader, RowSink, Schema, SegmentReason, SkipReason};
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;

/// Longest line the reader properties allow, so that over-long lines are met
/// often; the reader's own default is far larger.
pub const MAX_LINE_BYTES: usize = 256;

/// Everything a reader reports, with values as bit patterns (NaN == NaN).
/// Roles are not recorded: the reader assigns them to every schema it sets
/// (so they run on every input), and they are a function of the schema, which
/// is compared whole.
#[derive(Debug, Default, PartialEq, Eq)]
pub struct Seen {
    pub schemas: Vec<(u64, String)>,
    pub rows: Vec<(u64, Vec<u64>)>,
    pub segments: Vec<(u64, String)>,
    pub skipped: Vec<(u64, String)>,
}

impl RowSink for Seen {
    fn schema(&mut self, line: u64, schema: &Schema) {
        self.schemas.push((line, format!("{schema:?}")));
    }

    fn row(&mut self, line: u64, values: &[f64]) {
        self.rows
            .push((line, values.iter().map(|v| canonical_bits(*v)).collect()));
    }

    fn segment(&mut self, line: u64, reason: SegmentReason) {
        self.segments.push((line, format!("{reason:?}")));
    }

    fn skipped(&mut self, line: u64, reason: SkipReason) {
        self.skipped.push((line, format!("{reason:?}")));
    }
}

/// Bits of `v`, with every ordinary NaN the same (the overflow marker kept).
fn canonical_bits(v: f64) -> u64 {
    if v.is_nan() && !rhoscope::parse::is_field_overflow(v) {
        f64::NAN.to_bits()
    } else {
        v.to_bits()
    }
}

/// Read `bytes` fed in pieces of `piece` bytes.
pub fn read(bytes: &[u8], piece: usize) -> Seen {
    let opts = ParseOptions {
        max_line_bytes: MAX_LINE_BYTES,
        ..ParseOptions::default()
    };
    let mut r = Reader::new(&opts, &RoleRules::default());
    let mut seen = Seen::default();
    for c in bytes.chunks(piece.max(1)) {
        r.feed(c, &mut seen);
    }
    r.finish(&mut seen);
    seen
}

/// The reader with roles never panics, and reads the same schemas, roles,
/// rows, segments and skips however the bytes are cut (a live file arrives in
/// arbitrary pieces). The first byte chooses the piece size.
pub fn reader_reads_the_same_however_cut(data: &[u8]) {
    let Some((&cut, body)) = data.split_first() else {
        return;
    };
    let whole = read(body, usize::MAX);
    let pieces = read(body, usize::from(cut % 64) + 1);
    assert_eq!(whole, pieces, "piece size {}", cut % 64 + 1);
}

/// (line, level, detector) of each alarm.
fn alarm_keys(a: &[Alarm]) -> Vec<(u64, String, &'static str)> {
    a.iter()
        .map(|a| (a.line, format!("{:?}", a.level), a.detector))
        .collect()
}

/// The whole pipeline (reader, roles, detectors, alarms) never panics, and
/// raises the same alarms at the same lines however the bytes are cut.
pub fn pipeline_alarms_the_same_however_cut(data: &[u8]) {
    let Some((&cut, body)) = data.split_first() else {
        return;
    };
    let settings = Settings::default();
    let mut whole = Pipeline::new(&settings);
    let mut a: Vec<Alarm> = Vec::new();
    whole.feed(body, None, &mut a);
    whole.finish(&mut a);
    let _ = whole.status();

    let mut pieces = Pipeline::new(&settings);
    let mut b: Vec<Alarm> = Vec::new();
    for chunk in body.chunks(usize::from(cut).max(1)) {
        pieces.feed(chunk, None, &mut b);
    }
    pieces.finish(&mut b);
    assert_eq!(whole.rows(), pieces.rows());
    assert_eq!(alarm_keys(&a), alarm_keys(&b));
}

/// A small history every configuration is tried on once accepted.
const SMALL_HISTORY: &[u8] = b"time,displacement,kinetic energy,internal energy,dt\n\
0,1,0,0.5,1e-3\n0.001,0.9,0.05,0.45,1e-3\n0.002,NaN,inf,1e308,1e-9\n";

/// A configuration file's text is accepted or refused with an error, never a
/// panic, and an accepted one gives a pipeline that reads a history.
pub fn config_is_accepted_or_refused(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    for named in [false, true] {
        let mut s = Settings::default();
        if s.apply_toml(text, named).is_ok() {
            if !named {
                assert!(s.actions.is_none(), "actions only from a named file");
            }
            let mut p = Pipeline::new(&s);
            let mut a: Vec<Alarm> = Vec::new();
            p.feed(SMALL_HISTORY, None, &mut a);
            p.finish(&mut a);
        }
    }
}

/// f64 values from raw bytes, eight at a time (every bit pattern: NaN,
/// ±inf, subnormals, ±1e308).
pub fn floats(data: &[u8]) -> Vec<f64> {
    data.chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap_or([0; 8])))
        .collect()
}

/// The chart transform (`rhoscope::scale::fit`) takes any values into the
/// unit square: every coordinate finite in [0, 1], the labels finite, the
/// order of y values kept, and no answer only when no y value exists.
pub fn chart_fits_the_unit_square(data: &[u8]) {
    let Some((&shape, rest)) = data.split_first() else {
        return;
    };
    let v = floats(rest);
    let n_series = usize::from(shape % 3) + 1;
    let (window, values) = v.split_at(v.len().min(3));
    let x = (
        window.first().copied().unwrap_or(0.0),
        window.get(1).copied().unwrap_or(1.0),
    );
    let reference = window.get(2).copied().filter(|_| shape & 4 != 0);
    let decades = [0.0, 3.0, 6.0, 300.0][usize::from(shape >> 3) % 4];
    let points: Vec<(f64, f64)> = values.chunks_exact(2).map(|p| (p[0], p[1])).collect();
    let per = points.len().div_ceil(n_series).max(1);
    let series: Vec<&[(f64, f64)]> = points.chunks(per).collect();
    let any_y = points.iter().any(|p| !p.1.is_nan());
    let Some(fitted) = rhoscope::scale::fit(&series, reference, x, decades) else {
        // Only a log axis can leave every value out; fit never picks one
        // unless all values are positive, so no answer means no value.
        assert!(!any_y, "values {points:?} gave no chart");
        return;
    };
    let inside = |u: f64| u.is_finite() && (0.0..=1.0).contains(&u);
    let placed = |y: f64| {
        rhoscope::scale::tame(y)
            .and_then(|t| fitted.scale.map(t))
            .is_some()
    };
    for (s, out) in series.iter().zip(&fitted.series) {
        let ys: Vec<f64> = s.iter().map(|p| p.1).filter(|&y| placed(y)).collect();
        assert_eq!(out.len(), ys.len(), "every placed value is drawn");
        for &(ux, uy) in out {
            assert!(inside(ux) && inside(uy), "({ux}, {uy}) from {s:?}");
        }
        // Sorted by value, the heights never go down.
        let mut pairs: Vec<(f64, f64)> = ys.into_iter().zip(out.iter().map(|o| o.1)).collect();
        pairs.sort_by(|a, b| a.0.total_cmp(&b.0));
        for w in pairs.windows(2) {
            assert!(w[0].1 <= w[1].1, "order lost: {:?} then {:?}", w[0], w[1]);
        }
    }
    if let Some(r) = fitted.reference {
        assert!(inside(r), "reference at {r}");
    }
    assert!(
        fitted.y_labels.iter().all(|l| l.is_finite()),
        "{:?}",
        fitted.y_labels
    );
}
