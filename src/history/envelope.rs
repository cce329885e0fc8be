//! Min/max envelope of a whole run in a fixed number of buckets. When the buckets
//! are full, neighbours are merged pairwise and each bucket then covers twice as
//! many rows, so memory stays constant however long the run grows.

/// One bucket: the x span it covers and, per column, the least and greatest
/// finite value seen in it (NaN when the bucket held no finite value).
#[derive(Debug, Clone, PartialEq)]
pub struct Bucket {
    pub x_first: f64,
    pub x_last: f64,
    pub min: Vec<f64>,
    pub max: Vec<f64>,
}

/// Envelope of all rows of a table with a bounded bucket count.
#[derive(Debug, Clone)]
pub struct Envelope {
    buckets: Vec<Bucket>,
    capacity: usize,
    rows_per_bucket: u64,
    rows_in_last: u64,
}

fn fmin(a: f64, b: f64) -> f64 {
    if a.is_nan() {
        b
    } else if b.is_nan() {
        a
    } else {
        a.min(b)
    }
}

fn fmax(a: f64, b: f64) -> f64 {
    if a.is_nan() {
        b
    } else if b.is_nan() {
        a
    } else {
        a.max(b)
    }
}

fn finite_or_nan(v: f64) -> f64 {
    if v.is_finite() { v } else { f64::NAN }
}

impl Envelope {
    /// An empty envelope holding at most `capacity` buckets (at least 2; even).
    pub fn new(capacity: usize) -> Self {
        let capacity = capacity.max(2) & !1;
        Self {
            buckets: Vec::with_capacity(capacity),
            capacity,
            rows_per_bucket: 1,
            rows_in_last: 0,
        }
    }

    /// Rows folded into each bucket at the current resolution.
    pub fn rows_per_bucket(&self) -> u64 {
        self.rows_per_bucket
    }

    /// The buckets, in x order.
    pub fn buckets(&self) -> &[Bucket] {
        &self.buckets
    }

    /// Fold one row in.
    pub fn push(&mut self, x: f64, values: &[f64]) {
        let start_new = match self.buckets.last() {
            None => true,
            Some(_) => self.rows_in_last >= self.rows_per_bucket,
        };
        if start_new {
            if self.buckets.len() == self.capacity {
                self.halve();
            }
            self.buckets.push(Bucket {
                x_first: x,
                x_last: x,
                min: values.iter().map(|v| finite_or_nan(*v)).collect(),
                max: values.iter().map(|v| finite_or_nan(*v)).collect(),
            });
            self.rows_in_last = 1;
            return;
        }
        if let Some(b) = self.buckets.last_mut() {
            b.x_last = x;
            for (i, v) in values.iter().enumerate() {
                let v = finite_or_nan(*v);
                if let (Some(lo), Some(hi)) = (b.min.get_mut(i), b.max.get_mut(i)) {
                    *lo = fmin(*lo, v);
                    *hi = fmax(*hi, v);
                }
            }
        }
        self.rows_in_last += 1;
    }

    /// Merge neighbours pairwise; each bucket then covers twice the rows.
    fn halve(&mut self) {
        let old = std::mem::take(&mut self.buckets);
        let mut it = old.into_iter();
        while let Some(mut a) = it.next() {
            if let Some(b) = it.next() {
                a.x_last = b.x_last;
                for (lo, v) in a.min.iter_mut().zip(&b.min) {
                    *lo = fmin(*lo, *v);
                }
                for (hi, v) in a.max.iter_mut().zip(&b.max) {
                    *hi = fmax(*hi, *v);
                }
            }
            self.buckets.push(a);
        }
        self.rows_per_bucket *= 2;
        // The last bucket after merging was full at the old size: it is full now
        // only when both halves were, which `rows_in_last` tracks from here on.
        self.rows_in_last = self.rows_per_bucket;
    }

    /// Forget everything.
    pub fn clear(&mut self) {
        self.buckets.clear();
        self.rows_per_bucket = 1;
        self.rows_in_last = 0;
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn memory_stays_bounded_and_extremes_survive() {
        let mut e = Envelope::new(8);
        for i in 0..10_000u32 {
            let v = if i == 7_777 { 1e9 } else { f64::from(i % 10) };
            e.push(f64::from(i), &[v]);
        }
        assert!(e.buckets().len() <= 8);
        let hi = e
            .buckets()
            .iter()
            .map(|b| b.max[0])
            .fold(f64::MIN, f64::max);
        let lo = e
            .buckets()
            .iter()
            .map(|b| b.min[0])
            .fold(f64::MAX, f64::min);
        assert_eq!(hi, 1e9);
        assert_eq!(lo, 0.0);
        assert_eq!(e.buckets()[0].x_first, 0.0);
        assert_eq!(e.buckets().last().map(|b| b.x_last), Some(9_999.0));
    }

    #[test]
    fn buckets_tile_the_rows_without_overlap() {
        let mut e = Envelope::new(4);
        for i in 0..37u32 {
            e.push(f64::from(i), &[f64::from(i)]);
        }
        let b = e.buckets();
        for w in b.windows(2) {
            assert!(w[0].x_last < w[1].x_first);
        }
        assert_eq!(b.last().map(|b| b.max[0]), Some(36.0));
    }

    #[test]
    fn non_finite_values_do_not_poison_the_extremes() {
        let mut e = Envelope::new(4);
        e.push(0.0, &[f64::NAN]);
        e.push(1.0, &[2.0]);
        e.push(2.0, &[f64::INFINITY]);
        let lo = e.buckets().iter().map(|b| b.min[0]).fold(f64::NAN, fmin);
        let hi = e.buckets().iter().map(|b| b.max[0]).fold(f64::NAN, fmax);
        assert_eq!((lo, hi), (2.0, 2.0));
    }
}
