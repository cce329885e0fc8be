//! Columnar history of a run for the dashboard: x (simulated time, or line number
//! when the file has no time column) stored once, each signal as its own column;
//! full resolution for a recent window of rows and a min/max [`Envelope`] of
//! each column over the whole run, so memory is bounded and a 10⁸-row run draws as fast as a short
//! one. [`Table::points`] downsamples a column to a panel's width. Pure: no
//! clock, no terminal, no files.

pub mod trend;

use std::collections::VecDeque;

use crate::envelope::Envelope;

/// Default number of recent rows kept at full resolution.
pub const DEFAULT_RETENTION_ROWS: usize = 20_000;
/// Default number of envelope buckets per column for the whole run.
pub const DEFAULT_ENVELOPE_BUCKETS: usize = 1_024;

/// A table of named columns sharing one x column.
#[derive(Debug, Clone)]
pub struct Table {
    names: Vec<String>,
    retention_rows: usize,
    recent_x: VecDeque<f64>,
    recent: Vec<VecDeque<f64>>,
    envelopes: Vec<Envelope>,
    first_x: Option<f64>,
    breaks: VecDeque<f64>,
    rows: u64,
    last: Vec<f64>,
}

/// Most segment breaks remembered (older ones are forgotten first).
const MAX_BREAKS: usize = 256;

impl Table {
    /// An empty table with these column names and default sizes.
    pub fn new(names: Vec<String>) -> Self {
        Self::with_sizes(names, DEFAULT_RETENTION_ROWS, DEFAULT_ENVELOPE_BUCKETS)
    }

    /// An empty table keeping `retention_rows` at full resolution and
    /// `envelope_buckets` buckets for the whole run.
    pub fn with_sizes(names: Vec<String>, retention_rows: usize, envelope_buckets: usize) -> Self {
        let n = names.len();
        Self {
            recent: (0..n).map(|_| VecDeque::new()).collect(),
            last: vec![f64::NAN; n],
            names,
            retention_rows: retention_rows.max(2),
            recent_x: VecDeque::new(),
            envelopes: (0..n).map(|_| Envelope::new(envelope_buckets)).collect(),
            first_x: None,
            breaks: VecDeque::new(),
            rows: 0,
        }
    }

    /// Column names.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Index of a column by name.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// Rows pushed since the table was made or cleared.
    pub fn rows(&self) -> u64 {
        self.rows
    }

    /// Append one row at `x`. Missing trailing values count as NaN; extra ones
    /// are ignored. x should not decrease (a restart is a [`Table::mark_break`]).
    pub fn push(&mut self, x: f64, values: &[f64]) {
        if self.recent_x.len() == self.retention_rows {
            self.recent_x.pop_front();
            for c in &mut self.recent {
                c.pop_front();
            }
        }
        self.recent_x.push_back(x);
        for (i, c) in self.recent.iter_mut().enumerate() {
            let v = values.get(i).copied().unwrap_or(f64::NAN);
            c.push_back(v);
            if v.is_finite() {
                self.last[i] = v;
            }
        }
        for (e, v) in self.envelopes.iter_mut().zip(values) {
            e.push(x, *v);
        }
        if x.is_finite() {
            self.first_x.get_or_insert(x);
        }
        self.rows += 1;
    }

    /// Record that a new segment (a restart) begins at `x`.
    pub fn mark_break(&mut self, x: f64) {
        if self.breaks.len() == MAX_BREAKS {
            self.breaks.pop_front();
        }
        self.breaks.push_back(x);
    }

    /// x positions where segments began.
    pub fn breaks(&self) -> impl Iterator<Item = f64> + '_ {
        self.breaks.iter().copied()
    }

    /// First and last x of the whole run.
    pub fn x_range(&self) -> Option<(f64, f64)> {
        let first = self.first_x?;
        let last = *self.recent_x.back()?;
        Some((first, last))
    }

    /// First x still held at full resolution.
    pub fn recent_start(&self) -> Option<f64> {
        self.recent_x.front().copied()
    }

    /// Latest finite value of a column.
    pub fn last(&self, col: usize) -> Option<f64> {
        self.last.get(col).copied().filter(|v| v.is_finite())
    }

    /// Latest x.
    pub fn last_x(&self) -> Option<f64> {
        self.recent_x.back().copied()
    }

    /// Full-resolution (x, value) pairs of a column with x in `[x_lo, x_hi]`.
    pub fn recent(
        &self,
        col: usize,
        x_lo: f64,
        x_hi: f64,
    ) -> impl Iterator<Item = (f64, f64)> + '_ {
        let start = self.recent_x.partition_point(|x| *x < x_lo);
        let c = self.recent.get(col);
        self.recent_x
            .range(start..)
            .take_while(move |x| **x <= x_hi)
            .enumerate()
            .filter_map(move |(k, x)| c.and_then(|c| c.get(start + k)).map(|v| (*x, *v)))
    }

    /// Points of column `col` over `[x_lo, x_hi]`, at most about `2 × width`:
    /// the least and greatest finite value in each of `width` equal slices of x,
    /// in the order they occurred. Uses full-resolution rows when the range lies
    /// in the recent window, the envelope otherwise.
    pub fn points(&self, col: usize, x_lo: f64, x_hi: f64, width: usize) -> Vec<(f64, f64)> {
        let mut slicer = Slicer::new(x_lo, x_hi, width);
        let use_recent = self.recent_start().is_some_and(|s| s <= x_lo)
            || self.rows as usize <= self.retention_rows;
        if use_recent {
            for (x, v) in self.recent(col, x_lo, x_hi) {
                slicer.add(x, v, v);
            }
        } else {
            let points = self.envelopes.get(col).map(Envelope::points);
            for (x, v) in points.unwrap_or_default() {
                if x >= x_lo && x <= x_hi {
                    slicer.add(x, v, v);
                }
            }
        }
        slicer.finish()
    }

    /// Least and greatest finite value of a column over `[x_lo, x_hi]`.
    pub fn bounds(&self, col: usize, x_lo: f64, x_hi: f64, width: usize) -> Option<(f64, f64)> {
        let pts = self.points(col, x_lo, x_hi, width);
        let lo = pts.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
        let hi = pts.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
        (lo <= hi).then_some((lo, hi))
    }

    /// Forget all rows and breaks (keeps names and sizes).
    pub fn clear(&mut self) {
        self.recent_x.clear();
        for c in &mut self.recent {
            c.clear();
        }
        for e in &mut self.envelopes {
            e.clear();
        }
        self.first_x = None;
        self.breaks.clear();
        self.rows = 0;
        self.last.fill(f64::NAN);
    }
}

/// Folds (x, lo, hi) samples into `width` equal x slices, keeping each slice's
/// extremes in the order they occurred.
struct Slicer {
    x_lo: f64,
    span: f64,
    width: usize,
    cur: Option<usize>,
    lo: (f64, f64),
    hi: (f64, f64),
    out: Vec<(f64, f64)>,
}

impl Slicer {
    fn new(x_lo: f64, x_hi: f64, width: usize) -> Self {
        let width = width.max(1);
        Self {
            x_lo,
            span: (x_hi - x_lo).max(f64::MIN_POSITIVE),
            width,
            cur: None,
            lo: (0.0, f64::INFINITY),
            hi: (0.0, f64::NEG_INFINITY),
            out: Vec::with_capacity(2 * width),
        }
    }

    fn add(&mut self, x: f64, lo: f64, hi: f64) {
        let slot = (((x - self.x_lo) / self.span) * self.width as f64).floor();
        let slot = slot.clamp(0.0, (self.width - 1) as f64) as usize;
        if self.cur != Some(slot) {
            self.flush();
            self.cur = Some(slot);
        }
        if lo.is_finite() && lo < self.lo.1 {
            self.lo = (x, lo);
        }
        if hi.is_finite() && hi > self.hi.1 {
            self.hi = (x, hi);
        }
    }

    fn flush(&mut self) {
        let (lo, hi) = (self.lo, self.hi);
        if lo.1.is_finite() && hi.1.is_finite() {
            if lo.0 <= hi.0 {
                self.out.push(lo);
                if hi != lo {
                    self.out.push(hi);
                }
            } else {
                self.out.push(hi);
                self.out.push(lo);
            }
        }
        self.lo = (0.0, f64::INFINITY);
        self.hi = (0.0, f64::NEG_INFINITY);
    }

    fn finish(mut self) -> Vec<(f64, f64)> {
        self.flush();
        self.out
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    fn table(n: u32, retention: usize) -> Table {
        let mut t = Table::with_sizes(vec!["a".into(), "b".into()], retention, 64);
        for i in 0..n {
            let x = f64::from(i);
            t.push(x, &[x.sin(), -x]);
        }
        t
    }

    #[test]
    fn points_are_bounded_by_twice_the_width() {
        let t = table(100_000, 1_000);
        for w in [1usize, 10, 80, 200] {
            let p = t.points(0, 0.0, 99_999.0, w);
            assert!(p.len() <= 2 * w, "width {w}: {} points", p.len());
            assert!(!p.is_empty());
        }
    }

    #[test]
    fn downsampling_keeps_the_extremes_of_the_range() {
        let t = table(5_000, 10_000);
        let p = t.points(1, 0.0, 4_999.0, 7);
        let lo = p.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
        let hi = p.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
        assert_eq!((lo, hi), (-4_999.0, 0.0));
    }

    #[test]
    fn recent_window_is_full_resolution_and_bounded() {
        let t = table(3_000, 500);
        assert_eq!(t.recent_start(), Some(2_500.0));
        assert_eq!(t.recent(1, 2_900.0, 2_909.0).count(), 10);
        assert_eq!(t.x_range(), Some((0.0, 2_999.0)));
        assert_eq!(t.last(1), Some(-2_999.0));
        // A range reaching before the window is drawn from the envelope.
        let p = t.points(1, 0.0, 2_999.0, 4);
        assert!(p.iter().any(|p| p.1 == 0.0));
    }

    #[test]
    fn short_rows_and_non_finite_values_are_tolerated() {
        let mut t = Table::with_sizes(vec!["a".into(), "b".into()], 10, 4);
        t.push(0.0, &[1.0]);
        t.push(1.0, &[f64::NAN, 2.0]);
        assert_eq!(t.last(0), Some(1.0));
        assert_eq!(t.last(1), Some(2.0));
        assert_eq!(t.points(0, 0.0, 1.0, 4), vec![(0.0, 1.0)]);
    }

    #[test]
    fn zero_width_and_empty_ranges_do_not_panic() {
        let t = table(10, 100);
        assert!(t.points(0, 5.0, 5.0, 0).len() <= 2);
        assert!(t.points(7, 0.0, 9.0, 3).is_empty());
        assert!(Table::new(vec![]).x_range().is_none());
    }
}
