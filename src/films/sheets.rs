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

/// Lays the films out on sheets. Copper films form one group and mask films another, so
/// each pair is printed in one pass and shares the printer's scale error.
pub fn lay_out(films: &[MadeFilm], profile: &Profile) -> Result<Layout, FilmsError> {
    let requests: Vec<FilmRequest> = films
        .iter()
        .enumerate()
        .map(|(i, f)| FilmRequest {
            id: i,
            width_mm: f.rendered.bitmap.width() as f64 * 25.4 / f.recipe.dpi_x,
            height_mm: f.rendered.bitmap.height() as f64 * 25.4 / f.recipe.dpi_y,
            copies: profile.films.copies,
            group: Some(function_order(f.id.function)),
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
        sheet::layout(&requests, &s)
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

/// The caption above a piece, as strokes in sheet mm (origin lower-left, y up).
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
        Point::new(p.x_mm + CAPTION_PEN_MM / 2.0, p.y_mm + p.height_mm + 1.0),
        CAPTION_CAP_MM,
        CAPTION_PEN_MM,
        false,
        0.0,
    )
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
