//! Edge offset of a composed film by exact Euclidean morphology.
//!
//! Growing the black of a film by a radius `r` is a dilation by the disc of radius `r`;
//! shrinking is an erosion, computed as complement → dilate → complement. The disc is the set
//! of pixel offsets `(i, j)` with `(i·px)² + (j·py)² <= r²` for the film's own x and y pitch
//! (`px`, `py` in µm), so non-square pixels get a true circle, not a pixel-count square.
//!
//! # Why `<=`
//! The disc is closed, as is the set of points within distance `r` of a shape. With `<=` a
//! radius of exactly n pixels reaches n pixels along each axis, so the realized offset is
//! `floor(r / px)·px` along x and `floor(r / py)·py` along y ([`realized_offset`]). The test
//! carries a relative tolerance of 1e-9 so that a radius meant as a whole number of pixels
//! (e.g. `2 × 25400/1200` µm) is not lost to rounding in its last bit.
//!
//! # Borders
//! Outside the bitmap counts as clear for a dilation (nothing grows in from beyond the film)
//! and, by the complement, as dark for an erosion (black touching the film's edge is not eaten
//! from the edge). Both leave the film's border as neutral as possible.
//!
//! # Method
//! Per output row: for each vertical offset `j` the disc is a horizontal run of half-width
//! `k(j)`. Input rows sharing the same `k` are OR-ed first and then dilated horizontally once
//! (dilation distributes over union), with word-level shifts in O(log k) passes. Output bands
//! are computed in parallel; each reads the input rows it needs (its band grown by the
//! radius), so parallel and serial results are identical.

use super::bitmap::{last_word_mask, Bitmap};
use super::render::RenderOptions;
use super::shift::{dilate_row, or_shift_left, or_shift_right};
use rayon::prelude::*;

/// Pixel pitch of a film in µm along x and y.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Pitch {
    pub x_um: f64,
    pub y_um: f64,
}

impl Pitch {
    /// The pitch of a device with the given resolution (1 in = 25,400 µm).
    pub fn from_dpi(dpi_x: f64, dpi_y: f64) -> Pitch {
        Pitch {
            x_um: 25_400.0 / dpi_x,
            y_um: 25_400.0 / dpi_y,
        }
    }
}

/// Relative slack of the disc test (see the module docs).
const DISC_SLACK: f64 = 1e-9;

/// The discrete disc as half-widths: `half_widths[j]` is the largest `i` with
/// `(i·px)² + (j·py)² <= r²`, for `j = 0 ..= ky`. Empty when the radius is not positive.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DiscKernel {
    pub half_widths: Vec<usize>,
}

impl DiscKernel {
    /// The disc of `radius_um`, limited to `max_x` × `max_y` pixels each way (a larger disc
    /// acts the same on a bitmap of that size). Non-positive or NaN radii give an empty disc.
    pub fn new(radius_um: f64, pitch: Pitch, max_x: usize, max_y: usize) -> DiscKernel {
        let positive = |v: f64| v > 0.0; // false for NaN
        if !positive(radius_um) || !positive(pitch.x_um) || !positive(pitch.y_um) {
            return DiscKernel {
                half_widths: Vec::new(),
            };
        }
        let r2 = radius_um * radius_um * (1.0 + DISC_SLACK);
        let inside = |i: usize, j: usize| {
            let (a, b) = (i as f64 * pitch.x_um, j as f64 * pitch.y_um);
            a * a + b * b <= r2
        };
        let ky = largest(radius_um / pitch.y_um, max_y, |j| inside(0, j));
        let half_widths = (0..=ky)
            .map(|j| {
                let rest = (r2 - (j as f64 * pitch.y_um).powi(2)).max(0.0).sqrt();
                largest(rest / pitch.x_um, max_x, |i| inside(i, j))
            })
            .collect();
        DiscKernel { half_widths }
    }

    /// Half-height in rows (ky); `None` for an empty disc.
    pub fn half_height(&self) -> Option<usize> {
        self.half_widths.len().checked_sub(1)
    }

    /// Whether the disc is the single centre pixel (or empty): the operation is a no-op.
    pub fn is_trivial(&self) -> bool {
        self.half_widths.len() <= 1 && self.half_widths.first().copied().unwrap_or(0) == 0
    }

    /// Whether offset (i, j) is in the disc.
    pub fn contains(&self, i: i64, j: i64) -> bool {
        self.half_widths
            .get(j.unsigned_abs() as usize)
            .is_some_and(|&k| i.unsigned_abs() as usize <= k)
    }
}

/// The largest n in 0..=cap with `ok(n)`, starting from the estimate `est` (ok is monotone
/// decreasing, ok(0) assumed true).
fn largest(est: f64, cap: usize, ok: impl Fn(usize) -> bool) -> usize {
    let mut n = if est.is_finite() && est > 0.0 {
        (est.floor() as usize).min(cap)
    } else {
        0
    };
    while n > 0 && !ok(n) {
        n -= 1;
    }
    while n < cap && ok(n + 1) {
        n += 1;
    }
    n
}

/// What an offset request becomes on the pixel grid.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct RealizedOffset {
    /// The request, µm (positive grows black).
    pub requested_um: f64,
    /// Whole pixels the film's edges actually move along x and y (signed like the request).
    pub x_px: i64,
    pub y_px: i64,
    /// The same in µm: `x_px · pitch.x_um`, `y_px · pitch.y_um`.
    pub x_um: f64,
    pub y_um: f64,
}

/// The offset the discrete disc achieves along x and y for a request of `offset_um`
/// (`floor(|r| / pitch)` pixels, signed like the request). See the module docs.
pub fn realized_offset(offset_um: f64, pitch: Pitch) -> RealizedOffset {
    let disc = DiscKernel::new(offset_um.abs(), pitch, usize::MAX / 2, usize::MAX / 2);
    let sign = if offset_um < 0.0 { -1 } else { 1 };
    let x_px = disc.half_widths.first().copied().unwrap_or(0) as i64 * sign;
    let y_px = disc.half_height().unwrap_or(0) as i64 * sign;
    RealizedOffset {
        requested_um: offset_um,
        x_px,
        y_px,
        x_um: x_px as f64 * pitch.x_um,
        y_um: y_px as f64 * pitch.y_um,
    }
}

/// Whether a request of `offset_um` moves no edge at all (it is shorter than both pitches).
pub fn rounds_to_zero(offset_um: f64, pitch: Pitch) -> bool {
    let r = realized_offset(offset_um, pitch);
    r.x_px == 0 && r.y_px == 0
}

/// Grows (positive) or shrinks (negative) the black of `bitmap` by `offset_um`.
pub fn offset(bitmap: &Bitmap, offset_um: f64, pitch: Pitch) -> Bitmap {
    offset_with(bitmap, offset_um, pitch, &RenderOptions::default())
}

/// [`offset`] with explicit bands and threading.
pub fn offset_with(bitmap: &Bitmap, offset_um: f64, pitch: Pitch, opts: &RenderOptions) -> Bitmap {
    if offset_um < 0.0 {
        erode_with(bitmap, -offset_um, pitch, opts)
    } else {
        dilate_with(bitmap, offset_um, pitch, opts)
    }
}

/// Dilation by the disc of `radius_um`: a pixel is set when any set pixel lies within the
/// disc around it.
pub fn dilate(bitmap: &Bitmap, radius_um: f64, pitch: Pitch) -> Bitmap {
    dilate_with(bitmap, radius_um, pitch, &RenderOptions::default())
}

/// Erosion by the disc of `radius_um`: complement, dilate, complement.
pub fn erode(bitmap: &Bitmap, radius_um: f64, pitch: Pitch) -> Bitmap {
    erode_with(bitmap, radius_um, pitch, &RenderOptions::default())
}

/// Opening (erode then dilate): removes black features narrower than the disc.
pub fn opening(bitmap: &Bitmap, radius_um: f64, pitch: Pitch) -> Bitmap {
    let o = RenderOptions::default();
    dilate_with(
        &erode_with(bitmap, radius_um, pitch, &o),
        radius_um,
        pitch,
        &o,
    )
}

/// Closing (dilate then erode): fills clear gaps narrower than the disc.
pub fn closing(bitmap: &Bitmap, radius_um: f64, pitch: Pitch) -> Bitmap {
    let o = RenderOptions::default();
    erode_with(
        &dilate_with(bitmap, radius_um, pitch, &o),
        radius_um,
        pitch,
        &o,
    )
}

/// [`erode`] with explicit bands and threading: the complement dilated, each band reading
/// its rows complemented and complementing its output (no complemented copy of the film).
pub fn erode_with(bitmap: &Bitmap, radius_um: f64, pitch: Pitch, opts: &RenderOptions) -> Bitmap {
    grow(bitmap, radius_um, pitch, opts, Sense::Shrink)
}

/// [`dilate`] with explicit bands and threading.
pub fn dilate_with(bitmap: &Bitmap, radius_um: f64, pitch: Pitch, opts: &RenderOptions) -> Bitmap {
    grow(bitmap, radius_um, pitch, opts, Sense::Grow)
}

/// Dilation of the set pixels, or (`Shrink`) of the clear ones: erosion.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Sense {
    Grow,
    Shrink,
}

impl Sense {
    /// A row's words as the dilation reads them (complemented when shrinking; the padding
    /// bits past the width stay clear).
    fn read(self, row: &[u64], mask: u64, out: &mut Vec<u64>) {
        match self {
            Sense::Grow => out.extend_from_slice(row),
            Sense::Shrink => {
                out.extend(row.iter().map(|w| !w));
                if let Some(last) = out.last_mut() {
                    *last &= mask;
                }
            }
        }
    }

    /// An output row as the dilation left it, complemented back when shrinking.
    fn write(self, row: &mut [u64], mask: u64) {
        if self == Sense::Shrink {
            row.iter_mut().for_each(|w| *w = !*w);
        }
        if let Some(last) = row.last_mut() {
            *last &= mask;
        }
    }
}

fn grow(
    bitmap: &Bitmap,
    radius_um: f64,
    pitch: Pitch,
    opts: &RenderOptions,
    sense: Sense,
) -> Bitmap {
    let (w, h) = (bitmap.width(), bitmap.height());
    let disc = DiscKernel::new(radius_um, pitch, w, h);
    if disc.is_trivial() || w == 0 || h == 0 {
        return bitmap.clone();
    }
    let groups = kernel_groups(&disc);
    let mut out = Bitmap::new(w, h);
    let wpr = out.words_per_row();
    let band_rows = opts.band_rows.clamp(1, h);
    // Few groups and a disc no taller than a band: each input row is dilated horizontally
    // once per group for the whole band, instead of once per output row and group.
    let ky = disc.half_height().unwrap_or(0);
    let shared = groups.len() <= MAX_SHARED_GROUPS && ky <= band_rows;
    let band = |(b, chunk): (usize, &mut [u64])| {
        if shared {
            dilate_band_shared(bitmap, &groups, b * band_rows, chunk, wpr, sense);
        } else {
            dilate_band(bitmap, &groups, b * band_rows, chunk, wpr, sense);
        }
    };
    let words = out.words_mut();
    if opts.parallel {
        words
            .par_chunks_mut(wpr * band_rows)
            .enumerate()
            .for_each(band);
    } else {
        words.chunks_mut(wpr * band_rows).enumerate().for_each(band);
    }
    out
}

/// Runs of vertical offsets with the same half-width: `(j_first, j_last, k)`.
fn kernel_groups(disc: &DiscKernel) -> Vec<(usize, usize, usize)> {
    let mut groups: Vec<(usize, usize, usize)> = Vec::new();
    for (j, &k) in disc.half_widths.iter().enumerate() {
        match groups.last_mut() {
            Some(g) if g.2 == k => g.1 = j,
            _ => groups.push((j, j, k)),
        }
    }
    groups
}

/// Groups up to which [`dilate_band_shared`] keeps one dilated copy of the band per group.
const MAX_SHARED_GROUPS: usize = 16;

/// Widens a horizontal dilation of half-width `from` to `to` in place (the doubling of
/// [`dilate_row`] continued: each step by at most the current half-width + 1 leaves no hole).
fn widen_row(row: &mut [u64], from: usize, to: usize, scratch: &mut [u64]) {
    let mut h = from;
    while h < to {
        let step = (h + 1).min(to - h);
        scratch[..row.len()].copy_from_slice(row);
        or_shift_left(&scratch[..row.len()], step, row);
        or_shift_right(&scratch[..row.len()], step, row);
        h += step;
    }
}

/// The rows `y ± j` for `j` in `j0..=j1` that lie in `0..h` (each once).
fn rows_at_offsets(y: usize, j0: usize, j1: usize, h: usize) -> impl Iterator<Item = usize> {
    (j0..=j1).flat_map(move |j| {
        [y.checked_sub(j), (j > 0).then_some(y + j)]
            .into_iter()
            .flatten()
            .filter(move |&yy| yy < h)
    })
}

/// [`dilate_band`] with the horizontal dilations shared between output rows: every input
/// row the band reads is dilated once per group (smallest half-width first, each widened
/// from the last), then each output row ORs the rows its disc covers. Same result.
fn dilate_band_shared(
    input: &Bitmap,
    groups: &[(usize, usize, usize)],
    first_row: usize,
    chunk: &mut [u64],
    wpr: usize,
    sense: Sense,
) {
    let h = input.height();
    let mask = last_word_mask(input.width());
    let ky = groups.last().map_or(0, |g| g.1);
    let out_rows = chunk.len() / wpr;
    let lo = first_row.saturating_sub(ky);
    let hi = (first_row + out_rows + ky).min(h);
    // Half-widths fall as |j| grows: the last group has the smallest.
    let mut wide: Vec<Vec<u64>> = vec![Vec::new(); groups.len()];
    let mut scratch = vec![0u64; wpr];
    let mut from = 0;
    for gi in (0..groups.len()).rev() {
        let k = groups[gi].2;
        let mut rows = match wide.get(gi + 1) {
            Some(prev) if !prev.is_empty() => prev.clone(),
            _ => {
                let mut rows = Vec::with_capacity((hi - lo) * wpr);
                for y in lo..hi {
                    sense.read(input.row(y), mask, &mut rows);
                }
                rows
            }
        };
        for row in rows.chunks_mut(wpr) {
            widen_row(row, from, k, &mut scratch);
        }
        from = k;
        wide[gi] = rows;
    }
    for (r, out_row) in chunk.chunks_mut(wpr).enumerate() {
        let y = first_row + r;
        for (&(j0, j1, _), rows) in groups.iter().zip(&wide) {
            for yy in rows_at_offsets(y, j0, j1, h) {
                let src = &rows[(yy - lo) * wpr..(yy - lo + 1) * wpr];
                for (o, s) in out_row.iter_mut().zip(src) {
                    *o |= *s;
                }
            }
        }
        sense.write(out_row, mask);
    }
}

fn dilate_band(
    input: &Bitmap,
    groups: &[(usize, usize, usize)],
    first_row: usize,
    chunk: &mut [u64],
    wpr: usize,
    sense: Sense,
) {
    let h = input.height();
    let mask = last_word_mask(input.width());
    let mut acc = vec![0u64; wpr];
    let mut scratch = vec![0u64; wpr];
    let mut row = Vec::with_capacity(wpr);
    for (r, out_row) in chunk.chunks_mut(wpr).enumerate() {
        let y = first_row + r;
        for &(j0, j1, k) in groups {
            acc.fill(0);
            let mut any = false;
            for yy in rows_at_offsets(y, j0, j1, h) {
                row.clear();
                sense.read(input.row(yy), mask, &mut row);
                for (a, s) in acc.iter_mut().zip(&row) {
                    *a |= *s;
                }
                any = true;
            }
            if !any {
                continue;
            }
            dilate_row(&mut acc, k, &mut scratch);
            for (o, a) in out_row.iter_mut().zip(&acc) {
                *o |= *a;
            }
        }
        sense.write(out_row, mask);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn disc_of_two_pixels_square_pitch() {
        // r = 2 px exactly: offsets with i² + j² <= 4 (Euclidean disc, counted by hand):
        // rows j=0: |i|<=2, j=1: |i|<=1 (1+1=2, 4+1=5>4), j=2: i=0.
        let p = Pitch::from_dpi(1200.0, 1200.0);
        let d = DiscKernel::new(2.0 * p.x_um, p, 100, 100);
        assert_eq!(d.half_widths, vec![2, 1, 0]);
    }

    #[test]
    fn realized_offset_floors_per_axis() {
        // 1200 × 600 dpi: pitch 21.1667 × 42.3333 µm. 50 µm → 2 px (42.33 µm) in x, 1 px in y.
        let p = Pitch::from_dpi(1200.0, 600.0);
        let r = realized_offset(50.0, p);
        assert_eq!((r.x_px, r.y_px), (2, 1));
        assert!((r.x_um - 2.0 * 25_400.0 / 1200.0).abs() < 1e-9);
        let r = realized_offset(-50.0, p);
        assert_eq!((r.x_px, r.y_px), (-2, -1));
        // TRADE.md worked example: +10 µm at 1200 dpi realizes 0 px.
        assert!(rounds_to_zero(10.0, Pitch::from_dpi(1200.0, 1200.0)));
        assert!(!rounds_to_zero(21.2, Pitch::from_dpi(1200.0, 1200.0)));
    }

    #[test]
    fn shared_bands_equal_per_row_dilation() {
        // The per-row method is the reference; widths leave padding bits in the last word,
        // bands cut the disc's reach, and pitches give groups of several rows.
        let mut seed = 0x9e37_79b9_7f4a_7c15u64;
        for (w, h) in [(150usize, 70usize), (64, 33), (1, 20)] {
            let mut src = Bitmap::new(w, h);
            for y in 0..h {
                for x in 0..w {
                    seed ^= seed << 13;
                    seed ^= seed >> 7;
                    seed ^= seed << 17;
                    src.set(x, y, seed.is_multiple_of(23));
                }
            }
            for (r, pitch) in [
                (121.2, Pitch::from_dpi(1200.0, 1200.0)),
                (60.0, Pitch::from_dpi(1200.0, 600.0)),
                (
                    95.0,
                    Pitch {
                        x_um: 10.0,
                        y_um: 20.0,
                    },
                ),
            ] {
                let disc = DiscKernel::new(r, pitch, w, h);
                let groups = kernel_groups(&disc);
                let wpr = src.words_per_row();
                // Shrinking reads the complement: the same as growing a complemented copy and
                // complementing the result.
                let mut inverse = src.clone();
                inverse.invert();
                for band_rows in [5usize, 16, 70] {
                    for (sense, input) in [(Sense::Grow, &src), (Sense::Shrink, &inverse)] {
                        let mut a = vec![0u64; wpr * h];
                        let mut b = vec![0u64; wpr * h];
                        let mut c = vec![0u64; wpr * h];
                        let chunks = a
                            .chunks_mut(wpr * band_rows)
                            .zip(b.chunks_mut(wpr * band_rows))
                            .zip(c.chunks_mut(wpr * band_rows));
                        for (i, ((ca, cb), cc)) in chunks.enumerate() {
                            let y = i * band_rows;
                            dilate_band(input, &groups, y, ca, wpr, Sense::Grow);
                            dilate_band_shared(&src, &groups, y, cb, wpr, sense);
                            dilate_band(&src, &groups, y, cc, wpr, sense);
                        }
                        let mut want = Bitmap::new(w, h);
                        want.words_mut().copy_from_slice(&a);
                        if sense == Sense::Shrink {
                            want.invert();
                        }
                        let words = want.words();
                        assert_eq!(words, &b[..], "{w}×{h} r {r} band {band_rows} {sense:?}");
                        assert_eq!(words, &c[..], "{w}×{h} r {r} band {band_rows} {sense:?}");
                    }
                }
            }
        }
    }
}
