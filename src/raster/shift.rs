//! Word-level pixel shifts of bitmap rows (MSB-first layout, see `bitmap.rs`).
//!
//! "Left" moves pixels toward x = 0 (dst pixel x = src pixel x + n); "right" moves them toward
//! larger x. Bits shifted past either end of the slice are dropped, zeros come in. Callers
//! mask padding bits when they need them zero.

/// `dst = src` shifted left by `n` pixels.
pub fn shift_left(src: &[u64], n: usize, dst: &mut [u64]) {
    dst.fill(0);
    or_shift_left(src, n, dst);
}

/// `dst |= src` shifted left by `n` pixels: dst pixel x |= src pixel x + n.
pub fn or_shift_left(src: &[u64], n: usize, dst: &mut [u64]) {
    let len = src.len().min(dst.len());
    let (q, r) = (n / 64, n % 64);
    if q >= len {
        return;
    }
    if r == 0 {
        for i in 0..len - q {
            dst[i] |= src[i + q];
        }
        return;
    }
    for i in 0..len - q {
        let hi = src[i + q] << r;
        let lo = if i + q + 1 < len {
            src[i + q + 1] >> (64 - r)
        } else {
            0
        };
        dst[i] |= hi | lo;
    }
}

/// `dst |= src` shifted right by `n` pixels: dst pixel x |= src pixel x − n.
pub fn or_shift_right(src: &[u64], n: usize, dst: &mut [u64]) {
    let len = src.len().min(dst.len());
    let (q, r) = (n / 64, n % 64);
    if q >= len {
        return;
    }
    if r == 0 {
        for i in q..len {
            dst[i] |= src[i - q];
        }
        return;
    }
    for i in q..len {
        let lo = src[i - q] >> r;
        let hi = if i > q { src[i - q - 1] << (64 - r) } else { 0 };
        dst[i] |= hi | lo;
    }
}

/// `row` dilated horizontally by `k` pixels each way: pixel x becomes the OR of pixels
/// x − k ..= x + k. Works in place with one scratch row, O(log k) passes, by doubling the
/// window: a window of half-width h grows to 2h + 1 with one shift each way by h + 1.
/// Padding bits of `row` must be zero on entry; they may be set on return.
pub fn dilate_row(row: &mut [u64], k: usize, scratch: &mut [u64]) {
    let mut h = 0usize;
    while h < k {
        let step = (h + 1).min(k - h);
        scratch[..row.len()].copy_from_slice(row);
        or_shift_left(&scratch[..row.len()], step, row);
        or_shift_right(&scratch[..row.len()], step, row);
        h += step;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn get(v: &[u64], x: usize) -> bool {
        (v[x / 64] >> (63 - x % 64)) & 1 == 1
    }

    #[test]
    fn shifts_match_per_pixel_moves() {
        let src = [
            0x8000_0000_0000_0001u64,
            0x0123_4567_89ab_cdef,
            0xf000_0000_0000_000f,
        ];
        for n in [0usize, 1, 5, 63, 64, 65, 130, 200] {
            let mut l = [0u64; 3];
            shift_left(&src, n, &mut l);
            let mut r = [0u64; 3];
            or_shift_right(&src, n, &mut r);
            for x in 0..192 {
                let want_l = x + n < 192 && get(&src, x + n);
                assert_eq!(get(&l, x), want_l, "left {n} at {x}");
                let want_r = x >= n && get(&src, x - n);
                assert_eq!(get(&r, x), want_r, "right {n} at {x}");
            }
        }
    }

    #[test]
    fn dilate_row_matches_window_or() {
        let src = [
            0x0000_0100_0000_0000u64,
            0x8000_0000_0000_0000,
            0x0000_0000_0000_0001,
        ];
        for k in [0usize, 1, 2, 3, 7, 20, 64, 100] {
            let mut row = src;
            let mut scratch = [0u64; 3];
            dilate_row(&mut row, k, &mut scratch);
            for x in 0..192usize {
                let lo = x.saturating_sub(k);
                let hi = (x + k).min(191);
                let want = (lo..=hi).any(|t| get(&src, t));
                assert_eq!(get(&row, x), want, "k {k} at {x}");
            }
        }
    }
}
