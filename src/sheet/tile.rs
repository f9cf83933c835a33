//! Cutting a film too big for the printable area into overlapping tiles.
//!
//! Along each axis the film is cut into `n` equal pieces, each at most the printable length,
//! neighbours overlapping by exactly the configured overlap. Equal pieces (rather than full
//! pieces and a sliver at the end) keep every piece large enough to handle and align, and make
//! every overlap the same.

use super::Tile;
use crate::image::Bounds;

/// Lengths within this of each other count as equal: it absorbs the rounding of inch-based
/// sheet sizes (215.9 mm) without letting anything visibly too large through (1 nm).
pub(crate) const FIT_TOLERANCE_MM: f64 = 1e-6;

/// How many pieces a film of `length` needs along one axis when at most `printable` fits and
/// neighbours overlap by `overlap` (all mm). Returned as f64 so absurd counts can be reported
/// instead of overflowing.
///
/// With `n` pieces of equal length `t` overlapping by `o`: `n·t − (n−1)·o = L`, and `t ≤ P`
/// gives `n ≥ (L − o) / (P − o)`; the smallest such whole `n` is used. Requires `printable >
/// overlap` whenever `length > printable`.
pub fn tile_count(length: f64, printable: f64, overlap: f64) -> f64 {
    if length <= printable + FIT_TOLERANCE_MM {
        return 1.0;
    }
    let mut n = ((length - overlap) / (printable - overlap) - 1e-9)
        .ceil()
        .max(2.0);
    // Guard the rounding of the division: the equal piece must really fit.
    if n.is_finite() && piece_length(length, n, overlap) > printable + FIT_TOLERANCE_MM {
        n += 1.0;
    }
    n
}

/// Length of each of `n` equal pieces overlapping by `overlap` that together span `length`.
fn piece_length(length: f64, n: f64, overlap: f64) -> f64 {
    (length + (n - 1.0) * overlap) / n
}

/// The `n` pieces along one axis as (start, end) from 0 to `length`.
fn pieces(length: f64, n: u32, overlap: f64) -> Vec<(f64, f64)> {
    if n <= 1 {
        return vec![(0.0, length)];
    }
    let t = piece_length(length, n as f64, overlap);
    let step = t - overlap;
    (0..n)
        .map(|i| {
            let start = i as f64 * step;
            // The last piece ends exactly at the film edge, free of accumulated rounding.
            let end = if i + 1 == n { length } else { start + t };
            (start, end)
        })
        .collect()
}

/// Cuts a `width_mm` × `height_mm` film into `cols` × `rows` tiles overlapping by
/// `overlap_mm`, in reading order (top row first, left to right).
///
/// # Guarantees
/// - The tiles' source rectangles together cover the film `[0, width] × [0, height]`.
/// - Horizontal neighbours overlap by exactly `overlap_mm` (up to rounding), and so do
///   vertical neighbours; outer tile edges lie on the film edges.
/// - All tiles of one film have the same size.
pub fn split_into_tiles(
    width_mm: f64,
    height_mm: f64,
    cols: u32,
    rows: u32,
    overlap_mm: f64,
) -> Vec<Tile> {
    let xs = pieces(width_mm, cols, overlap_mm);
    // Rows are counted from the top of the film; `pieces` measures from the top here and the
    // result is turned into film-local y (up) below.
    let ys_from_top = pieces(height_mm, rows, overlap_mm);
    let mut tiles = Vec::with_capacity(xs.len() * ys_from_top.len());
    for (row, &(top_down_start, top_down_end)) in ys_from_top.iter().enumerate() {
        for (col, &(x0, x1)) in xs.iter().enumerate() {
            // Exact at the film edges: the first piece starts at 0 and the last ends at
            // `height_mm` exactly, so 0 and `height_mm` come out exactly.
            let (min_y, max_y) = (height_mm - top_down_end, height_mm - top_down_start);
            tiles.push(Tile {
                row: row as u32,
                col: col as u32,
                rows,
                cols,
                source_rect: Bounds {
                    min_x: x0,
                    min_y,
                    max_x: x1,
                    max_y,
                },
            });
        }
    }
    tiles
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn count_matches_hand_arithmetic() {
        // 970 mm on 287 mm with 10 mm overlap: (970 − 10) / (287 − 10) = 3.47 → 4 pieces of
        // (970 + 3·10) / 4 = 250 mm.
        assert_eq!(tile_count(970.0, 287.0, 10.0), 4.0);
        assert_eq!(piece_length(970.0, 4.0, 10.0), 250.0);
        // Exactly two full pieces: 2·287 − 10 = 564 mm.
        assert_eq!(tile_count(564.0, 287.0, 10.0), 2.0);
        assert_eq!(tile_count(564.001, 287.0, 10.0), 3.0);
        assert_eq!(tile_count(287.0, 287.0, 10.0), 1.0);
    }

    #[test]
    fn single_tile_is_whole_film() {
        let t = split_into_tiles(50.0, 30.0, 1, 1, 10.0);
        assert_eq!(t.len(), 1);
        assert_eq!(
            t[0].source_rect,
            Bounds {
                min_x: 0.0,
                min_y: 0.0,
                max_x: 50.0,
                max_y: 30.0
            }
        );
    }
}
