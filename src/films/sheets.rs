//! Sheets: laying films out on the printer's sheets, captions, and composing each sheet's
//! bitmap.

use super::plan::MadeFilm;
use super::select::function_order;
use super::summary::PlacementReport;
use super::FilmsError;
use crate::image::Point;
use crate::process::Profile;
use crate::raster::{render, Affine, Bitmap, DeviceMap};
use crate::sheet::{self, FilmRequest, Layout, Orientation};

/// Height reserved above every piece on a sheet for its caption, mm.
const CAPTION_MM: f64 = 3.5;
const CAPTION_CAP_MM: f64 = 1.6;
const CAPTION_PEN_MM: f64 = 0.16;

/// Width of the band beside a tile's film block that holds its alignment marks, mm
/// (sheet::Tile::bands says which edges get one).
pub const TILE_BAND_MM: f64 = 3.0;
/// Pen of the alignment marks, mm: the caption's, thin but well above a 300 dpi pixel.
const MARK_PEN_MM: f64 = CAPTION_PEN_MM;
/// Clear space between a mark and the film block, mm, so no mark touches the artwork.
const MARK_CLEAR_MM: f64 = 0.5;
/// Longest arm of a mark (along the overlap strip), mm.
const MARK_ARM_MM: f64 = 2.0;
/// Cap height of the label naming the join between two marks, mm.
const MARK_LABEL_CAP_MM: f64 = 1.0;

/// A film's size in mm, as laid out: its bitmap at the film's resolution.
fn film_size_mm(f: &MadeFilm) -> (f64, f64) {
    (
        f.rendered.bitmap.width() as f64 * 25.4 / f.recipe.dpi_x,
        f.rendered.bitmap.height() as f64 * 25.4 / f.recipe.dpi_y,
    )
}

/// Lays the films out on sheets. Copper films form one group and mask films another, so
/// each pair is printed in one pass and shares the printer's scale error.
pub fn lay_out(films: &[MadeFilm], profile: &Profile) -> Result<Layout, FilmsError> {
    let requests: Vec<FilmRequest> = films
        .iter()
        .enumerate()
        .map(|(i, f)| {
            let (width_mm, height_mm) = film_size_mm(f);
            FilmRequest {
                id: i,
                width_mm,
                height_mm,
                copies: profile.films.copies,
                group: Some(function_order(f.id.function)),
            }
        })
        .collect();
    let mut spec = profile.sheet.clone();
    spec.gap_mm = spec.gap_mm.max(CAPTION_MM + 1.0);
    // Room above every piece for its caption (see CAPTION_MM), below the edge that is the top
    // of the page as laid out: the portrait top edge, or in landscape the portrait left or
    // right edge (drivers turn a landscape page either way; see sheet::Margins::for_orientation).
    // The orientation is therefore chosen here, by the rule of sheet::layout for `auto`:
    // fewer sheets, then fewer tiles, then portrait.
    let oriented = |landscape: bool| {
        let mut s = spec.clone();
        if landscape {
            s.orientation = Orientation::Landscape;
            s.margins.left_mm += CAPTION_MM;
            s.margins.right_mm += CAPTION_MM;
        } else {
            s.orientation = Orientation::Portrait;
            s.margins.top_mm += CAPTION_MM;
        }
        // Tiles are packed with their mark bands (TILE_BAND_MM), so tile and marks fit.
        sheet::layout_with_mark_bands(&requests, &s, TILE_BAND_MM)
    };
    let chosen = match spec.orientation {
        Orientation::Portrait => oriented(false),
        Orientation::Landscape => oriented(true),
        Orientation::Auto => match (oriented(false), oriented(true)) {
            (Ok(p), Ok(l)) => {
                let fewer = (l.sheets.len(), l.tile_count()) < (p.sheets.len(), p.tile_count());
                Ok(if fewer { l } else { p })
            }
            (Ok(p), Err(_)) => Ok(p),
            (Err(_), Ok(l)) => Ok(l),
            (Err(e), Err(_)) => Err(e),
        },
    };
    chosen.map_err(|e| FilmsError::Layout(e.to_string()))
}

/// ORs `n` bits of `src` starting at bit `sx` into `dst` starting at bit `dx`
/// (most significant bit first, as in raster::Bitmap).
fn or_bits(dst: &mut [u64], dx: usize, src: &[u64], sx: usize, n: usize) {
    let read = |pos: usize| -> u64 {
        let (w, o) = (pos / 64, pos % 64);
        let a = src.get(w).copied().unwrap_or(0);
        if o == 0 {
            a
        } else {
            (a << o) | (src.get(w + 1).copied().unwrap_or(0) >> (64 - o))
        }
    };
    let mut done = 0;
    while done < n {
        let take = (n - done).min(64);
        let mut v = read(sx + done);
        if take < 64 {
            v &= !(u64::MAX >> take);
        }
        let pos = dx + done;
        let (w, o) = (pos / 64, pos % 64);
        if let Some(d) = dst.get_mut(w) {
            *d |= v >> o;
        }
        if o > 0 {
            if let Some(d) = dst.get_mut(w + 1) {
                *d |= v << (64 - o);
            }
        }
        done += take;
    }
}

/// ORs the pixel block `(sx, sy, w, h)` of `src` into `dst` at (`dx`, `dy`), clipped to `dst`.
fn blit(dst: &mut Bitmap, dx: i64, dy: i64, src: &Bitmap, block: (usize, usize, usize, usize)) {
    let (sx, sy, w, h) = block;
    for r in 0..h {
        let ty = dy + r as i64;
        if ty < 0 || ty as usize >= dst.height() || sy + r >= src.height() {
            continue;
        }
        let (mut x0, mut s0, mut n) = (dx, sx, w.min(src.width().saturating_sub(sx)));
        if x0 < 0 {
            let cut = (-x0) as usize;
            if cut >= n {
                continue;
            }
            x0 = 0;
            s0 += cut;
            n -= cut;
        }
        let x0 = x0 as usize;
        if x0 >= dst.width() {
            continue;
        }
        let n = n.min(dst.width() - x0);
        let srow = src.row(sy + r).to_vec();
        or_bits(dst.row_mut(ty as usize), x0, &srow, s0, n);
    }
}

fn caption(film: &MadeFilm, copy: u32, copies: u32, tile: Option<&sheet::Tile>) -> String {
    let mut s = format!(
        "{} - {}",
        film.title,
        if film.recipe.mirror {
            "mirrored"
        } else {
            "as drawn"
        }
    );
    if copies > 1 {
        s.push_str(&format!(" - copy {}/{}", copy + 1, copies));
    }
    if let Some(t) = tile {
        s.push_str(&format!(
            " - tile row {} col {} of {}x{}",
            t.row + 1,
            t.col + 1,
            t.rows,
            t.cols
        ));
    }
    s
}

/// Where a piece goes on a sheet of `sheet_h` pixel rows at `dpi`: its top-left pixel on the
/// sheet (`left`, `top`) and the block `(sx, sy, w, h)` of the film's pixels it shows (the
/// whole film, or the tile's part of it). Shared by the raster sheets and the vector pages.
pub fn piece_pixels(
    p: &sheet::Placement,
    film_px: (usize, usize),
    dpi: (f64, f64),
    sheet_h: usize,
) -> (i64, i64, (usize, usize, usize, usize)) {
    let (dpi_x, dpi_y) = dpi;
    let (fw, fh) = film_px;
    // The piece's top-left pixel on the sheet (sheet y is up in mm, down in pixels).
    let left = (p.x_mm / 25.4 * dpi_x).round() as i64;
    let top = sheet_h as i64 - ((p.y_mm + p.height_mm) / 25.4 * dpi_y).round() as i64;
    let block = match &p.tile {
        None => (0, 0, fw, fh),
        Some(t) => {
            let r = t.source_rect;
            let x0 = (r.min_x / 25.4 * dpi_x).round().max(0.0) as usize;
            let x1 = ((r.max_x / 25.4 * dpi_x).round() as usize).min(fw);
            let y_top = (fh as f64 - r.max_y / 25.4 * dpi_y).round().max(0.0) as usize;
            let y_bot = ((fh as f64 - r.min_y / 25.4 * dpi_y).round() as usize).min(fh);
            (
                x0,
                y_top,
                x1.saturating_sub(x0),
                y_bot.saturating_sub(y_top),
            )
        }
    };
    (left, top, block)
}

/// The caption above a piece (above its top mark band, if any), as strokes in sheet mm
/// (origin lower-left, y up).
pub fn caption_shapes(
    film: &MadeFilm,
    p: &sheet::Placement,
    copies: u32,
) -> Vec<crate::image::Shape> {
    let text = caption(film, p.copy, copies, p.tile.as_ref());
    crate::film::font::text_shapes(
        &text,
        // Half a pen in from the piece's left edge: a round pen centred on the piece's
        // edge would reach into the unprintable margin when the piece touches it.
        Point::new(
            p.x_mm + CAPTION_PEN_MM / 2.0,
            p.y_mm + p.height_mm + p.bands(TILE_BAND_MM).top + 1.0,
        ),
        CAPTION_CAP_MM,
        CAPTION_PEN_MM,
        false,
        0.0,
    )
}

/// The alignment marks of a tile in film-local mm (none for a whole film). The tiles are
/// cut again exactly as the layout cut them, so both neighbours compute the same numbers.
pub fn tile_marks_of(
    film: &MadeFilm,
    p: &sheet::Placement,
    profile: &Profile,
) -> Vec<sheet::TileMark> {
    let Some(tile) = &p.tile else {
        return Vec::new();
    };
    let (w, h) = film_size_mm(film);
    let all = sheet::split_into_tiles(w, h, tile.cols, tile.rows, profile.sheet.tile_overlap_mm);
    sheet::tile_marks(&all, tile, TILE_BAND_MM, MARK_PEN_MM / 2.0)
}

/// The label between the two marks of one join: `C1|2` between tile columns 1 and 2, `R1|2`
/// between rows 1 and 2 (1-based, as in the captions).
fn join_label(tile: &sheet::Tile, m: &sheet::TileMark) -> String {
    let (kind, a, b) = match m.edge {
        sheet::Edge::Top | sheet::Edge::Bottom => ('C', tile.col, m.neighbour[1]),
        sheet::Edge::Left | sheet::Edge::Right => ('R', tile.row, m.neighbour[0]),
    };
    format!("{kind}{}|{}", a.min(b) + 1, a.max(b) + 1)
}

/// A tile's alignment marks as strokes in sheet mm (origin lower-left, y up), placed on the
/// piece's pixel grid as [`piece_pixels`] places the film, so a mark's film coordinate lands on
/// the same film pixel on every tile. Each mark is a tick across its band with an arm along
/// the band pointing into the overlap strip (`├` at the strip's start, `┤` at its end, so the
/// two ends cannot be confused). Each band of a join also gets a label naming the join in the
/// middle of the strip, between the arms, when it fits. Nothing reaches into the film block.
pub fn tile_mark_shapes(
    film: &MadeFilm,
    p: &sheet::Placement,
    profile: &Profile,
    sheet_h_px: usize,
) -> Vec<crate::image::Shape> {
    let Some(tile) = &p.tile else {
        return Vec::new();
    };
    let (dpi_x, dpi_y) = (profile.dpi_x(), profile.dpi_y());
    let fb = &film.rendered.bitmap;
    let (left, top, (sx, sy, _, _)) =
        piece_pixels(p, (fb.width(), fb.height()), (dpi_x, dpi_y), sheet_h_px);
    // Film-local mm → sheet mm, through the pixel offsets of the piece.
    let ox = (left - sx as i64) as f64 * 25.4 / dpi_x;
    let oy = (sheet_h_px as i64 - (top - sy as i64 + fb.height() as i64)) as f64 * 25.4 / dpi_y;
    let at = |x: f64, y: f64| Point::new(ox + x, oy + y);
    let stroke = |a: Point, b: Point| crate::image::Shape::Stroke {
        start: a,
        end: b,
        arc: None,
        width: MARK_PEN_MM,
    };
    let half_tick = TILE_BAND_MM / 2.0 - MARK_CLEAR_MM;
    let mut shapes = Vec::new();
    for m in tile_marks_of(film, p, profile) {
        let (s0, s1) = m.overlap;
        let inner = s1 - s0 - MARK_PEN_MM;
        let arm = MARK_ARM_MM.min(inner / 2.0 - MARK_PEN_MM).max(0.0);
        let dir = match m.end {
            sheet::OverlapEnd::Start => 1.0,
            sheet::OverlapEnd::End => -1.0,
        };
        let c = m.at;
        let across_x = matches!(m.edge, sheet::Edge::Left | sheet::Edge::Right);
        if across_x {
            // Band left or right of the block: the tick runs along x, the arm along y.
            shapes.push(stroke(at(c.x - half_tick, c.y), at(c.x + half_tick, c.y)));
            if arm > 0.0 {
                shapes.push(stroke(at(c.x, c.y), at(c.x, c.y + dir * arm)));
            }
        } else {
            shapes.push(stroke(at(c.x, c.y - half_tick), at(c.x, c.y + half_tick)));
            if arm > 0.0 {
                shapes.push(stroke(at(c.x, c.y), at(c.x + dir * arm, c.y)));
            }
        }
        if m.end != sheet::OverlapEnd::Start {
            continue;
        }
        // The label, centred in the strip between the arms when it fits.
        let text = join_label(tile, &m);
        let width = crate::film::font::text_width_mm(&text, MARK_LABEL_CAP_MM);
        let room = inner - 2.0 * arm - 4.0 * MARK_PEN_MM;
        if width > room {
            continue;
        }
        let mid = (s0 + s1) / 2.0;
        let (origin, turn) = if across_x {
            (at(c.x + MARK_LABEL_CAP_MM / 2.0, mid - width / 2.0), 90.0)
        } else {
            (at(mid - width / 2.0, c.y - MARK_LABEL_CAP_MM / 2.0), 0.0)
        };
        shapes.extend(crate::film::font::text_shapes(
            &text,
            origin,
            MARK_LABEL_CAP_MM,
            MARK_PEN_MM,
            false,
            turn,
        ));
    }
    shapes
}

/// A sheet bitmap with its films, and the reports of the pieces on it.
pub struct RenderedSheet {
    pub bitmap: Bitmap,
    pub dpi: (f64, f64),
    pub size_mm: (f64, f64),
    pub pieces: Vec<(usize, PlacementReport)>,
}

/// Composes one sheet at the printer's resolution.
pub fn compose_sheet(
    number: usize,
    plan: &sheet::SheetPlan,
    films: &[MadeFilm],
    profile: &Profile,
) -> RenderedSheet {
    let (dpi_x, dpi_y) = (profile.dpi_x(), profile.dpi_y());
    let w = (plan.width_mm / 25.4 * dpi_x).round() as usize;
    let h = (plan.height_mm / 25.4 * dpi_y).round() as usize;
    let mut bitmap = Bitmap::new(w, h);
    let mut captions = Vec::new();
    let mut pieces = Vec::new();
    for p in &plan.placements {
        let film = &films[p.film];
        let fb = &film.rendered.bitmap;
        let (left, top, (sx, sy, cw, ch)) =
            piece_pixels(p, (fb.width(), fb.height()), (dpi_x, dpi_y), h);
        blit(&mut bitmap, left, top, fb, (sx, sy, cw, ch));
        let a = film.rendered.map.affine();
        let board_to_sheet_px = Affine {
            c: a.c + left as f64 - sx as f64,
            f: a.f + top as f64 - sy as f64,
            ..a
        };
        captions.extend(caption_shapes(film, p, profile.films.copies));
        captions.extend(tile_mark_shapes(film, p, profile, h));
        pieces.push((
            p.film,
            PlacementReport {
                sheet: number,
                copy: p.copy + 1,
                tile: p
                    .tile
                    .as_ref()
                    .map(|t| [t.row + 1, t.col + 1, t.rows, t.cols]),
                x_mm: p.x_mm,
                y_mm: p.y_mm,
                width_mm: p.width_mm,
                height_mm: p.height_mm,
                board_to_sheet_px,
                tile_marks: tile_marks_of(film, p, profile),
            },
        ));
    }
    if !captions.is_empty() {
        let map = DeviceMap::new(Point::new(0.0, 0.0), w, h, dpi_x, dpi_y);
        let objs: Vec<crate::image::Object> = captions
            .into_iter()
            .map(|shape| crate::image::Object {
                polarity: crate::image::Polarity::Dark,
                shape,
            })
            .collect();
        let cap = render(&objs, &map);
        blit(&mut bitmap, 0, 0, &cap, (0, 0, w, h));
    }
    RenderedSheet {
        bitmap,
        dpi: (dpi_x, dpi_y),
        size_mm: (plan.width_mm, plan.height_mm),
        pieces,
    }
}
