//! A 1-bit-per-pixel device bitmap.
//!
//! # Layout
//! Rows are stored top to bottom, each as `words_per_row` `u64` words. Within a row, pixel
//! `x` lives in word `x / 64` at bit `63 - x % 64`: the leftmost pixel of a word is its most
//! significant bit. Written out with `u64::to_be_bytes`, a row is therefore exactly the
//! MSB-first packed row that PNG (PNG spec §7.2, "pixels are packed into bytes with the
//! leftmost pixel in the high-order bits") and PDF (ISO 32000-1 §8.9.3) expect, so export
//! is a plain copy.
//!
//! A set bit means *dark* (opaque on the film) unless a writer is told otherwise.
//!
//! # Guarantees
//! - Padding bits past `width` in the last word of each row are always zero, so word-level
//!   comparisons, `count_ones` and equality are exact.

/// A 1-bit bitmap, rows of `u64` words, MSB-first (see the module docs).
#[derive(Clone, PartialEq, Eq)]
pub struct Bitmap {
    width: usize,
    height: usize,
    words_per_row: usize,
    words: Vec<u64>,
}

impl std::fmt::Debug for Bitmap {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "Bitmap {{ {}x{}, {} set }}",
            self.width,
            self.height,
            self.count_ones()
        )
    }
}

/// Number of `u64` words that hold `width` pixels.
pub fn words_for(width: usize) -> usize {
    width.div_ceil(64)
}

/// The mask of valid pixel bits in the last word of a row of `width` pixels.
pub(crate) fn last_word_mask(width: usize) -> u64 {
    match width % 64 {
        0 => u64::MAX,
        r => u64::MAX << (64 - r),
    }
}

/// The bits for pixels `x0..x1` inside one word (both in 0..=64, `x0 < x1`).
#[inline]
fn bits_in_word(x0: usize, x1: usize) -> u64 {
    let hi = if x0 == 0 { u64::MAX } else { u64::MAX >> x0 };
    let lo = if x1 >= 64 {
        u64::MAX
    } else {
        !(u64::MAX >> x1)
    };
    hi & lo
}

/// Sets (dark = true) or clears pixels `x0..x1` of one row given as words. Word-level: one
/// masked operation at each end and whole-word stores in between. `x1` must not exceed the
/// row's pixel width (callers clip).
#[inline]
pub(crate) fn fill_row_span(row: &mut [u64], x0: usize, x1: usize, dark: bool) {
    if x0 >= x1 {
        return;
    }
    let w0 = x0 / 64;
    let w1 = (x1 - 1) / 64;
    if w0 == w1 {
        let m = bits_in_word(x0 % 64, x1 - w0 * 64);
        apply(&mut row[w0], m, dark);
        return;
    }
    apply(&mut row[w0], bits_in_word(x0 % 64, 64), dark);
    let fill = if dark { u64::MAX } else { 0 };
    for w in &mut row[w0 + 1..w1] {
        *w = fill;
    }
    apply(&mut row[w1], bits_in_word(0, x1 - w1 * 64), dark);
}

#[inline]
fn apply(word: &mut u64, mask: u64, dark: bool) {
    if dark {
        *word |= mask;
    } else {
        *word &= !mask;
    }
}

impl Bitmap {
    /// An all-clear bitmap. Allocates `height × ceil(width / 64) × 8` bytes; callers check
    /// `Limits::max_film_pixels` before asking for a film-sized bitmap.
    pub fn new(width: usize, height: usize) -> Bitmap {
        let words_per_row = words_for(width);
        Bitmap {
            width,
            height,
            words_per_row,
            words: vec![0; words_per_row * height],
        }
    }

    pub fn width(&self) -> usize {
        self.width
    }

    pub fn height(&self) -> usize {
        self.height
    }

    pub fn words_per_row(&self) -> usize {
        self.words_per_row
    }

    /// Whether pixel (x, y) is set. Out-of-range pixels read as clear.
    pub fn get(&self, x: usize, y: usize) -> bool {
        if x >= self.width || y >= self.height {
            return false;
        }
        let w = self.words[y * self.words_per_row + x / 64];
        (w >> (63 - x % 64)) & 1 == 1
    }

    /// Sets or clears pixel (x, y). Out-of-range writes are ignored.
    pub fn set(&mut self, x: usize, y: usize, dark: bool) {
        if x >= self.width || y >= self.height {
            return;
        }
        let m = 1u64 << (63 - x % 64);
        apply(&mut self.words[y * self.words_per_row + x / 64], m, dark);
    }

    /// Sets or clears pixels `x0..x1` of row `y`, clipped to the bitmap.
    pub fn fill_span(&mut self, y: usize, x0: usize, x1: usize, dark: bool) {
        if y >= self.height {
            return;
        }
        let x1 = x1.min(self.width);
        let wpr = self.words_per_row;
        fill_row_span(&mut self.words[y * wpr..(y + 1) * wpr], x0, x1, dark);
    }

    /// Number of set pixels.
    pub fn count_ones(&self) -> u64 {
        self.words.iter().map(|w| w.count_ones() as u64).sum()
    }

    /// The words of row `y` (panics if `y >= height`).
    pub fn row(&self, y: usize) -> &[u64] {
        &self.words[y * self.words_per_row..(y + 1) * self.words_per_row]
    }

    /// The words of row `y`, mutable. Callers must keep the padding bits zero.
    pub fn row_mut(&mut self, y: usize) -> &mut [u64] {
        let wpr = self.words_per_row;
        &mut self.words[y * wpr..(y + 1) * wpr]
    }

    /// All words, row after row.
    pub fn words(&self) -> &[u64] {
        &self.words
    }

    /// All words, mutable, for band-parallel writers (`chunks_mut(words_per_row × rows)`).
    /// Callers must keep the padding bits zero.
    pub(crate) fn words_mut(&mut self) -> &mut [u64] {
        &mut self.words
    }

    /// Row `y` packed MSB-first into `out` (`ceil(width / 8)` bytes), optionally inverted.
    /// Padding bits of the last byte are written as zero before inversion.
    pub fn row_bytes_into(&self, y: usize, invert: bool, out: &mut Vec<u8>) {
        out.clear();
        let nbytes = self.width.div_ceil(8);
        for w in self.row(y) {
            let b = if invert { !*w } else { *w };
            out.extend_from_slice(&b.to_be_bytes());
        }
        out.truncate(nbytes);
    }

    /// The bitmap flipped left-right: pixel (x, y) moves to (width − 1 − x, y).
    pub fn mirrored_x(&self) -> Bitmap {
        let mut out = Bitmap::new(self.width, self.height);
        let wpr = self.words_per_row;
        // Reversing the words and the bits of each word mirrors a row padded to a multiple of
        // 64; the padding (now at the start) is then shifted out to the left.
        let pad = wpr * 64 - self.width;
        let mut tmp = vec![0u64; wpr];
        for y in 0..self.height {
            for (t, w) in tmp.iter_mut().zip(self.row(y).iter().rev()) {
                *t = w.reverse_bits();
            }
            let dst = out.row_mut(y);
            crate::raster::shift::shift_left(&tmp, pad, dst);
        }
        out
    }

    /// Makes every pixel its opposite (keeping padding bits zero).
    pub fn invert(&mut self) {
        let mask = last_word_mask(self.width);
        let wpr = self.words_per_row;
        if wpr == 0 {
            return;
        }
        for row in self.words.chunks_mut(wpr) {
            for w in row.iter_mut() {
                *w = !*w;
            }
            row[wpr - 1] &= mask;
        }
    }

    /// Row `y` as a string of `#` (set) and `.` (clear), for test failure messages.
    pub fn row_text(&self, y: usize) -> String {
        (0..self.width)
            .map(|x| if self.get(x, y) { '#' } else { '.' })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_match_per_pixel_sets() {
        for width in [1usize, 63, 64, 65, 130, 200] {
            for &(x0, x1) in &[
                (0usize, 1usize),
                (3, 70),
                (0, 200),
                (63, 65),
                (64, 128),
                (5, 5),
            ] {
                let mut a = Bitmap::new(width, 1);
                a.fill_span(0, x0, x1, true);
                let mut b = Bitmap::new(width, 1);
                for x in x0..x1.min(width) {
                    b.set(x, 0, true);
                }
                assert_eq!(a, b, "width {width} span {x0}..{x1}");
            }
        }
    }

    #[test]
    fn mirror_moves_pixels() {
        for width in [1usize, 7, 64, 65, 129] {
            let mut a = Bitmap::new(width, 2);
            a.set(0, 0, true);
            a.set(width / 3, 1, true);
            let m = a.mirrored_x();
            assert!(m.get(width - 1, 0));
            assert!(m.get(width - 1 - width / 3, 1));
            assert_eq!(m.count_ones(), a.count_ones());
            assert_eq!(m.mirrored_x(), a);
        }
    }

    #[test]
    fn row_bytes_are_msb_first() {
        let mut a = Bitmap::new(10, 1);
        a.set(0, 0, true);
        a.set(9, 0, true);
        let mut out = Vec::new();
        a.row_bytes_into(0, false, &mut out);
        // Pixel 0 is the high bit of byte 0; pixel 9 is bit 6 of byte 1 (PNG spec §7.2).
        assert_eq!(out, vec![0b1000_0000, 0b0100_0000]);
    }
}
