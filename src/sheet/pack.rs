//! Shelf packing of films onto sheets.
//!
//! Each sheet's printable area is filled with shelves (rows) from the top down; pieces go
//! left to right along a shelf, `gap_mm` apart, and shelves are `gap_mm` apart. Pieces are
//! placed in "bundles" that should share a sheet: all copies of one film, or all films of one
//! group. A bundle goes on the first sheet where all of it fits, else on a new sheet; only when
//! it cannot fit even an empty sheet is it split, first into copies (copy k of each film of the
//! group together), then into single pieces. The rules are described in `docs/sheets.md`.

use super::tile::{split_into_tiles, tile_count, FIT_TOLERANCE_MM};
use super::{
    Bands, FilmRequest, Layout, LayoutError, Orientation, Placement, SheetPlan, SheetSpec, Tile,
};
use crate::image::Bounds;
use std::cmp::Ordering;
use std::collections::{BTreeMap, HashSet};

/// The most pieces (film copies and tiles) one layout may place. It bounds the packing work
/// (first fit tries every open sheet for every piece); real jobs place a few dozen.
pub const MAX_PIECES: u64 = 10_000;

/// Lays out `films` on sheets as `spec` says.
///
/// # Guarantees
/// - Deterministic: the same input gives the same layout.
/// - Every placement lies inside its sheet's printable area, and any two placements on one
///   sheet are at least `gap_mm` apart horizontally or vertically.
/// - A film larger than the printable area is tiled (see [`split_into_tiles`]); every other
///   copy is placed whole, unrotated.
/// - With `Orientation::Auto` the orientation needing fewer sheets is used, then the one with
///   fewer tiles, then portrait.
pub fn layout(films: &[FilmRequest], spec: &SheetSpec) -> Result<Layout, LayoutError> {
    layout_with_mark_bands(films, spec, 0.0)
}

/// Lays out `films` as [`layout`] does, with room for tile alignment marks: every tile is
/// packed together with its mark bands ([`Tile::bands`] of `band_mm`), so tile and bands fit
/// the printable area and stay `gap_mm` clear of other pieces and their bands.
///
/// # Guarantees
/// Those of [`layout`], where a tile's extent is its [`Placement::reserved_rect`]; the
/// placement itself is the film block only, and neighbouring tiles still overlap by exactly
/// `tile_overlap_mm` of film. With `band_mm = 0` the layout equals [`layout`]'s.
pub fn layout_with_mark_bands(
    films: &[FilmRequest],
    spec: &SheetSpec,
    band_mm: f64,
) -> Result<Layout, LayoutError> {
    if !(band_mm.is_finite() && band_mm >= 0.0) {
        return Err(LayoutError::BadSpec(format!(
            "The tile mark band is {band_mm} mm; it must be zero or more."
        )));
    }
    validate_spec(spec)?;
    validate_films(films)?;
    let candidates: &[bool] = match spec.orientation {
        Orientation::Portrait => &[false],
        Orientation::Landscape => &[true],
        Orientation::Auto => &[false, true],
    };
    let mut best: Option<Layout> = None;
    let mut first_error = None;
    for &landscape in candidates {
        match layout_oriented(films, spec, landscape, band_mm) {
            Ok(candidate) => {
                let better = match &best {
                    None => true,
                    // Strictly fewer sheets, then strictly fewer tiles; ties keep portrait.
                    Some(b) => {
                        (candidate.sheets.len(), candidate.tile_count())
                            < (b.sheets.len(), b.tile_count())
                    }
                };
                if better {
                    best = Some(candidate);
                }
            }
            Err(e) => {
                first_error.get_or_insert(e);
            }
        }
    }
    match (best, first_error) {
        (Some(layout), _) => Ok(layout),
        (None, Some(e)) => Err(e),
        (None, None) => unreachable!("at least one orientation is always tried"),
    }
}

fn validate_spec(spec: &SheetSpec) -> Result<(), LayoutError> {
    let bad = |msg: String| Err(LayoutError::BadSpec(msg));
    let (w, h) = (spec.size.width_mm, spec.size.height_mm);
    if !(w.is_finite() && h.is_finite() && w > 0.0 && h > 0.0) {
        return bad(format!(
            "The sheet {} is {w} × {h} mm; a sheet must be wider and taller than zero.",
            spec.size.name
        ));
    }
    let m = &spec.margins;
    for (edge, v) in [
        ("top", m.top_mm),
        ("right", m.right_mm),
        ("bottom", m.bottom_mm),
        ("left", m.left_mm),
    ] {
        if !(v.is_finite() && v >= 0.0) {
            return bad(format!(
                "The {edge} printer margin is {v} mm; margins must be zero or more."
            ));
        }
    }
    if !(spec.gap_mm.is_finite() && spec.gap_mm >= 0.0) {
        return bad(format!(
            "The gap between films is {} mm; it must be zero or more.",
            spec.gap_mm
        ));
    }
    if !(spec.tile_overlap_mm.is_finite() && spec.tile_overlap_mm >= 0.0) {
        return bad(format!(
            "The tile overlap is {} mm; it must be zero or more.",
            spec.tile_overlap_mm
        ));
    }
    if spec.max_sheets == 0 {
        return bad("The sheet limit is 0; allow at least one sheet.".into());
    }
    Ok(())
}

fn validate_films(films: &[FilmRequest]) -> Result<(), LayoutError> {
    let mut ids = HashSet::new();
    for f in films {
        let ok = |v: f64| v.is_finite() && v > 0.0;
        if !(ok(f.width_mm) && ok(f.height_mm)) {
            return Err(LayoutError::BadFilmSize {
                id: f.id,
                width_mm: f.width_mm,
                height_mm: f.height_mm,
            });
        }
        if !ids.insert(f.id) {
            return Err(LayoutError::DuplicateFilm(f.id));
        }
    }
    Ok(())
}

/// One thing to put on a sheet: a whole film copy or one tile of it.
#[derive(Debug, Clone)]
struct Piece {
    film: usize,
    copy: u32,
    /// The film block, mm.
    width: f64,
    height: f64,
    tile: Option<Tile>,
    /// Room for alignment marks beside the block (tiles only).
    bands: Bands,
}

impl Piece {
    /// The size the piece takes on the sheet: its block and its mark bands.
    fn outer(&self) -> (f64, f64) {
        let b = &self.bands;
        (
            self.width + b.left + b.right,
            self.height + b.top + b.bottom,
        )
    }
}

/// Pieces that should share a sheet: `by_film[f][copy]` holds the pieces of one copy of one
/// film (one piece, or its tiles), films in placement order.
struct Bundle {
    by_film: Vec<Vec<Vec<Piece>>>,
}

impl Bundle {
    /// Everything, copies of a film next to each other.
    fn whole(&self) -> Vec<Piece> {
        self.by_film.iter().flatten().flatten().cloned().collect()
    }

    /// Copy k of every film together (the films a printer prints in one pass).
    fn copy_sets(&self) -> Vec<Vec<Piece>> {
        let most = self.by_film.iter().map(Vec::len).max().unwrap_or(0);
        (0..most)
            .map(|k| {
                self.by_film
                    .iter()
                    .filter_map(|copies| copies.get(k))
                    .flatten()
                    .cloned()
                    .collect()
            })
            .collect()
    }

    fn tallest(&self) -> (f64, f64) {
        let mut h: f64 = 0.0;
        let mut w: f64 = 0.0;
        for p in self.by_film.iter().flatten().flatten() {
            let (pw, ph) = p.outer();
            h = h.max(ph);
            w = w.max(pw);
        }
        (h, w)
    }
}

/// Larger first by height, then width; then by id, so the order is total and deterministic.
fn larger_first(a: (f64, f64, usize), b: (f64, f64, usize)) -> Ordering {
    b.0.total_cmp(&a.0)
        .then(b.1.total_cmp(&a.1))
        .then(a.2.cmp(&b.2))
}

fn layout_oriented(
    films: &[FilmRequest],
    spec: &SheetSpec,
    landscape: bool,
    band_mm: f64,
) -> Result<Layout, LayoutError> {
    let (short, long) = spec.size.short_long_mm();
    let (sheet_w, sheet_h) = if landscape {
        (long, short)
    } else {
        (short, long)
    };
    let margins = spec.margins.for_orientation(landscape);
    let printable = margins.printable(sheet_w, sheet_h);
    let (pw, ph) = (
        printable.max_x - printable.min_x,
        printable.max_y - printable.min_y,
    );
    let sheet_name = format!(
        "{} {}",
        spec.size.name,
        if landscape { "landscape" } else { "portrait" }
    );
    if pw <= 0.0 || ph <= 0.0 {
        return Err(LayoutError::BadSpec(format!(
            "The printer margins leave no printable area on {sheet_name} ({sheet_w} × {sheet_h} \
             mm); make them smaller."
        )));
    }

    let mut total_pieces: u64 = 0;
    let mut pieces_of = BTreeMap::new(); // film id → pieces per copy
    for f in films {
        let (cols, rows, room_w, room_h) = tile_grid(f, spec.tile_overlap_mm, (pw, ph), band_mm);
        let tiled = cols > 1.0 || rows > 1.0;
        if (cols > 1.0 && spec.tile_overlap_mm >= room_w)
            || (rows > 1.0 && spec.tile_overlap_mm >= room_h)
        {
            let room = if (room_w, room_h) == (pw, ph) {
                format!("the printable area of {sheet_name} ({pw} × {ph} mm)")
            } else {
                format!(
                    "the room for one tile on {sheet_name} ({room_w} × {room_h} mm: the \
                     printable {pw} × {ph} mm less {band_mm} mm bands for alignment marks)"
                )
            };
            return Err(LayoutError::BadSpec(format!(
                "Film {} ({} × {} mm) must be tiled, but the tile overlap of {} mm is not \
                 smaller than {room}.",
                f.id, f.width_mm, f.height_mm, spec.tile_overlap_mm
            )));
        }
        let per_copy = cols * rows;
        if per_copy > spec.max_sheets as f64 {
            return Err(LayoutError::TooManyTiles {
                id: f.id,
                width_mm: f.width_mm,
                height_mm: f.height_mm,
                tiles: per_copy,
                sheet: sheet_name,
                limit: spec.max_sheets,
            });
        }
        total_pieces = total_pieces.saturating_add(per_copy as u64 * f.copies as u64);
        if total_pieces > MAX_PIECES {
            return Err(LayoutError::TooManyPieces {
                pieces: total_pieces,
                limit: MAX_PIECES,
            });
        }
        let one_copy: Vec<Piece> = if tiled {
            split_into_tiles(
                f.width_mm,
                f.height_mm,
                cols as u32,
                rows as u32,
                spec.tile_overlap_mm,
            )
            .into_iter()
            .map(|t| Piece {
                film: f.id,
                copy: 0,
                width: t.source_rect.width(),
                height: t.source_rect.height(),
                bands: t.bands(band_mm),
                tile: Some(t),
            })
            .collect()
        } else {
            vec![Piece {
                film: f.id,
                copy: 0,
                width: f.width_mm,
                height: f.height_mm,
                tile: None,
                bands: Bands::default(),
            }]
        };
        let copies: Vec<Vec<Piece>> = (0..f.copies)
            .map(|copy| {
                one_copy
                    .iter()
                    .map(|p| Piece { copy, ..p.clone() })
                    .collect()
            })
            .collect();
        pieces_of.insert(f.id, copies);
    }

    let mut bundles = make_bundles(films, &mut pieces_of);
    bundles.sort_by(|a, b| {
        let (ah, aw) = a.tallest();
        let (bh, bw) = b.tallest();
        larger_first((ah, aw, first_id(a)), (bh, bw, first_id(b)))
    });

    let mut packer = Packer {
        room: Room {
            width: pw,
            height: ph,
            gap: spec.gap_mm,
        },
        sheets: Vec::new(),
        max_sheets: spec.max_sheets,
        sheet_name: sheet_name.clone(),
        total_pieces,
    };
    for bundle in &bundles {
        if packer.place_together(&bundle.whole())? {
            continue;
        }
        for set in bundle.copy_sets() {
            if packer.place_together(&set)? {
                continue;
            }
            for piece in set {
                if !packer.place_together(std::slice::from_ref(&piece))? {
                    // Cannot happen: every piece fits the printable area by construction.
                    return Err(LayoutError::BadSpec(format!(
                        "Film {} does not fit on an empty {sheet_name} sheet.",
                        piece.film
                    )));
                }
            }
        }
    }

    let orientation = if landscape {
        Orientation::Landscape
    } else {
        Orientation::Portrait
    };
    let sheets = packer
        .sheets
        .into_iter()
        .map(|s| s.into_plan(sheet_w, sheet_h, printable))
        .collect();
    Ok(Layout {
        orientation,
        sheets,
    })
}

fn first_id(b: &Bundle) -> usize {
    b.by_film
        .iter()
        .flatten()
        .flatten()
        .map(|p| p.film)
        .min()
        .unwrap_or(usize::MAX)
}

/// How many tile columns and rows film `f` needs, and the room one tile may take along x and
/// y: the printable size less the mark bands its tiles carry ([`Tile::bands`]: top and bottom
/// when there are several columns, left and right when there are several rows). Bands can
/// make the other axis need tiling too, so the counts are recomputed until they settle; they
/// only grow, and each axis can switch bands on only once, so this ends after three rounds.
fn tile_grid(
    f: &FilmRequest,
    overlap: f64,
    (pw, ph): (f64, f64),
    band_mm: f64,
) -> (f64, f64, f64, f64) {
    let (mut cols, mut rows) = (1.0, 1.0);
    loop {
        let room_w = pw - if rows > 1.0 { 2.0 * band_mm } else { 0.0 };
        let room_h = ph - if cols > 1.0 { 2.0 * band_mm } else { 0.0 };
        let next_cols = tile_count(f.width_mm, room_w, overlap);
        let next_rows = tile_count(f.height_mm, room_h, overlap);
        let settled = next_cols == cols && next_rows == rows;
        // NaN or infinite counts (room at or below the overlap) are reported by the caller.
        if settled || !(next_cols.is_finite() && next_rows.is_finite()) {
            return (next_cols, next_rows, room_w, room_h);
        }
        (cols, rows) = (next_cols, next_rows);
    }
}

/// Groups pieces into bundles: one per group, one per ungrouped film. Films inside a bundle
/// are ordered larger first.
fn make_bundles(
    films: &[FilmRequest],
    pieces_of: &mut BTreeMap<usize, Vec<Vec<Piece>>>,
) -> Vec<Bundle> {
    let mut groups: BTreeMap<u32, Vec<&FilmRequest>> = BTreeMap::new();
    let mut bundles = Vec::new();
    for f in films {
        match f.group {
            Some(g) => groups.entry(g).or_default().push(f),
            None => bundles.push(vec![f]),
        }
    }
    bundles.extend(groups.into_values());
    bundles
        .into_iter()
        .map(|mut members| {
            members.sort_by(|a, b| {
                larger_first(
                    (a.height_mm, a.width_mm, a.id),
                    (b.height_mm, b.width_mm, b.id),
                )
            });
            Bundle {
                by_film: members
                    .iter()
                    .map(|f| pieces_of.remove(&f.id).unwrap_or_default())
                    .collect(),
            }
        })
        .filter(|b| b.by_film.iter().any(|copies| !copies.is_empty()))
        .collect()
}

/// A row of pieces; positions are relative to the printable area's top-left corner, down.
#[derive(Debug, Clone)]
struct Shelf {
    /// Distance from the printable top to the shelf's top edge.
    top: f64,
    height: f64,
    /// Right edge of the last piece, from the printable left edge.
    used_width: f64,
}

#[derive(Debug, Clone, Default)]
struct SheetState {
    shelves: Vec<Shelf>,
    /// (piece, shelf index, x from the printable left edge)
    placed: Vec<(Piece, usize, f64)>,
}

/// The printable area's size and the gap between pieces, mm.
#[derive(Debug, Clone, Copy)]
struct Room {
    width: f64,
    height: f64,
    gap: f64,
}

/// Finds room for `piece` on an existing shelf, or on a new shelf below the last, and books
/// it in `shelves`. Returns the shelf index and the x offset from the printable left edge.
fn book(shelves: &mut Vec<Shelf>, piece: &Piece, room: Room) -> Option<(usize, f64)> {
    let tol = FIT_TOLERANCE_MM;
    let (width, height) = piece.outer();
    let shelf_count = shelves.len();
    for (index, shelf) in shelves.iter_mut().enumerate() {
        let x = shelf.used_width + room.gap;
        if x + width > room.width + tol {
            continue;
        }
        // The last shelf may grow downwards when there is room below it.
        let fits_height = height <= shelf.height + tol
            || (index + 1 == shelf_count && shelf.top + height <= room.height + tol);
        if fits_height {
            shelf.height = shelf.height.max(height);
            shelf.used_width = x + width;
            return Some((index, x));
        }
    }
    let top = match shelves.last() {
        Some(s) => s.top + s.height + room.gap,
        None => 0.0,
    };
    if top + height > room.height + tol || width > room.width + tol {
        return None;
    }
    shelves.push(Shelf {
        top,
        height,
        used_width: width,
    });
    Some((shelves.len() - 1, 0.0))
}

impl SheetState {
    /// Books all `pieces` on this sheet, or changes nothing and returns false.
    fn place_all(&mut self, pieces: &[Piece], room: Room) -> bool {
        let mut shelves = self.shelves.clone();
        let mut spots = Vec::with_capacity(pieces.len());
        for piece in pieces {
            match book(&mut shelves, piece, room) {
                Some(spot) => spots.push(spot),
                None => return false,
            }
        }
        self.shelves = shelves;
        self.placed.extend(
            pieces
                .iter()
                .zip(spots)
                .map(|(p, (shelf, x))| (p.clone(), shelf, x)),
        );
        true
    }

    fn into_plan(mut self, sheet_w: f64, sheet_h: f64, printable: Bounds) -> SheetPlan {
        // Reading order: shelves top to bottom, left to right.
        self.placed
            .sort_by(|a, b| a.1.cmp(&b.1).then(a.2.total_cmp(&b.2)));
        let shelves = self.shelves;
        let placements = self
            .placed
            .into_iter()
            .map(|(p, shelf, x)| Placement {
                film: p.film,
                copy: p.copy,
                // The booked spot is the piece with its mark bands; the placement is the block.
                x_mm: printable.min_x + x + p.bands.left,
                // Pieces hang from their shelf's top edge.
                y_mm: printable.max_y - shelves[shelf].top - p.bands.top - p.height,
                width_mm: p.width,
                height_mm: p.height,
                tile: p.tile,
            })
            .collect();
        SheetPlan {
            width_mm: sheet_w,
            height_mm: sheet_h,
            printable,
            placements,
        }
    }
}

struct Packer {
    room: Room,
    sheets: Vec<SheetState>,
    max_sheets: u32,
    sheet_name: String,
    total_pieces: u64,
}

impl Packer {
    /// Places all `pieces` on one sheet: the first open sheet where they all fit, else a new
    /// sheet. Returns false (placing nothing) when they do not fit even an empty sheet.
    fn place_together(&mut self, pieces: &[Piece]) -> Result<bool, LayoutError> {
        for sheet in &mut self.sheets {
            if sheet.place_all(pieces, self.room) {
                return Ok(true);
            }
        }
        let mut fresh = SheetState::default();
        if !fresh.place_all(pieces, self.room) {
            return Ok(false);
        }
        if self.sheets.len() >= self.max_sheets as usize {
            return Err(LayoutError::TooManySheets {
                limit: self.max_sheets,
                sheet: self.sheet_name.clone(),
                pieces: self.total_pieces,
            });
        }
        self.sheets.push(fresh);
        Ok(true)
    }
}
