//! Streaming min/max envelope of one series, for plotting histories of any
//! length in bounded memory: the dashboard's whole-run view of each column
//! (`history`) and the report image's series (`report_plot`). Pure.
//!
//! Samples fall into buckets of equal row count; each bucket keeps its first,
//! last, lowest and highest sample (the M4 aggregation: Jugel, Masseglia,
//! Papenbrock, Lehner & Markl, "M4: A Visualization-Oriented Time Series Data
//! Aggregation", Proc. VLDB Endowment 7(10), 2014). When the buckets are full,
//! neighbours merge pairwise and the bucket width doubles, so a series of any
//! length ends with between `capacity/2` and `capacity` buckets, without
//! knowing its length in advance. Drawing the four points of each bucket in
//! order reproduces the full-resolution line at any width up to the bucket count.

/// One (x, y) sample.
pub type Point = (f64, f64);

#[derive(Debug, Clone, Copy)]
struct Bucket {
    first: Point,
    last: Point,
    min: Point,
    max: Point,
}

impl Bucket {
    fn new(p: Point) -> Bucket {
        Bucket {
            first: p,
            last: p,
            min: p,
            max: p,
        }
    }

    fn add(&mut self, p: Point) {
        self.last = p;
        if p.1 < self.min.1 {
            self.min = p;
        }
        if p.1 > self.max.1 {
            self.max = p;
        }
    }

    fn merge(a: Bucket, b: Bucket) -> Bucket {
        Bucket {
            first: a.first,
            last: b.last,
            min: if b.min.1 < a.min.1 { b.min } else { a.min },
            max: if b.max.1 > a.max.1 { b.max } else { a.max },
        }
    }
}

/// Min/max envelope with a fixed bucket budget.
#[derive(Debug, Clone)]
pub struct Envelope {
    capacity: usize,
    per_bucket: u64,
    buckets: Vec<Bucket>,
    open: Option<(Bucket, u64)>,
    samples: u64,
    non_finite: u64,
}

/// Default bucket budget: above the plot width of a report page, in pixels.
pub const DEFAULT_BUCKETS: usize = 2048;

impl Default for Envelope {
    fn default() -> Self {
        Envelope::new(DEFAULT_BUCKETS)
    }
}

impl Envelope {
    /// An empty envelope keeping at most `capacity` buckets (at least 2).
    pub fn new(capacity: usize) -> Envelope {
        Envelope {
            capacity: capacity.max(2),
            per_bucket: 1,
            buckets: Vec::new(),
            open: None,
            samples: 0,
            non_finite: 0,
        }
    }

    /// Add one sample; a non-finite x or y is counted and left out.
    pub fn push(&mut self, x: f64, y: f64) {
        if !(x.is_finite() && y.is_finite()) {
            self.non_finite += 1;
            return;
        }
        self.samples += 1;
        let (bucket, n) = match self.open.take() {
            Some((mut b, n)) => {
                b.add((x, y));
                (b, n + 1)
            }
            None => (Bucket::new((x, y)), 1),
        };
        if n < self.per_bucket {
            self.open = Some((bucket, n));
            return;
        }
        self.buckets.push(bucket);
        if self.buckets.len() >= self.capacity {
            self.halve();
        }
    }

    /// Merge neighbouring buckets pairwise and double the bucket width.
    fn halve(&mut self) {
        let merged: Vec<Bucket> = self
            .buckets
            .chunks(2)
            .map(|pair| match pair {
                [a, b] => Bucket::merge(*a, *b),
                [a] => *a,
                _ => unreachable!("chunks(2) yields one or two"),
            })
            .collect();
        self.buckets = merged;
        self.per_bucket *= 2;
    }

    /// Forget every sample (the bucket budget stays).
    pub fn clear(&mut self) {
        self.per_bucket = 1;
        self.buckets.clear();
        self.open = None;
        self.samples = 0;
        self.non_finite = 0;
    }

    /// Finite samples pushed.
    pub fn samples(&self) -> u64 {
        self.samples
    }

    /// Non-finite samples left out.
    pub fn non_finite(&self) -> u64 {
        self.non_finite
    }

    /// True when no finite sample was pushed.
    pub fn is_empty(&self) -> bool {
        self.samples == 0
    }

    fn all_buckets(&self) -> impl Iterator<Item = &Bucket> {
        self.buckets
            .iter()
            .chain(self.open.as_ref().map(|(b, _)| b))
    }

    /// The points to draw, in order: per bucket its first, its extremes in the
    /// order they occurred, and its last; repeated points dropped.
    pub fn points(&self) -> Vec<Point> {
        let mut out: Vec<Point> = Vec::with_capacity(4 * (self.buckets.len() + 1));
        for b in self.all_buckets() {
            let (lo, hi) = if b.min.0 <= b.max.0 {
                (b.min, b.max)
            } else {
                (b.max, b.min)
            };
            for p in [b.first, lo, hi, b.last] {
                if out.last() != Some(&p) {
                    out.push(p);
                }
            }
        }
        out
    }

    /// Smallest and largest y of all finite samples.
    pub fn y_range(&self) -> Option<(f64, f64)> {
        self.all_buckets().fold(None, |acc, b| match acc {
            None => Some((b.min.1, b.max.1)),
            Some((lo, hi)) => Some((lo.min(b.min.1), hi.max(b.max.1))),
        })
    }

    /// Smallest and largest x of all finite samples.
    pub fn x_range(&self) -> Option<(f64, f64)> {
        self.all_buckets().fold(None, |acc, b| {
            let lo = b.first.0.min(b.last.0).min(b.min.0).min(b.max.0);
            let hi = b.first.0.max(b.last.0).max(b.min.0).max(b.max.0);
            match acc {
                None => Some((lo, hi)),
                Some((a, c)) => Some((a.min(lo), c.max(hi))),
            }
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn short_series_is_kept_exactly() {
        let mut e = Envelope::new(16);
        let pts: Vec<Point> = (0..10).map(|i| (i as f64, (i * i) as f64)).collect();
        for &(x, y) in &pts {
            e.push(x, y);
        }
        assert_eq!(e.points(), pts);
    }

    #[test]
    fn long_series_keeps_extremes_and_ends_in_bounded_memory() {
        let mut e = Envelope::new(64);
        let n = 1_000_003u64;
        for i in 0..n {
            let x = i as f64;
            // A spike at one row and a dip at another must survive any merging.
            let y = match i {
                123_457 => 1e6,
                876_543 => -1e6,
                _ => (x * 1e-3).sin(),
            };
            e.push(x, y);
        }
        e.push(f64::NAN, 1.0);
        e.push(5.0, f64::INFINITY);
        let pts = e.points();
        assert!(pts.len() <= 4 * 65, "{} points", pts.len());
        assert!(pts.contains(&(123_457.0, 1e6)));
        assert!(pts.contains(&(876_543.0, -1e6)));
        assert_eq!(pts.first(), Some(&(0.0, 0.0)));
        assert_eq!(pts.last().unwrap().0, (n - 1) as f64);
        assert_eq!(e.y_range(), Some((-1e6, 1e6)));
        assert_eq!(e.samples(), n);
        assert_eq!(e.non_finite(), 2);
        // x order is kept within and across buckets for a monotone x.
        assert!(pts.windows(2).all(|w| w[0].0 <= w[1].0));
        e.clear();
        assert!(e.is_empty() && e.points().is_empty() && e.non_finite() == 0);
        e.push(1.0, 2.0);
        assert_eq!(e.points(), vec![(1.0, 2.0)]);
    }
}
