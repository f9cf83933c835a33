//! Vector films on the same sheets as the raster path: `films-vector.pdf` has one page per
//! raster sheet, each film piece at exactly the raster piece's pixel-aligned position
//! (`films::piece_pixels`), tiles clipped to the same pixel blocks, and the same captions and
//! tile alignment marks.
//!
//! # Placement
//! A film point at film mm (u, v) is raster film pixel (u/kx, fh − v/ky) (`kx`, `ky` the film's
//! pitch in mm, `fh` its height in pixels), which the raster sheet puts at sheet pixel
//! (left − sx + u/kx, top − sy + fh − v/ky). The raster PDF page puts sheet pixel row 0 at
//! the top of the page, so in points:
//! ```text
//! x_pt = (left − sx)·72/dpi_x + u·72/(dpi_x·kx)
//! y_pt = page_h − (top − sy + fh)·72/dpi_y + v·72/(dpi_y·ky)
//! ```
//! which is written as one `cm` matrix per piece.

use super::compose::{compose_film, VectorFilm};
use super::flatten::{FilmSpace, Flattener};
use super::{ops, svg, Region, VectorOptions};
use crate::film::compose::{BoardFrame, FilmJob};
use crate::film::marks;
use crate::films::sheets::tile_mark_shapes;
use crate::films::{caption_shapes, drill_files, piece_pixels, MadeFilm, StagedDir};
use crate::layers::LayerFunction;
use crate::load::{Board, Content};
use crate::output::pdf::{LineArt, PageSize, PdfPage};
use crate::process::Profile;
use crate::sheet::{Layout, SheetPlan};

/// Decimals of film-mm coordinates in the PDF: 1e-5 mm = 10 nm.
pub const PDF_DECIMALS: usize = 5;

/// The label of the vector film: the raster label, except that the realized edge offset is
/// the requested one (the vector path applies it exactly).
pub fn vector_label(made: &MadeFilm) -> Vec<String> {
    let mut info = made.label.clone();
    info.edge_offset_um_realized = info.edge_offset_um_requested;
    marks::label_lines(&info)
}

/// Composes the vector film of one made film. `None` when its source image is not in the
/// board (it always is for films made from that board).
pub fn vector_film_for(
    board: &Board,
    made: &MadeFilm,
    frame: &BoardFrame,
    profile: &Profile,
    opts: &VectorOptions,
) -> Option<VectorFilm> {
    let image = board.files.iter().find_map(|f| match &f.content {
        Content::Gerber(g) if f.name == made.source => Some(&g.image),
        _ => None,
    })?;
    let drills = if made.id.function == LayerFunction::Copper {
        drill_files(board)
    } else {
        Vec::new()
    };
    let job = FilmJob {
        image,
        recipe: &made.recipe,
        drills: &drills,
        frame,
        label: vector_label(made),
        label_mirrored: made.label.mirrored_in_board(),
        face: Some(made.label.side),
        stack_targets: profile.films.copies > 1,
        opts: &profile.artwork,
    };
    Some(compose_film(&job, opts))
}

/// Points per mm (ISO 32000-1 §8.3.2.1: 72 pt per inch).
const PT_PER_MM: f64 = 72.0 / 25.4;

fn area(region: &Region, matrix: [f64; 6], clip_pt: Option<[f64; 4]>) -> LineArt {
    LineArt::Area {
        rings: region
            .iter()
            .flatten()
            .map(|r| r.iter().map(|p| (p[0], p[1])).collect())
            .collect(),
        matrix,
        even_odd: true,
        decimals: PDF_DECIMALS,
        clip_pt,
    }
}

/// One page: the pieces of `plan` (film index into `films` / `vfilms`) and the captions.
pub fn vector_page(
    plan: &SheetPlan,
    films: &[MadeFilm],
    vfilms: &[VectorFilm],
    profile: &Profile,
    tolerance_mm: f64,
) -> PdfPage<'static> {
    let (dpi_x, dpi_y) = (profile.dpi_x(), profile.dpi_y());
    let size = PageSize::from_mm(plan.width_mm, plan.height_mm);
    let sheet_h = (plan.height_mm / 25.4 * dpi_y).round() as usize;
    let page_h = size.height_pt;
    let mut page = PdfPage::new(size);
    let mut captions = Vec::new();
    for p in &plan.placements {
        let (Some(film), Some(vf)) = (films.get(p.film), vfilms.get(p.film)) else {
            continue;
        };
        let map = &film.rendered.map;
        let (fw, fh) = (map.width, map.height);
        let (left, top, (sx, sy, cw, ch)) = piece_pixels(p, (fw, fh), (dpi_x, dpi_y), sheet_h);
        let (kx, ky) = (25.4 / map.dpi_x, 25.4 / map.dpi_y);
        let matrix = [
            72.0 / (dpi_x * kx),
            0.0,
            0.0,
            72.0 / (dpi_y * ky),
            (left - sx as i64) as f64 * 72.0 / dpi_x,
            page_h - (top - sy as i64 + fh as i64) as f64 * 72.0 / dpi_y,
        ];
        // The piece's pixel block on the sheet, as the raster blit copies it.
        let clip = [
            left as f64 * 72.0 / dpi_x,
            page_h - (top + ch as i64) as f64 * 72.0 / dpi_y,
            (left + cw as i64) as f64 * 72.0 / dpi_x,
            page_h - top as f64 * 72.0 / dpi_y,
        ];
        page.art.push(area(&vf.black, matrix, Some(clip)));
        captions.extend(caption_shapes(film, p, profile.films.copies));
        captions.extend(tile_mark_shapes(film, p, profile, sheet_h));
    }
    if !captions.is_empty() {
        // Captions are drawn in sheet mm on the raster sheet's grid, whose top row is the
        // page's top edge.
        let sheet = FilmSpace {
            ax: 1.0,
            cx: 0.0,
            ay: 1.0,
            cy: 0.0,
            width_mm: plan.width_mm,
            height_mm: plan.height_mm,
        };
        let fl = Flattener {
            space: sheet,
            tolerance_mm,
        };
        let rings: Vec<_> = captions.iter().flat_map(|s| fl.rings(s)).collect();
        let region = ops::simplify(&rings);
        let matrix = [
            PT_PER_MM,
            0.0,
            0.0,
            PT_PER_MM,
            0.0,
            page_h - sheet_h as f64 * 72.0 / dpi_y,
        ];
        page.art.push(area(&region, matrix, None));
    }
    page
}

/// Every vector film of the job and its pages.
pub fn vector_pages(
    films: &[MadeFilm],
    vfilms: &[VectorFilm],
    layout: &Layout,
    profile: &Profile,
    tolerance_mm: f64,
) -> Vec<PdfPage<'static>> {
    layout
        .sheets
        .iter()
        .map(|plan| vector_page(plan, films, vfilms, profile, tolerance_mm))
        .collect()
}

/// Writes `films-vector.pdf` and one `<film key>.svg` per film into the staged output
/// folder. Returns the file names written.
pub fn write_vector_outputs(
    staged: &StagedDir,
    board: &Board,
    films: &[MadeFilm],
    frame: &BoardFrame,
    layout: &Layout,
    profile: &Profile,
) -> Result<Vec<String>, String> {
    let opts = VectorOptions::default();
    let mut vfilms = Vec::with_capacity(films.len());
    for f in films {
        let vf = vector_film_for(board, f, frame, profile, &opts)
            .ok_or_else(|| format!("{}: the layer image is missing", f.title))?;
        vfilms.push(vf);
    }
    let mut written = Vec::new();
    for (f, vf) in films.iter().zip(&vfilms) {
        let name = format!("{}.svg", f.key);
        let text = svg::svg_text(vf, &f.title);
        let path = staged.path(&name);
        crate::output::write_atomically(&path, |w| {
            use std::io::Write;
            w.write_all(text.as_bytes())
                .map_err(|e| crate::output::OutputError::Io {
                    path: path.clone(),
                    source: e,
                })
        })
        .map_err(|e| e.to_string())?;
        written.push(name);
    }
    let tolerance = opts.tolerance_mm(profile.dpi_x(), profile.dpi_y());
    let pages = vector_pages(films, &vfilms, layout, profile, tolerance);
    let name = "films-vector.pdf".to_string();
    crate::output::pdf::write_pdf(&staged.path(&name), &pages).map_err(|e| e.to_string())?;
    written.push(name);
    Ok(written)
}
