//! What a run made and decided: the summary, the manifest's records and the terminal table.

use super::plan::{polarity_words, MadeFilm};
use crate::image::{Bounds, Point};
use crate::raster::{Affine, DeviceMap};
use serde::Serialize;
use std::path::Path;

/// One film's entry in the summary and the manifest.
#[derive(Debug, Clone, Serialize)]
pub struct FilmReport {
    pub key: String,
    pub title: String,
    pub source: String,
    pub side: String,
    pub polarity: String,
    pub mirrored: bool,
    pub edge_offset_requested_um: f64,
    pub edge_offset_realized_um: [f64; 2],
    pub edge_offset_realized_px: [i64; 2],
    pub scale: [f64; 2],
    pub dpi: [f64; 2],
    pub size_px: [usize; 2],
    pub size_mm: [f64; 2],
    /// Board mm → film pixels (px = a·x + b·y + c, py = d·x + e·y + f).
    pub board_to_film_px: Affine,
    pub map: DeviceMap,
    pub reasons: Vec<String>,
    pub placements: Vec<PlacementReport>,
    pub warnings: Vec<String>,
}

/// Where one copy or tile of a film went.
#[derive(Debug, Clone, Serialize)]
pub struct PlacementReport {
    /// 1-based sheet number.
    pub sheet: usize,
    pub copy: u32,
    /// (row, col, rows, cols), 1-based, when the film is tiled.
    pub tile: Option<[u32; 4]>,
    /// Lower-left corner of the piece on the sheet, mm from the sheet's lower-left corner.
    pub x_mm: f64,
    pub y_mm: f64,
    pub width_mm: f64,
    pub height_mm: f64,
    /// Board mm → sheet pixels (top-left origin) for this piece.
    pub board_to_sheet_px: Affine,
    /// The tile's alignment marks, film-local mm (empty for a whole film).
    pub tile_marks: Vec<crate::sheet::TileMark>,
}

/// One output sheet.
#[derive(Debug, Clone, Serialize)]
pub struct SheetReport {
    pub number: usize,
    pub png: String,
    pub pdf_page: usize,
    pub size_mm: [f64; 2],
    pub size_px: [usize; 2],
}

/// What the job made and decided.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    pub board: String,
    pub date: String,
    pub board_extents_mm: Bounds,
    pub targets_mm: Option<[Point; 3]>,
    pub films: Vec<FilmReport>,
    pub sheets: Vec<SheetReport>,
    pub pdf: String,
    pub tooling_holes: Option<String>,
    pub warnings: Vec<String>,
    /// The exposure device the films were made for.
    pub device: crate::device::DeviceKind,
    /// The image files of an LCD screen or film service (empty for a printer's sheets).
    pub images: Vec<crate::device::DeviceImage>,
    /// The process check of the films and the proof picture (`proof.png`); for printer
    /// sheets only (`umbra check` checks any board at the printer's settings).
    pub check: Option<crate::check::CheckReport>,
    /// The vector films written with `--vector`: `films-vector.pdf` and one SVG per film
    /// (empty without `--vector`).
    pub vector_files: Vec<String>,
}

pub(crate) fn report_of(f: &MadeFilm) -> FilmReport {
    let r = &f.rendered;
    FilmReport {
        key: f.key.clone(),
        title: f.title.clone(),
        source: f.source.clone(),
        side: format!("{}", f.id.side),
        polarity: polarity_words(&f.id, &f.recipe),
        mirrored: f.recipe.mirror,
        edge_offset_requested_um: f.recipe.edge_offset_um,
        edge_offset_realized_um: [r.realized.x_um, r.realized.y_um],
        edge_offset_realized_px: [r.realized.x_px, r.realized.y_px],
        scale: [f.recipe.scale_x, f.recipe.scale_y],
        dpi: [f.recipe.dpi_x, f.recipe.dpi_y],
        size_px: [r.bitmap.width(), r.bitmap.height()],
        size_mm: [
            r.bitmap.width() as f64 * 25.4 / f.recipe.dpi_x,
            r.bitmap.height() as f64 * 25.4 / f.recipe.dpi_y,
        ],
        board_to_film_px: r.map.affine(),
        map: r.map,
        reasons: f.recipe.reasons.clone(),
        placements: Vec::new(),
        warnings: r.warnings.clone(),
    }
}

/// The summary as a table for the terminal.
pub fn summary_text(s: &Summary, out: &Path) -> String {
    let mut rows: Vec<Vec<String>> = vec![vec![
        "film".into(),
        "source".into(),
        "polarity".into(),
        "mirrored".into(),
        "edge offset (req → real)".into(),
        "scale x/y".into(),
        "sheet: position mm".into(),
    ]];
    for f in &s.films {
        let short = f
            .source
            .rsplit(['/', '\\', ':'])
            .next()
            .unwrap_or(&f.source);
        let pos: Vec<String> = f
            .placements
            .iter()
            .map(|p| format!("{}: {:.0},{:.0}", p.sheet, p.x_mm, p.y_mm))
            .collect();
        rows.push(vec![
            f.title.clone(),
            short.to_string(),
            f.polarity.clone(),
            if f.mirrored { "yes" } else { "no" }.into(),
            format!(
                "{:+.1} → {:+.1} µm ({} px)",
                f.edge_offset_requested_um,
                f.edge_offset_realized_um[0],
                f.edge_offset_realized_px[0]
            ),
            format!("{:.4}/{:.4}", f.scale[0], f.scale[1]),
            pos.join("; "),
        ]);
    }
    let mut widths = vec![0usize; rows[0].len()];
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out_s = format!(
        "board: {}   extents {:.2} x {:.2} mm   {} film(s) on {}\n\n",
        s.board,
        s.board_extents_mm.width(),
        s.board_extents_mm.height(),
        s.films.len(),
        match s.device {
            crate::device::DeviceKind::Printer => format!("{} sheet(s)", s.sheets.len()),
            d => format!("{} image(s) for the {}", s.images.len(), d.name()),
        }
    );
    for r in &rows {
        let mut line = String::new();
        for (c, w) in r.iter().zip(&widths) {
            let pad = w - c.chars().count();
            line.push_str(c);
            line.push_str(&" ".repeat(pad + 2));
        }
        out_s.push_str(line.trim_end());
        out_s.push('\n');
    }
    if s.device != crate::device::DeviceKind::Printer {
        out_s.push_str(&crate::device::written_note(s, out));
    } else {
        out_s.push_str(&format!(
            "\nwritten to {}: {} (print at actual size / 100 %, no fit-to-page), {} PNG sheet(s), manifest.json{}\n",
            out.display(),
            s.pdf,
            s.sheets.len(),
            s.tooling_holes
                .as_ref()
                .map(|t| format!(", {t}"))
                .unwrap_or_default()
        ));
        if !s.vector_files.is_empty() {
            out_s.push_str(&format!(
                "vector films (exact edge offset, for drivers and print shops that rasterize themselves): {}\n",
                s.vector_files.join(", ")
            ));
        }
    }
    if let Some(check) = &s.check {
        out_s.push('\n');
        out_s.push_str(&crate::check::check_text(check));
    }
    let n: usize = s.warnings.len();
    if n > 0 {
        out_s.push_str(&format!("\n{n} warning(s):\n"));
        for w in &s.warnings {
            out_s.push_str(&format!("  {w}\n"));
        }
    }
    out_s.push_str(SAFETY_NOTE);
    out_s
}

/// Printed after every film run.
pub const SAFETY_NOTE: &str = "\nSafety: UV light harms eyes and skin (keep the exposure box closed); exposure boxes carry mains voltage; \
etchants are corrosive and must be disposed of under local rules; drilling board material makes fibreglass dust \
(drill wet or with extraction, wear a mask). Follow local codes and licensed practice.\n";
