//! The peak |value| of a few columns over the whole segment, in bounded
//! memory: blocks of rows keep each column's largest magnitude; when the
//! blocks are all used, neighbours merge and blocks hold twice as many rows.
//! The growth detector asks how large a column had been before a mode's
//! onset, to tell a mode that has outgrown everything the run did before
//! from a response of the run's own size.

/// Blocks kept before neighbours merge.
const MAX_BLOCKS: usize = 512;
/// Rows per block at the start.
const FIRST_BLOCK_ROWS: u64 = 4;

/// Per-column peak magnitudes by block of lines.
#[derive(Debug, Clone)]
pub struct Envelope {
    columns: usize,
    /// Line of each block's first row.
    starts: Vec<u64>,
    /// Column peaks of each block, `columns` per block.
    peaks: Vec<f64>,
    block_rows: u64,
    rows_in_last: u64,
}

impl Envelope {
    /// An empty envelope of `columns` columns.
    pub fn new(columns: usize) -> Self {
        Self {
            columns,
            starts: Vec::new(),
            peaks: Vec::new(),
            block_rows: FIRST_BLOCK_ROWS,
            rows_in_last: 0,
        }
    }

    /// Forget everything (a new segment or a reset window).
    pub fn clear(&mut self) {
        self.starts.clear();
        self.peaks.clear();
        self.block_rows = FIRST_BLOCK_ROWS;
        self.rows_in_last = 0;
    }

    /// Add one row (`values` has one entry per column).
    pub fn push(&mut self, line: u64, values: &[f64]) {
        if self.starts.is_empty() || self.rows_in_last >= self.block_rows {
            if self.starts.len() == MAX_BLOCKS {
                self.merge();
            }
            self.starts.push(line);
            self.peaks.extend(std::iter::repeat_n(0.0, self.columns));
            self.rows_in_last = 0;
        }
        let base = self.peaks.len() - self.columns;
        for (p, v) in self.peaks[base..].iter_mut().zip(values) {
            *p = p.max(v.abs());
        }
        self.rows_in_last += 1;
    }

    /// Merge neighbouring blocks in pairs; blocks then hold twice the rows.
    fn merge(&mut self) {
        let c = self.columns;
        let n = self.starts.len();
        let mut starts = Vec::with_capacity(n / 2 + 1);
        let mut peaks = Vec::with_capacity(self.peaks.len() / 2 + c);
        for pair in (0..n).collect::<Vec<_>>().chunks(2) {
            starts.push(self.starts[pair[0]]);
            for j in 0..c {
                let m = pair
                    .iter()
                    .map(|&b| self.peaks[b * c + j])
                    .fold(0.0, f64::max);
                peaks.push(m);
            }
        }
        self.starts = starts;
        self.peaks = peaks;
        self.block_rows *= 2;
        // The last block was whole before the merge; the merged one may not be.
        self.rows_in_last = self.block_rows;
    }

    /// Each column's peak |value| over the blocks that start before `line`
    /// (a block straddling `line` counts whole: the answer is never smaller
    /// than the true peak before `line`, by at most one block). `None` when
    /// no row before `line` is held.
    pub fn peaks_before(&self, line: u64) -> Option<Vec<f64>> {
        let blocks = self.starts.partition_point(|&s| s < line);
        if blocks == 0 {
            return None;
        }
        let c = self.columns;
        let mut out = vec![0.0_f64; c];
        for b in 0..blocks {
            for (o, p) in out.iter_mut().zip(&self.peaks[b * c..(b + 1) * c]) {
                *o = o.max(*p);
            }
        }
        Some(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn peaks_before_a_line_survive_merging() {
        let mut e = Envelope::new(2);
        for line in 1..=10_000u64 {
            let x = line as f64;
            e.push(line, &[x, -1.0]);
        }
        // Blocks merge past 512 × 4 rows; whole blocks before line 5001 count.
        let p = e.peaks_before(5_001).unwrap_or_default();
        assert!(p[0] >= 5_000.0 && p[0] <= 5_000.0 + 32.0, "{p:?}");
        assert_eq!(p[1], 1.0);
        assert!(e.peaks_before(1).is_none());
    }
}
