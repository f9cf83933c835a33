//! Which drawn object each pixel of a film shows: the layer's objects painted in order into
//! runs that remember their object, and the pairs of objects that share a pixel.
//!
//! The process check compares the design's pieces (objects that overlap) with the film's
//! copper (`crate::check`). Painting follows [`super::render`] exactly — the same objects, the
//! same pixel-centre rule, the same order, Clear objects erase — so a run's pixels are the
//! film layer's own pixels, tagged with the object that painted them last.
//!
//! Two objects *share a pixel* when a Dark object paints a pixel that another object painted
//! earlier and no Clear object erased in between: a pixel centre inside both shapes, so the
//! two overlap in the design. Objects that only come within a pixel of each other do not.
//!
//! Each row is painted by a sweep over its spans' ends ([`RowPainter::paint_row`]): the cost
//! follows the number of spans on the row, not the pixels they cover.

/// A run `[x0, x1)` of one row and the object that painted it last.
pub type Run = (u32, u32, u32);

/// One object's span on one row, in drawing order: `[x0, x1)`, the object, and whether it
/// paints (Dark) or erases (Clear). Twelve bytes: the polarity rides in the object index's
/// lowest bit (a film's spans are kept until the check has run: millions of them).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct PaintOp {
    pub x0: u32,
    pub x1: u32,
    tagged: u32,
}

impl PaintOp {
    /// Object indices below 2³¹ (an image of that many objects could not be held anyway).
    pub fn new(x0: u32, x1: u32, object: u32, dark: bool) -> PaintOp {
        debug_assert!(object < 1 << 31);
        PaintOp {
            x0,
            x1,
            tagged: object << 1 | u32::from(dark),
        }
    }

    pub fn object(self) -> u32 {
        self.tagged >> 1
    }

    pub fn dark(self) -> bool {
        self.tagged & 1 == 1
    }
}

/// The layer's spans as the renderer paints them, per row in drawing order, in the window
/// [`super::design_window`] was asked for; [`DesignSpans::window_runs`] and
/// [`DesignSpans::overlaps_on_rows`] paint them into runs and pairs (the process check's
/// closed-gap search).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DesignSpans {
    ops: Vec<PaintOp>,
    /// Where each row's spans start in `ops`; one more entry than rows.
    starts: Vec<usize>,
}

impl Default for DesignSpans {
    fn default() -> Self {
        DesignSpans {
            ops: Vec::new(),
            starts: vec![0],
        }
    }
}

impl DesignSpans {
    /// Rows held.
    pub fn height(&self) -> usize {
        self.starts.len() - 1
    }

    pub(crate) fn row(&self, y: usize) -> &[PaintOp] {
        &self.ops[self.starts[y]..self.starts[y + 1]]
    }

    /// Appends a row's spans (in drawing order).
    pub(crate) fn push_row(&mut self, ops: &[PaintOp]) {
        self.ops.extend_from_slice(ops);
        self.starts.push(self.ops.len());
    }
}

impl DesignSpans {
    /// The pairs of objects that share a pixel on the given rows (half-open ranges of film
    /// rows, in any order; rows beyond the film are left out), each row painted once.
    pub fn overlaps_on_rows(&self, ranges: &[(usize, usize)]) -> Vec<(u32, u32)> {
        let mut ranges: Vec<(usize, usize)> = ranges
            .iter()
            .map(|&(a, b)| (a, b.min(self.height())))
            .filter(|&(a, b)| a < b)
            .collect();
        ranges.sort_unstable();
        let mut painter = RowPainter::default();
        let mut overlaps = Overlaps::new();
        let mut scratch = Vec::new();
        let mut next = 0;
        for (a, b) in ranges {
            for y in a.max(next)..b {
                scratch.clear();
                painter.paint_row(self.row(y), &mut overlaps, &mut scratch, 0);
            }
            next = next.max(b);
        }
        overlaps.pairs
    }

    /// The runs of the `w × h` window whose top-left pixel is (`x0`, `y0`), row by row, in
    /// window coordinates (rows beyond the film are empty). Only the window's rows are
    /// painted.
    pub fn window_runs(&self, x0: usize, y0: usize, w: usize, h: usize) -> Vec<Vec<Run>> {
        let (cx0, cx1) = (
            x0.min(u32::MAX as usize) as u32,
            x0.saturating_add(w).min(u32::MAX as usize) as u32,
        );
        let mut painter = RowPainter::default();
        let mut overlaps = Overlaps::new();
        (y0..y0 + h)
            .map(|y| {
                let mut runs = Vec::new();
                if y < self.height() {
                    painter.paint_row(self.row(y), &mut overlaps, &mut runs, 0);
                    clip_row(&mut runs, 0, cx0, cx1);
                }
                runs
            })
            .collect()
    }
}

/// Cuts the runs `runs[from..]` (one row) to columns `[x0, x1)` and shifts them to start at
/// column `x0`.
fn clip_row(runs: &mut Vec<Run>, from: usize, x0: u32, x1: u32) {
    let row = &runs[from..];
    let start = row.partition_point(|r| r.1 <= x0);
    let end = start + row[start..].partition_point(|r| r.0 < x1);
    runs.truncate(from + end);
    runs.drain(from..from + start);
    for r in &mut runs[from..] {
        *r = (r.0.max(x0) - x0, r.1.min(x1) - x0, r.2);
    }
}

/// Pairs of objects that share a pixel, each noted once in a while: a small table of the
/// pairs seen lately keeps the same pair, met row after row, from being listed each time.
pub(crate) struct Overlaps {
    pub pairs: Vec<(u32, u32)>,
    /// Pairs seen lately, `k << 32 | j`, by hash.
    recent: Vec<u64>,
}

impl Overlaps {
    /// Slots of the table (the top 12 bits of the hash): a row holds a few hundred pairs,
    /// met again on the next rows; 32 KB stays in the first-level cache.
    const RECENT: usize = 4096;

    pub fn new() -> Overlaps {
        Overlaps {
            pairs: Vec::new(),
            recent: vec![u64::MAX; Self::RECENT],
        }
    }

    fn note(&mut self, k: u32, j: u32) {
        // Fibonacci hashing of both indices; the top bits are the best mixed.
        let key = u64::from(k) << 32 | u64::from(j);
        let slot = (key.wrapping_mul(0x9E37_79B9_7F4A_7C15) >> 52) as usize;
        if self.recent[slot] != key {
            self.recent[slot] = key;
            self.pairs.push((k, j));
        }
    }
}

/// Sorts events by their x (the high 32 bits); the order of events with the same x is left
/// as it comes. Rows of up to 65,536 pixels take two counting passes over 8-bit digits (a
/// least-significant-digit radix sort, stable per pass), wider ones a comparison sort.
fn sort_by_x(events: &mut Vec<u64>, spare: &mut Vec<u64>) {
    if events.len() < 64 || events.iter().any(|&v| v >> 48 != 0) {
        events.sort_unstable();
        return;
    }
    for shift in [32, 40] {
        let mut count = [0usize; 257];
        for &v in events.iter() {
            count[((v >> shift) & 0xFF) as usize + 1] += 1;
        }
        for d in 1..257 {
            count[d] += count[d - 1];
        }
        spare.clear();
        spare.resize(events.len(), 0);
        for &v in events.iter() {
            let d = ((v >> shift) & 0xFF) as usize;
            spare[count[d]] = v;
            count[d] += 1;
        }
        std::mem::swap(events, spare);
    }
}

/// Paints rows of one film, one after the other (one painter per thread; keeps its working
/// memory between rows).
#[derive(Default)]
pub(crate) struct RowPainter {
    /// Span ends, sorted by x: `x << 32 | op index << 1 | end`.
    events: Vec<u64>,
    /// The other buffer of the radix sort.
    spare: Vec<u64>,
    /// The spans covering the current stretch of the row, by op index (drawing order).
    active: Vec<u32>,
}

impl RowPainter {
    /// Paints one row's spans (`ops`, in drawing order) and appends its runs to `out`; notes
    /// in `overlaps` the objects each Dark span paints over.
    ///
    /// A sweep over the span ends: between two consecutive ends the same spans cover every
    /// pixel, and painting them in drawing order leaves the last one's object (nothing when
    /// it is Clear). Each Dark span paints over what the span before it left — so two spans
    /// next to each other in drawing order, both Dark, share those pixels.
    ///
    /// `out[..from]` holds earlier rows: the row's first run is not joined to them.
    pub fn paint_row(
        &mut self,
        ops: &[PaintOp],
        overlaps: &mut Overlaps,
        out: &mut Vec<Run>,
        from: usize,
    ) {
        // Event: x << 32 | op index << 1 | 1 for an end. At one x, an op's start comes before
        // its end only if a == b, and empty spans are left out.
        self.events.clear();
        for (i, &PaintOp { x0: a, x1: b, .. }) in ops.iter().enumerate() {
            if a < b {
                let i = (i as u64) << 1;
                self.events.push(u64::from(a) << 32 | i);
                self.events.push(u64::from(b) << 32 | i | 1);
            }
        }
        sort_by_x(&mut self.events, &mut self.spare);
        self.active.clear();
        let active = &mut self.active;
        let mut e = 0;
        while e < self.events.len() {
            let x = (self.events[e] >> 32) as u32;
            let batch = e;
            // Where the last event's span went in (or left) `active`: when it is the only
            // event at x, its neighbours are found there without another scan.
            let mut last_at = None;
            while e < self.events.len() && (self.events[e] >> 32) as u32 == x {
                let v = self.events[e];
                let i = (v as u32) >> 1;
                // Few spans overlap at once: linear scans beat a binary search here.
                if v & 1 == 1 {
                    last_at = active.iter().rposition(|&a| a == i);
                    if let Some(at) = last_at {
                        active.remove(at);
                    }
                } else {
                    let at = active.iter().rposition(|&a| a < i).map_or(0, |p| p + 1);
                    active.insert(at, i);
                    last_at = Some(at);
                }
                e += 1;
            }
            if active.is_empty() {
                continue;
            }
            let single = e - batch == 1;
            // Spans next to each other in drawing order that were not neighbours before
            // x: beside a span that started here, or across one that ended here. Pairs
            // that were neighbours before were noted then.
            for &v in &self.events[batch..e] {
                let i = (v as u32) >> 1;
                // `active` is sorted: the first span after `i` sits where `i` went in or
                // came out.
                let at = match last_at {
                    Some(at) if single => at,
                    _ => active.iter().rposition(|&a| a < i).map_or(0, |p| p + 1),
                };
                let (lo, hi) = if v & 1 == 0 {
                    (at.saturating_sub(1), at + 2)
                } else {
                    (at.saturating_sub(1), at + 1)
                };
                for pair in active[lo..hi.min(active.len())].windows(2) {
                    let (under, over) = (ops[pair[0] as usize], ops[pair[1] as usize]);
                    if under.dark() && over.dark() && under.object() != over.object() {
                        overlaps.note(over.object(), under.object());
                    }
                }
            }
            let top = active[active.len() - 1];
            let (k, dark) = (ops[top as usize].object(), ops[top as usize].dark());
            let next = self.events.get(e).map_or(x, |v| (v >> 32) as u32);
            if !dark || next <= x {
                continue;
            }
            let joinable = out.len() > from;
            match out.last_mut() {
                Some(run) if joinable && run.1 == x && run.2 == k => run.1 = next,
                _ => out.push((x, next, k)),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A span as the tests write it: `[x0, x1)`, object, dark.
    type Op = (u32, u32, u32, bool);

    /// Numbers below `n` from a linear congruential generator (Knuth's MMIX constants), so
    /// that the randomized tests are the same on every run.
    fn numbers(seed: u64) -> impl FnMut(u64) -> u64 {
        let mut seed = seed;
        move |n| {
            seed = seed
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (seed >> 33) % n
        }
    }

    fn packed(ops: &[Op]) -> Vec<PaintOp> {
        ops.iter()
            .map(|&(a, b, k, dark)| PaintOp::new(a, b, k, dark))
            .collect()
    }

    #[test]
    fn painting_joins_overlapping_objects_only() {
        let mut shared = Overlaps::new();
        let mut painter = RowPainter::default();
        let mut row = Vec::new();
        let ops = [
            (0, 10, 0, true),
            (10, 20, 1, true), // adjacent to 0: not joined
            (18, 30, 2, true), // overlaps 1
        ];
        painter.paint_row(&packed(&ops), &mut shared, &mut row, 0);
        assert_eq!(shared.pairs, vec![(2, 1)]);
        assert_eq!(row, vec![(0, 10, 0), (10, 18, 1), (18, 30, 2)]);
        // Erasing joins nothing, and a later object over erased pixels joins nothing either.
        let mut shared = Overlaps::new();
        row.clear();
        let ops = [
            (0, 10, 0, true),
            (18, 30, 2, true),
            (5, 25, 9, false),
            (12, 16, 4, true), // only over erased pixels
            (3, 27, 3, true),  // over what is left of 0 and 2, and over 4
        ];
        painter.paint_row(&packed(&ops), &mut shared, &mut row, 0);
        assert_eq!(shared.pairs, vec![(3, 0), (3, 4), (3, 2)]);
        assert_eq!(row, vec![(0, 3, 0), (3, 27, 3), (27, 30, 2)]);
        // The buffer is empty again: a row with nothing painted has no runs.
        row.clear();
        painter.paint_row(&packed(&[(30, 31, 4, false)]), &mut shared, &mut row, 0);
        assert!(row.is_empty());
    }

    /// The painting model spelled out pixel by pixel: an owner per pixel, spans painted in
    /// order; a Dark span notes every other owner it paints over.
    fn painted_pixel_by_pixel(ops: &[Op], width: usize) -> (Vec<Run>, Vec<(u32, u32)>) {
        let mut owner: Vec<Option<u32>> = vec![None; width];
        let mut pairs = Vec::new();
        for &(a, b, k, dark) in ops {
            for px in &mut owner[a as usize..b as usize] {
                if dark {
                    if let Some(v) = *px {
                        if v != k {
                            pairs.push((k, v));
                        }
                    }
                    *px = Some(k);
                } else {
                    *px = None;
                }
            }
        }
        let mut runs: Vec<Run> = Vec::new();
        for (x, o) in owner.iter().enumerate() {
            if let Some(k) = *o {
                match runs.last_mut() {
                    Some(r) if r.1 == x as u32 && r.2 == k => r.1 += 1,
                    _ => runs.push((x as u32, x as u32 + 1, k)),
                }
            }
        }
        pairs.sort_unstable();
        pairs.dedup();
        (runs, pairs)
    }

    #[test]
    fn sweep_agrees_with_painting_pixel_by_pixel() {
        // Random rows of spans, some objects with two spans, about one in five Clear.
        let mut next = numbers(12_345);
        let mut painter = RowPainter::default();
        for _ in 0..500 {
            let mut ops = Vec::new();
            let mut k = 0u32;
            for _ in 0..next(12) {
                let a = next(60) as u32;
                let b = a + next(25) as u32;
                k += next(2) as u32; // consecutive spans may belong to one object
                let dark = next(5) != 0;
                ops.push((a, b, k, dark));
                k += 1;
            }
            // One object's spans on a row never overlap: keep only such rows.
            let clash = ops.iter().enumerate().any(|(i, p)| {
                ops[i + 1..]
                    .iter()
                    .any(|q| q.2 == p.2 && q.0 < p.1 && p.0 < q.1)
            });
            if clash {
                continue;
            }
            let (want_runs, want_pairs) = painted_pixel_by_pixel(&ops, 90);
            let mut shared = Overlaps::new();
            let mut runs = Vec::new();
            painter.paint_row(&packed(&ops), &mut shared, &mut runs, 0);
            let mut pairs = shared.pairs;
            pairs.sort_unstable();
            pairs.dedup();
            assert_eq!(runs, want_runs, "{ops:?}");
            assert_eq!(pairs, want_pairs, "{ops:?}");
        }
    }

    #[test]
    fn window_runs_are_the_cut_out_runs() {
        // Cutting a window out of each row painted whole by hand (the definition) must give
        // the window's runs, for windows inside, across and beyond the film's edges; the
        // pairs of a set of row ranges are those of its rows painted one by one.
        let mut spans = DesignSpans::default();
        let mut next = numbers(7);
        let mut rows = Vec::new();
        for _ in 0..300 {
            let ops: Vec<Op> = (0..next(8))
                .map(|k| {
                    let a = next(80) as u32;
                    (a, a + next(30) as u32, k as u32, next(5) != 0)
                })
                .collect();
            spans.push_row(&packed(&ops));
            rows.push(ops);
        }
        let painted: Vec<_> = rows
            .iter()
            .map(|ops| painted_pixel_by_pixel(ops, 120))
            .collect();
        for (x0, y0, w, h) in [(0, 0, 120, 300), (10, 70, 40, 100), (50, 250, 100, 200)] {
            let cut = spans.window_runs(x0, y0, w, h);
            assert_eq!(cut.len(), h);
            for (y, got) in cut.iter().enumerate() {
                let (a, b) = (x0 as u32, (x0 + w) as u32);
                let want: Vec<Run> = painted
                    .get(y0 + y)
                    .map_or(&[][..], |p| &p.0[..])
                    .iter()
                    .filter(|r| r.1 > a && r.0 < b)
                    .map(|&(c, d, o)| (c.max(a) - a, d.min(b) - a, o))
                    .collect();
                assert_eq!(got, &want, "window {x0} {y0}, row {y}");
            }
        }
        for ranges in [vec![(0, 300)], vec![(40, 60), (10, 50), (290, 400)]] {
            let mut want: Vec<(u32, u32)> = (0..300)
                .filter(|y| ranges.iter().any(|&(a, b)| (a..b).contains(y)))
                .flat_map(|y| painted[y].1.clone())
                .collect();
            want.sort_unstable();
            want.dedup();
            let mut got = spans.overlaps_on_rows(&ranges);
            got.sort_unstable();
            got.dedup();
            assert_eq!(got, want, "{ranges:?}");
        }
    }

    #[test]
    fn radix_sort_orders_events_by_x() {
        // 1,000 events with x up to 60,000 (two 8-bit digits): sorted by x they must agree
        // with a comparison sort of their x values, and every event must still be there.
        let mut next = numbers(99);
        let mut events: Vec<u64> = (0..1000u64).map(|i| next(60_000) << 32 | i << 1).collect();
        let mut want = events.clone();
        want.sort_unstable();
        sort_by_x(&mut events, &mut Vec::new());
        let xs = |v: &[u64]| v.iter().map(|e| e >> 32).collect::<Vec<_>>();
        assert_eq!(xs(&events), xs(&want));
        events.sort_unstable();
        assert_eq!(events, want);
    }
}
