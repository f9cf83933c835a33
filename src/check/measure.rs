//! Pixel-level tools of the process check: cropping the board out of a film, residues,
//! connected components, and the local width of a thin feature.
//!
//! # Local width
//! The width of a thin feature at pixel `p` is `d₁ + d₂ − 1 pixel`: `d₁` is the distance from
//! `p`'s centre to the nearest pixel centre outside the feature, `d₂` the distance to the
//! nearest outside centre on the opposite side (within 40° of straight across from the first),
//! and each outside centre lies half a pixel beyond the feature's edge. Across a band of
//! constant width every pixel gives about the band's width: an axis-aligned band of `n`
//! pixels measures exactly `n` pixels (1 + n − 1), a slanted one within about a pixel (its
//! stair-step edges lie between the inner and outer corners). At a stair step the near
//! outside pixel is beside `p` and the far side is still straight across, so samples anywhere
//! in a cross-section agree.

use crate::raster::Bitmap;

/// The `w × h` block of `src` whose top-left pixel is (`x0`, `y0`); pixels beyond `src` read
/// as clear.
pub(crate) fn crop(src: &Bitmap, x0: usize, y0: usize, w: usize, h: usize) -> Bitmap {
    let mut out = Bitmap::new(w, h);
    let (q, r) = (x0 / 64, x0 % 64);
    for y in 0..h {
        let sy = y0 + y;
        if sy >= src.height() {
            break;
        }
        let row = src.row(sy);
        let dst = out.row_mut(y);
        for (i, d) in dst.iter_mut().enumerate() {
            let a = row.get(q + i).copied().unwrap_or(0);
            *d = if r == 0 {
                a
            } else {
                (a << r) | (row.get(q + i + 1).copied().unwrap_or(0) >> (64 - r))
            };
        }
        // Keep the padding bits past `w` zero (bitmap invariant).
        if let Some(last) = dst.last_mut() {
            if !w.is_multiple_of(64) {
                *last &= u64::MAX << (64 - w % 64);
            }
        }
    }
    out
}

/// `a & !b`, word by word (same sizes).
pub(crate) fn and_not(a: &Bitmap, b: &Bitmap) -> Bitmap {
    let mut out = a.clone();
    for y in 0..out.height() {
        for (o, s) in out.row_mut(y).iter_mut().zip(b.row(y)) {
            *o &= !s;
        }
    }
    out
}

/// The complement of `a`.
pub(crate) fn inverted(a: &Bitmap) -> Bitmap {
    let mut out = a.clone();
    out.invert();
    out
}

/// Whether any pixel of columns `x0..x1`, rows `y0..y1` is set.
pub(crate) fn any_set(bm: &Bitmap, x0: usize, x1: usize, y0: usize, y1: usize) -> bool {
    let x1 = x1.min(bm.width());
    if x0 >= x1 {
        return false;
    }
    for y in y0..y1.min(bm.height()) {
        let row = bm.row(y);
        let (w0, w1) = (x0 / 64, (x1 - 1) / 64);
        for (w, word) in row.iter().enumerate().take(w1 + 1).skip(w0) {
            let mut m = u64::MAX;
            if w == w0 {
                m &= u64::MAX >> (x0 % 64);
            }
            if w == w1 && !x1.is_multiple_of(64) {
                m &= u64::MAX << (64 - x1 % 64);
            }
            if word & m != 0 {
                return true;
            }
        }
    }
    false
}

/// One 8-connected group of set pixels.
#[derive(Debug, Clone)]
pub(crate) struct Component {
    pub pixels: Vec<(u32, u32)>,
}

impl Component {
    /// Mean pixel centre.
    pub fn centroid(&self) -> (f64, f64) {
        let n = self.pixels.len().max(1) as f64;
        let (sx, sy) = self
            .pixels
            .iter()
            .fold((0.0, 0.0), |(a, b), &(x, y)| (a + x as f64, b + y as f64));
        (sx / n + 0.5, sy / n + 0.5)
    }

    /// (min x, min y, max x, max y), inclusive.
    pub fn bbox(&self) -> (u32, u32, u32, u32) {
        self.pixels
            .iter()
            .fold((u32::MAX, u32::MAX, 0, 0), |(a, b, c, d), &(x, y)| {
                (a.min(x), b.min(y), c.max(x), d.max(y))
            })
    }
}

/// The 8-connected components of the set pixels of `bm`. Stops collecting after
/// `max_pixels` pixels in all (what was found so far is returned).
///
/// A depth-first flood fill; each component's pixels are listed in the order it visits them
/// (the width samples are taken along that order). Neighbours are read from the words of
/// the three rows directly: this loop is where the check spends its time on busy boards.
pub(crate) fn components(bm: &Bitmap, max_pixels: usize) -> Vec<Component> {
    let mut work = bm.words().to_vec();
    let (w, h, wpr) = (bm.width(), bm.height(), bm.words_per_row());
    let mut out = Vec::new();
    let mut total = 0usize;
    let mut stack: Vec<(u32, u32)> = Vec::new();
    for y in 0..h {
        for wi in 0..wpr {
            loop {
                let word = work[y * wpr + wi];
                if word == 0 {
                    break;
                }
                let x = wi * 64 + word.leading_zeros() as usize;
                work[y * wpr + wi] &= !(1u64 << (63 - x % 64));
                stack.push((x as u32, y as u32));
                let mut pixels = Vec::new();
                while let Some((px, py)) = stack.pop() {
                    pixels.push((px, py));
                    let (px, py) = (px as usize, py as usize);
                    let (x0, x1) = (px.saturating_sub(1), (px + 1).min(w - 1));
                    // Columns px − 1 ..= px + 1 in one word (the usual case): their three bits
                    // are taken and cleared at once (padding bits past the width are clear).
                    let one_word = (1..63).contains(&(px % 64));
                    let three = if one_word { 7u64 << (62 - px % 64) } else { 0 };
                    for ny in py.saturating_sub(1)..=(py + 1).min(h - 1) {
                        let row = &mut work[ny * wpr..(ny + 1) * wpr];
                        // Same order as a scan of dx = −1, 0, 1: the visit order stays put.
                        if one_word {
                            let word = &mut row[px / 64];
                            let mut found = *word & three;
                            *word &= !found;
                            while found != 0 {
                                let b = found.leading_zeros();
                                found &= !(1u64 << (63 - b));
                                stack.push(((px / 64 * 64) as u32 + b, ny as u32));
                            }
                            continue;
                        }
                        for nx in x0..=x1 {
                            let bit = 1u64 << (63 - nx % 64);
                            let word = &mut row[nx / 64];
                            if *word & bit != 0 {
                                *word &= !bit;
                                stack.push((nx as u32, ny as u32));
                            }
                        }
                    }
                }
                total += pixels.len();
                out.push(Component { pixels });
                if total >= max_pixels {
                    return out;
                }
            }
        }
    }
    out
}

/// Connected-component labels (8-connected) of a bitmap's set pixels, kept as runs: per row
/// the runs `[x0, x1)` with their label. Built by union-find over runs that touch between
/// neighbouring rows, so the cost follows the number of runs, not of pixels.
pub(crate) struct Labels {
    rows: Vec<Vec<(u32, u32, u32)>>,
}

/// The runs `[x0, x1)` of set pixels in one bitmap row (may end in the padding bits' column,
/// which are always clear).
pub(crate) fn row_runs(row: &[u64], out: &mut Vec<(u32, u32)>) {
    out.clear();
    let mut open: Option<usize> = None;
    // The previous pixel, in the word's top bit: XOR with the word shifted down one pixel
    // marks exactly the pixels where a run starts or ends, so the loop visits only those.
    let mut prev = 0u64;
    for (wi, &w) in row.iter().enumerate() {
        let base = wi * 64;
        let mut edges = w ^ ((w >> 1) | prev);
        prev = w << 63;
        while edges != 0 {
            let b = edges.leading_zeros() as usize;
            edges &= !(1u64 << (63 - b));
            match open {
                None => open = Some(base + b),
                Some(s) => {
                    out.push((s as u32, (base + b) as u32));
                    open = None;
                }
            }
        }
    }
    if let Some(s) = open {
        out.push((s as u32, (row.len() * 64) as u32));
    }
}

/// The root of `i` in a union-find forest (with path halving).
pub(super) fn find(parent: &mut [u32], mut i: u32) -> u32 {
    while parent[i as usize] != i {
        let g = parent[parent[i as usize] as usize];
        parent[i as usize] = g;
        i = g;
    }
    i
}

/// Joins the sets of `a` and `b`; the smaller root stays the root.
pub(super) fn union(parent: &mut [u32], a: u32, b: u32) {
    let (ra, rb) = (find(parent, a), find(parent, b));
    if ra != rb {
        parent[ra.max(rb) as usize] = ra.min(rb);
    }
}

impl Labels {
    pub fn of(bm: &Bitmap) -> Labels {
        let mut rows: Vec<Vec<(u32, u32, u32)>> = Vec::with_capacity(bm.height());
        let mut parent: Vec<u32> = Vec::new();
        let mut runs = Vec::new();
        for y in 0..bm.height() {
            row_runs(bm.row(y), &mut runs);
            let mut labelled = Vec::with_capacity(runs.len());
            for &(a, b) in &runs {
                let id = parent.len() as u32;
                parent.push(id);
                labelled.push((a, b, id));
            }
            if let Some(prev) = rows.last() {
                // Runs touch (8-connected) when [a, b) and [c, d) overlap after growing one by
                // a pixel each way.
                let mut j = 0;
                for &(a, b, id) in &labelled {
                    while j < prev.len() && prev[j].1 < a {
                        j += 1;
                    }
                    let mut k = j;
                    while k < prev.len() && prev[k].0 <= b {
                        union(&mut parent, id, prev[k].2);
                        k += 1;
                    }
                }
            }
            rows.push(labelled);
        }
        for row in &mut rows {
            for r in row.iter_mut() {
                r.2 = find(&mut parent, r.2);
            }
        }
        Labels { rows }
    }

    /// The label of pixel (x, y), if set.
    pub fn at(&self, x: usize, y: usize) -> Option<u32> {
        let row = self.rows.get(y)?;
        let i = row.partition_point(|r| (r.1 as usize) <= x);
        row.get(i).filter(|r| (r.0 as usize) <= x).map(|r| r.2)
    }

    /// Which labels the components of `residue` (pixels without a label) touch along
    /// pixel edges. One sweep over the runs of both, row by row: looking up each pixel's
    /// neighbours instead jumps about the bitmaps and waits on memory.
    pub fn touches(&self, residue: &Bitmap) -> Touches {
        let parts = Labels::of(residue);
        let ids = parts.rows.iter().map(Vec::len).sum();
        let mut seen = vec![[NONE; 2]; ids];
        // The first run of `row` ending after column x, from `j` on (x only grows).
        let after = |row: &[(u32, u32, u32)], j: &mut usize, x: u32| {
            while *j < row.len() && row[*j].1 <= x {
                *j += 1;
            }
            *j
        };
        let empty = Vec::new();
        for (y, row) in parts.rows.iter().enumerate() {
            let here = self.rows.get(y).unwrap_or(&empty);
            let above = y.checked_sub(1).and_then(|a| self.rows.get(a));
            let below = self.rows.get(y + 1);
            let (mut jh, mut ja, mut jb) = (0, 0, 0);
            for &(a, b, root) in row {
                let s = &mut seen[root as usize];
                // Beside the run in its row: pixels a − 1 and b.
                if a > 0 {
                    let i = after(here, &mut jh, a - 1);
                    if here.get(i).is_some_and(|r| r.0 < a) {
                        note(s, here[i].2);
                    }
                }
                let i = after(here, &mut jh, b);
                if here.get(i).is_some_and(|r| r.0 <= b) {
                    note(s, here[i].2);
                }
                // Above and below: labelled runs overlapping columns a .. b.
                for (other, j) in [(above, &mut ja), (below, &mut jb)] {
                    if let Some(other) = other {
                        let mut i = after(other, j, a);
                        while i < other.len() && other[i].0 < b {
                            note(s, other[i].2);
                            i += 1;
                        }
                    }
                }
            }
        }
        let count = seen
            .iter()
            .map(|s| s.iter().filter(|&&l| l != NONE).count() as u8)
            .collect();
        Touches { parts, count }
    }
}

/// No label (an empty slot of [`note`]).
const NONE: u32 = u32::MAX;

/// Adds label `l` to the (up to two) different labels seen.
fn note(seen: &mut [u32; 2], l: u32) {
    if seen.contains(&l) {
        return;
    }
    if let Some(slot) = seen.iter_mut().find(|s| **s == NONE) {
        *slot = l;
    }
}

/// The labels each component of a residue touches: see [`Labels::touches`].
pub(crate) struct Touches {
    /// The residue's own components.
    parts: Labels,
    /// Per component (by its label): different labels touched, up to 2.
    count: Vec<u8>,
}

impl Touches {
    /// Clears from `residue` (the bitmap these touches were taken of) every component for
    /// which `keep(labels touched (up to 2), pixels)` is false: the rest is then walked
    /// pixel by pixel.
    pub fn retain(&self, residue: &mut Bitmap, keep: impl Fn(usize, usize) -> bool) {
        let mut size = vec![0usize; self.count.len()];
        for row in &self.parts.rows {
            for &(a, b, l) in row {
                size[l as usize] += (b - a) as usize;
            }
        }
        for (y, row) in self.parts.rows.iter().enumerate() {
            for &(a, b, l) in row {
                if !keep(self.count[l as usize] as usize, size[l as usize]) {
                    crate::raster::fill_row_span(residue.row_mut(y), a as usize, b as usize, false);
                }
            }
        }
    }

    /// How many different labels (up to 2) the edge neighbours of `comp`'s pixels carry.
    pub fn of(&self, comp: &Component) -> usize {
        comp.pixels
            .first()
            .and_then(|&(x, y)| self.parts.at(x as usize, y as usize))
            .map_or(0, |p| self.count[p as usize] as usize)
    }
}

/// A feature's pixels with the physical pixel size, for width measurements.
pub(crate) struct Probe<'a> {
    pub bm: &'a Bitmap,
    /// What pixels beyond the bitmap count as.
    pub outside: bool,
    /// Pixel size along x and y, mm.
    pub mm_x: f64,
    pub mm_y: f64,
}

/// The widest square window (pixels across) kept as one word per row.
const WINDOW_BITS: i64 = 64;

/// Which pixels around a probed pixel are inside the feature, as rows of bits: bit `i` of
/// row `j` is pixel (x − r + i, y − r + j). The ring search reads it instead of the bitmap:
/// a whole side of a ring is then one mask. Rows are read as the rings reach them (most
/// searches end long before the window's edge).
pub(crate) struct Window {
    x: i64,
    y: i64,
    r: i64,
    /// Rows y − filled ..= y + filled are read.
    filled: i64,
    rows: [u64; WINDOW_BITS as usize],
}

impl Window {
    /// A window to be set up by [`Probe::window_in`]: one per thread, reused for every probed
    /// pixel (it is half a kilobyte: making, zeroing and moving a new one per pixel cost more
    /// than the search on thin features).
    pub fn scratch() -> Window {
        Window {
            x: 0,
            y: 0,
            r: 0,
            filled: 0,
            rows: [0; WINDOW_BITS as usize],
        }
    }

    /// Reads the rows ring `k` needs.
    fn grow(&mut self, probe: &Probe<'_>, k: i64) {
        let n = 2 * self.r + 1;
        while self.filled < k {
            self.filled += 1;
            for dy in [-self.filled, self.filled] {
                self.rows[(self.r + dy) as usize] = probe.row_bits(self.x - self.r, self.y + dy, n);
            }
        }
    }

    /// Outside-the-feature bits of row offset `dy` for offsets −k ..= k, at bits r−k ..= r+k.
    fn outside_span(&self, dy: i64, k: i64) -> u64 {
        let span = (u64::MAX >> (63 - 2 * k)) << (self.r - k);
        !self.rows[(self.r + dy) as usize] & span
    }

    fn outside(&self, dx: i64, dy: i64) -> bool {
        (self.rows[(self.r + dy) as usize] >> (self.r + dx)) & 1 == 0
    }
}

impl Probe<'_> {
    fn inside(&self, x: i64, y: i64) -> bool {
        if x < 0 || y < 0 || x >= self.bm.width() as i64 || y >= self.bm.height() as i64 {
            return self.outside;
        }
        self.bm.get(x as usize, y as usize)
    }

    /// Rings searched for a distance up to `max_mm`.
    fn rings(&self, max_mm: f64) -> i64 {
        (max_mm / self.mm_x.min(self.mm_y)).ceil() as i64 + 1
    }

    /// The inside bits of pixels x0 .. x0 + n of row y (n ≤ 64), bit i for pixel x0 + i.
    fn row_bits(&self, x0: i64, y: i64, n: i64) -> u64 {
        let full = u64::MAX >> (64 - n);
        let beyond = if self.outside { full } else { 0 };
        if y < 0 || y >= self.bm.height() as i64 {
            return beyond;
        }
        let (lo, hi) = (x0.max(0), (x0 + n).min(self.bm.width() as i64));
        if lo >= hi {
            return beyond;
        }
        let row = self.bm.row(y as usize);
        let (q, r) = ((lo / 64) as usize, (lo % 64) as u32);
        let mut word = row[q] << r;
        if r > 0 && q + 1 < row.len() {
            word |= row[q + 1] >> (64 - r);
        }
        // MSB-first pixels lo .. lo + 63 become bit i = pixel lo + i.
        let bits = word.reverse_bits() & (u64::MAX >> (64 - (hi - lo)));
        let at = lo - x0;
        (beyond & !((u64::MAX >> (64 - (hi - lo))) << at)) | (bits << at)
    }

    /// The window of half-width `r` around (x, y), if it fits in a word.
    #[cfg(test)]
    fn window(&self, x: i64, y: i64, r: i64) -> Option<Window> {
        let mut win = Window::scratch();
        self.window_in(&mut win, x, y, r)?;
        Some(win)
    }

    /// Sets `win` up as the window of half-width `r` around (x, y), if it fits in a word.
    /// Only the rows [`Window::grow`] reads are written; the others keep old values, unread.
    fn window_in<'w>(&self, win: &'w mut Window, x: i64, y: i64, r: i64) -> Option<&'w mut Window> {
        let n = 2 * r + 1;
        if n > WINDOW_BITS {
            return None;
        }
        win.rows[r as usize] = self.row_bits(x - r, y, n);
        (win.x, win.y, win.r, win.filled) = (x, y, r, 0);
        Some(win)
    }

    /// The distance (mm) from the centre of pixel (`x`, `y`) to the nearest centre of a pixel
    /// outside the feature, and the unit direction to it (mm space), searched up to `max_mm`.
    /// With `cone = Some((ux, uy, cos))`, only pixels whose direction is within the angle of
    /// cosine `cos` about (ux, uy) count. Rings are searched outward, each in a fixed order;
    /// of equally near pixels the first in that order wins (it sets the direction).
    fn nearest_outside(
        &self,
        x: i64,
        y: i64,
        max_mm: f64,
        cone: Option<(f64, f64, f64)>,
        mut window: Option<&mut Window>,
    ) -> Option<(f64, f64, f64)> {
        let step = self.mm_x.min(self.mm_y);
        let rings = self.rings(max_mm);
        let mut best: Option<(f64, f64, f64)> = None; // (squared distance, ex, ey)
                                                      // Pixel (dx, dy), known to be outside the feature, as a candidate.
        let consider = |best: &mut Option<(f64, f64, f64)>, dx: i64, dy: i64| {
            let (ex, ey) = (dx as f64 * self.mm_x, dy as f64 * self.mm_y);
            let d2 = ex * ex + ey * ey;
            if best.is_some_and(|b| d2 >= b.0) {
                return;
            }
            if let Some((ux, uy, cos)) = cone {
                // Behind the cone's axis fails the test below anyway (cos > 0); most
                // candidates do, and need no square root then.
                let along = ex * ux + ey * uy;
                if along <= 0.0 || along < cos * d2.sqrt() {
                    return;
                }
            }
            *best = Some((d2, ex, ey));
        };
        for k in 1..=rings {
            match &mut window {
                Some(win) if k <= win.r => {
                    win.grow(self, k);
                    // The top and bottom rows, left to right, top before bottom at each dx.
                    let (top, bottom) = (win.outside_span(-k, k), win.outside_span(k, k));
                    let mut both = top | bottom;
                    while both != 0 {
                        let i = both.trailing_zeros();
                        both &= both - 1;
                        let dx = i as i64 - win.r;
                        if (top >> i) & 1 == 1 {
                            consider(&mut best, dx, -k);
                        }
                        if (bottom >> i) & 1 == 1 {
                            consider(&mut best, dx, k);
                        }
                    }
                    for d in (-k + 1)..k {
                        if win.outside(-k, d) {
                            consider(&mut best, -k, d);
                        }
                        if win.outside(k, d) {
                            consider(&mut best, k, d);
                        }
                    }
                }
                _ => {
                    let mut visit = |dx: i64, dy: i64| {
                        if !self.inside(x + dx, y + dy) {
                            consider(&mut best, dx, dy);
                        }
                    };
                    for d in -k..=k {
                        visit(d, -k);
                        visit(d, k);
                    }
                    for d in (-k + 1)..k {
                        visit(-k, d);
                        visit(k, d);
                    }
                }
            }
            // Every pixel of the next ring is at least (k + 1)·step away.
            let next = (k + 1) as f64 * step;
            if best.is_some_and(|b| b.0 <= next * next) || next > max_mm {
                break;
            }
        }
        best.map(|(d2, ex, ey)| {
            let d = d2.sqrt();
            (d, ex / d, ey / d)
        })
    }

    /// [`Self::width_at_in`] with a window of its own.
    #[cfg(test)]
    pub fn width_at(&self, x: i64, y: i64, cap_mm: f64) -> Option<f64> {
        self.width_at_in(&mut Window::scratch(), x, y, cap_mm)
    }

    /// The local width (mm) of the feature through pixel (`x`, `y`), or `None` when it is at
    /// least `cap_mm` (the feature is not thin here). See the module docs. `scratch` is the
    /// thread's reusable window ([`Window::scratch`]).
    pub fn width_at_in(&self, scratch: &mut Window, x: i64, y: i64, cap_mm: f64) -> Option<f64> {
        let px = self.mm_x.max(self.mm_y);
        // Both searches stay within the first one's rings.
        let mut window = self.window_in(scratch, x, y, self.rings(cap_mm + px));
        let (d1, ux, uy) = self.nearest_outside(x, y, cap_mm + px, None, window.as_deref_mut())?;
        let cone = Some((-ux, -uy, OPPOSITE_COS));
        let (d2, _, _) = self.nearest_outside(x, y, cap_mm + px - d1, cone, window)?;
        // Each outside centre lies half a pixel (along the direction) beyond the edge.
        let pixel_along = (ux * self.mm_x).hypot(uy * self.mm_y);
        let width = d1 + d2 - pixel_along;
        (width < cap_mm).then_some(width)
    }
}

/// The far side is looked for within 40° of straight across: the edge beside a pixel at a
/// stair step of a slanted band runs at 45° or more from "across" and is left out.
const OPPOSITE_COS: f64 = 0.766_044_443_118_978; // cos 40°

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crop_shifts_words() {
        let mut a = Bitmap::new(200, 3);
        a.set(70, 1, true);
        a.set(130, 2, true);
        let c = crop(&a, 65, 1, 100, 2);
        assert!(c.get(5, 0));
        assert!(c.get(65, 1));
        assert_eq!(c.count_ones(), 2);
    }

    #[test]
    fn band_width_is_exact_along_axes() {
        // A vertical band 7 pixels wide: every pixel measures 7 pixels.
        let mut a = Bitmap::new(40, 40);
        for y in 0..40 {
            a.fill_span(y, 10, 17, true);
        }
        let p = Probe {
            bm: &a,
            outside: false,
            mm_x: 0.01,
            mm_y: 0.01,
        };
        for x in 10..17 {
            let w = p.width_at(x, 20, 1.0).unwrap();
            assert!((w - 0.07).abs() < 1e-3, "x {x}: {w}");
        }
        assert!(p.width_at(12, 20, 0.05).is_none());
    }

    #[test]
    fn run_labels_join_diagonal_neighbours() {
        let mut a = Bitmap::new(130, 4);
        a.fill_span(0, 0, 70, true);
        a.set(70, 1, true); // diagonal to the end of the first run
        a.fill_span(3, 100, 130, true);
        let l = Labels::of(&a);
        assert_eq!(l.at(0, 0), l.at(70, 1));
        assert!(l.at(100, 3).is_some());
        assert_ne!(l.at(0, 0), l.at(129, 3));
        assert_eq!(l.at(75, 0), None);
    }

    #[test]
    fn components_are_eight_connected() {
        let mut a = Bitmap::new(10, 10);
        a.set(1, 1, true);
        a.set(2, 2, true);
        a.set(7, 7, true);
        let c = components(&a, usize::MAX);
        assert_eq!(c.len(), 2);
        assert!(any_set(&a, 7, 8, 7, 8));
        assert!(!any_set(&a, 3, 7, 0, 10));
    }

    /// A fixed pseudo-random bitmap (xorshift64), dense enough to have runs and holes of all
    /// lengths, including runs across word boundaries.
    fn speckled(w: usize, h: usize, seed: u64) -> Bitmap {
        let mut a = Bitmap::new(w, h);
        let mut s = seed;
        for y in 0..h {
            for x in 0..w {
                s ^= s << 13;
                s ^= s >> 7;
                s ^= s << 17;
                // Runs of similar pixels: flip state with probability 1/4.
                if s.is_multiple_of(4) {
                    a.set(x, y, !a.get(x.saturating_sub(1), y));
                } else if x > 0 {
                    a.set(x, y, a.get(x - 1, y));
                }
            }
        }
        a
    }

    #[test]
    fn row_runs_match_pixel_scan() {
        // Reference: the runs read off pixel by pixel, the definition of a run.
        let a = speckled(200, 30, 0x9e37_79b9_7f4a_7c15);
        let mut runs = Vec::new();
        for y in 0..a.height() {
            let mut want = Vec::new();
            let mut x = 0;
            while x < a.width() {
                if a.get(x, y) {
                    let s = x;
                    while x < a.width() && a.get(x, y) {
                        x += 1;
                    }
                    want.push((s as u32, x as u32));
                } else {
                    x += 1;
                }
            }
            row_runs(a.row(y), &mut runs);
            assert_eq!(runs, want, "row {y}");
        }
    }

    #[test]
    fn window_search_matches_pixel_search() {
        // The word window must find the same outside pixel (distance and direction, ties
        // included) as reading the bitmap pixel by pixel, also at the bitmap's borders.
        let a = speckled(90, 40, 0x2545_f491_4f6c_dd1d);
        for outside in [false, true] {
            let p = Probe {
                bm: &a,
                outside,
                mm_x: 0.02,
                mm_y: 0.025,
            };
            for y in -2..42i64 {
                for x in -2..92i64 {
                    let mut win = p.window(x, y, p.rings(0.3));
                    assert!(win.is_some());
                    let near = p.nearest_outside(x, y, 0.3, None, None);
                    assert_eq!(near, p.nearest_outside(x, y, 0.3, None, win.as_mut()));
                    if let Some((_, ux, uy)) = near {
                        let cone = Some((-ux, -uy, OPPOSITE_COS));
                        assert_eq!(
                            p.nearest_outside(x, y, 0.2, cone, None),
                            p.nearest_outside(x, y, 0.2, cone, win.as_mut()),
                            "{x} {y}"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn touches_match_pixel_neighbours() {
        // Reference: each component pixel's four edge neighbours looked up one by one.
        let pieces = speckled(150, 30, 0x1234_5678_9abc_def1);
        let mut residue = and_not(&speckled(150, 30, 0x0fed_cba9_8765_4321), &pieces);
        residue.set(149, 29, true);
        residue.set(149, 28, false);
        let labels = Labels::of(&pieces);
        let touches = labels.touches(&residue);
        let comps = components(&residue, usize::MAX);
        assert!(comps.len() > 20);
        let mut counts = [0; 3];
        for c in &comps {
            let mut seen: Vec<u32> = Vec::new();
            for &(x, y) in &c.pixels {
                for (dx, dy) in [(1i64, 0i64), (-1, 0), (0, 1), (0, -1)] {
                    let (nx, ny) = (x as i64 + dx, y as i64 + dy);
                    if nx < 0 || ny < 0 {
                        continue;
                    }
                    if let Some(l) = labels.at(nx as usize, ny as usize) {
                        if !seen.contains(&l) {
                            seen.push(l);
                        }
                    }
                }
            }
            let want = seen.len().min(2);
            counts[want] += 1;
            assert_eq!(touches.of(c), want, "component at {:?}", c.pixels[0]);
        }
        // The board has components of every kind: none, one and several pieces touched.
        assert!(counts.iter().all(|&n| n > 0), "{counts:?}");
    }
}
