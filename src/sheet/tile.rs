//! Cutting a film too big for the printable area into overlapping tiles.
//!
//! Along each axis the film is cut into `n` equal pieces, each at most the printable length,
//! neighbours overlapping by exactly the configured overlap. Equal pieces (rather than full
//! pieces and a sliver at the end) keep every piece large enough to handle and align, and make
//! every overlap the same.

use super::Tile;
use crate::image::{Bounds, Point};
use serde::Serialize;

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

/// The edge of a tile's film block along which a mark band lies.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Edge {
    Top,
    Bottom,
    Left,
    Right,
}

/// Which end of an overlap strip a mark stands at: `Start` at the smaller film coordinate
/// (the left end of a strip between columns, the lower end of a strip between rows).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum OverlapEnd {
    Start,
    End,
}

/// One alignment mark of a tile. The neighbour carries a mark with the same `edge`, `end`
/// and `at`, so the two coincide when the tiles are laid over each other in register.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TileMark {
    /// The neighbouring tile sharing this mark: (row, col), 0-based.
    pub neighbour: [u32; 2],
    pub edge: Edge,
    pub end: OverlapEnd,
    /// The mark's reference point in film-local mm (origin lower-left, y up): on the band's
    /// centre line, across from the overlap's end moved `inset_mm` into the overlap. It lies
    /// in the band, outside the film.
    pub at: Point,
    /// The overlap strip's extent along the shared edge, film-local mm: (start, end).
    pub overlap: (f64, f64),
}

/// The alignment marks of `tile`, one of the tiles `all` of one film (as made by
/// [`split_into_tiles`]), whose bands are `band_mm` wide ([`Tile::bands`]).
///
/// For each neighbour, the overlap strip the two share has two ends; each end gets a mark in
/// both bands that run across the strip (above and below a strip between columns, left and
/// right of a strip between rows), `inset_mm` inside the strip so that a mark's pen stays off
/// the film block's corner. Strips narrower than `2·inset_mm` get no marks.
pub fn tile_marks(all: &[Tile], tile: &Tile, band_mm: f64, inset_mm: f64) -> Vec<TileMark> {
    let mut marks = Vec::new();
    let r = tile.source_rect;
    let find = |row: i64, col: i64| {
        all.iter()
            .find(|t| t.row as i64 == row && t.col as i64 == col)
    };
    let (row, col) = (tile.row as i64, tile.col as i64);
    // Neighbours across a vertical edge: the strip runs along x, marks sit above and below.
    for dc in [-1i64, 1] {
        let Some(n) = find(row, col + dc) else {
            continue;
        };
        let (start, end) = if dc > 0 {
            (n.source_rect.min_x, r.max_x)
        } else {
            (r.min_x, n.source_rect.max_x)
        };
        if end - start < 2.0 * inset_mm {
            continue;
        }
        for (edge, y) in [
            (Edge::Top, r.max_y + band_mm / 2.0),
            (Edge::Bottom, r.min_y - band_mm / 2.0),
        ] {
            for (which, x) in [
                (OverlapEnd::Start, start + inset_mm),
                (OverlapEnd::End, end - inset_mm),
            ] {
                marks.push(TileMark {
                    neighbour: [n.row, n.col],
                    edge,
                    end: which,
                    at: Point::new(x, y),
                    overlap: (start, end),
                });
            }
        }
    }
    // Neighbours across a horizontal edge: the strip runs along y, marks sit left and right.
    // Rows count from the top, so the row above has the larger y.
    for dr in [-1i64, 1] {
        let Some(n) = find(row + dr, col) else {
            continue;
        };
        let (start, end) = if dr < 0 {
            (n.source_rect.min_y, r.max_y)
        } else {
            (r.min_y, n.source_rect.max_y)
        };
        if end - start < 2.0 * inset_mm {
            continue;
        }
        for (edge, x) in [
            (Edge::Left, r.min_x - band_mm / 2.0),
            (Edge::Right, r.max_x + band_mm / 2.0),
        ] {
            for (which, y) in [
                (OverlapEnd::Start, start + inset_mm),
                (OverlapEnd::End, end - inset_mm),
            ] {
                marks.push(TileMark {
                    neighbour: [n.row, n.col],
                    edge,
                    end: which,
                    at: Point::new(x, y),
                    overlap: (start, end),
                });
            }
        }
    }
    marks
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
    fn neighbours_share_their_marks() {
        // 2 × 2 tiles of a 100 × 80 mm film with 10 mm overlap: 55 × 45 mm each, columns
        // at x 0–55 and 45–100, rows at y 35–80 (top) and 0–45 (hand arithmetic).
        let all = split_into_tiles(100.0, 80.0, 2, 2, 10.0);
        let at = |t: &Tile| tile_marks(&all, t, 3.0, 0.1);
        let (tl, tr, bl) = (at(&all[0]), at(&all[1]), at(&all[2]));
        assert_eq!(tl.len(), 8);
        // The top-left tile's marks shared with the top-right one equal that tile's own.
        let shared = |a: &[TileMark], b: &[TileMark], a_rc: [u32; 2]| {
            let mut x: Vec<_> = a.iter().filter(|m| m.neighbour != a_rc).collect();
            x.retain(|m| {
                b.iter()
                    .any(|o| o.at == m.at && o.edge == m.edge && o.end == m.end)
            });
            x.len()
        };
        assert_eq!(shared(&tl, &tr, [1, 0]), 4);
        assert_eq!(shared(&tl, &bl, [0, 1]), 4);
        let top_start = tl
            .iter()
            .find(|m| m.neighbour == [0, 1] && m.edge == Edge::Top && m.end == OverlapEnd::Start)
            .unwrap();
        assert_eq!(top_start.at, Point::new(45.1, 81.5));
        assert_eq!(top_start.overlap, (45.0, 55.0));
        let left_end = tl
            .iter()
            .find(|m| m.neighbour == [1, 0] && m.edge == Edge::Left && m.end == OverlapEnd::End)
            .unwrap();
        assert_eq!(left_end.at, Point::new(-1.5, 44.9));
        // An untiled film has no marks.
        let one = split_into_tiles(50.0, 30.0, 1, 1, 10.0);
        assert!(tile_marks(&one, &one[0], 3.0, 0.1).is_empty());
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
