//! Films for a film-plotting service: one 1-bit TIFF per film at the service's resolution,
//! rendered in bands.
//!
//! # Bands
//! A 25,400 dpi A4 film is 6.2·10¹⁰ pixels (7.8 GB at one bit each), so it is never held
//! whole. Each band of rows is rendered on its own device map: the film's map
//! (`compose::film_map`) with the same columns and only the band's rows. With the map of
//! `raster/device.rs` (`py = height − (y − origin.y)·sy`), film row `r` is band row `r − g0`
//! when the band map has `height = g1 − g0` and `origin.y = film.origin.y + (H − g1)/sy`
//! (H the film's height, rows `g0..g1` of the film).
//!
//! The edge offset (morphology) reads rows up to the disc's half height `ky` away, so every
//! band is rendered grown by `ky` rows each way (clipped at the film's own edges, exactly as
//! the whole film is) and only its own rows are kept. The result is the same film, bit for
//! bit up to floating-point rounding of row centres, as `compose::render_film` gives.
//!
//! The annular-ring check needs whole neighbourhoods of holes, so it runs once on a proof
//! render of the film at 1200 dpi (its warnings, not its pixels, are used).

use super::{film_report, DeviceImage, FilmServiceSection};
use crate::film::compose::{self, FilmJob};
use crate::films::{FilmPlan, FilmReport, FilmsError, StagedDir};
use crate::image::Point;
use crate::output::tiff::{TiffCompression, TiffSpec, TiffWriter};
use crate::output::OutputError;
use crate::raster::DeviceMap;
use std::path::Path;

/// Default size of one band's bitmap: the band (with its grown rows) is held about four
/// times over while it is composed (layer, drill marks, artwork, offset).
pub const BAND_BYTES: usize = 4 << 20;

/// Resolution of the proof render whose annular-ring warnings are reported.
const RING_CHECK_DPI: f64 = 1200.0;

/// Rows `g0..g1` of the film as a map of their own (see the module docs).
pub fn band_map(film: &DeviceMap, g0: usize, g1: usize) -> DeviceMap {
    DeviceMap {
        origin: Point::new(
            film.origin.x,
            film.origin.y + (film.height - g1) as f64 / film.px_per_mm_y(),
        ),
        height: g1 - g0,
        ..*film
    }
}

/// How many rows of the film a band holds so that its bitmap is about `band_bytes`.
pub fn band_rows_for(width: usize, band_bytes: usize) -> usize {
    let row = width.div_ceil(64) * 8;
    (band_bytes / row.max(1)).max(16)
}

/// Renders the film of `job` in bands of `band_rows` rows and writes it as a TIFF at `path`
/// (atomically). Returns the film's map and the warnings of rendering.
pub fn write_film_tiff(
    path: &Path,
    job: &FilmJob<'_>,
    compression: TiffCompression,
    band_rows: usize,
) -> Result<(DeviceMap, Vec<String>), OutputError> {
    let recipe = job.recipe;
    let film = compose::film_map(job.frame, recipe);
    let invalid = |message: String| OutputError::Invalid {
        path: path.to_path_buf(),
        message,
    };
    film.check_size(&crate::limits::Limits::default())
        .map_err(|e| invalid(e.to_string()))?;
    if film.width > u32::MAX as usize || film.height > u32::MAX as usize {
        return Err(invalid(format!(
            "a TIFF holds at most 4294967295 pixels each way, this film is {} × {}",
            film.width, film.height
        )));
    }
    // The disc's half height in rows: how far the offset reaches up and down.
    let reach = compose::realized_for(recipe).y_px.unsigned_abs() as usize;
    let band_rows = band_rows.max(1);
    let spec = TiffSpec {
        width: film.width as u32,
        height: film.height as u32,
        dpi_x: recipe.dpi_x,
        dpi_y: recipe.dpi_y,
        compression,
    };
    let mut warnings = Vec::new();
    crate::output::write_atomically(path, |w| {
        let io = |source: std::io::Error| OutputError::Io {
            path: path.to_path_buf(),
            source,
        };
        let mut tiff = TiffWriter::new(w, spec).map_err(io)?;
        let mut row = Vec::with_capacity(tiff.row_bytes() + 8);
        let mut r0 = 0;
        while r0 < film.height {
            let r1 = (r0 + band_rows).min(film.height);
            let g0 = r0.saturating_sub(reach);
            let g1 = (r1 + reach).min(film.height);
            let band = compose::render_film_on(job, band_map(&film, g0, g1), None);
            if r0 == 0 {
                // Per-film warnings (the offset's rounding) are the same in every band.
                warnings = band.warnings;
            }
            for y in (r0 - g0)..(r1 - g0) {
                // Bit 1 = black, which is what WhiteIsZero stores.
                band.bitmap.row_bytes_into(y, false, &mut row);
                tiff.write_row(&row).map_err(io)?;
            }
            r0 = r1;
        }
        tiff.finish().map_err(io)?;
        Ok(())
    })?;
    Ok((film, warnings))
}

/// The annular-ring warnings of a film, from a proof render at 1200 dpi.
fn ring_warnings(job: &FilmJob<'_>, min_annular_ring_mm: f64) -> Vec<String> {
    let mut recipe = job.recipe.clone();
    recipe.dpi_x = recipe.dpi_x.min(RING_CHECK_DPI);
    recipe.dpi_y = recipe.dpi_y.min(RING_CHECK_DPI);
    recipe.edge_offset_um = 0.0;
    let proof = FilmJob {
        recipe: &recipe,
        label: Vec::new(),
        ..job.clone()
    };
    compose::render_film(&proof, min_annular_ring_mm)
        .ring_warning
        .into_iter()
        .collect()
}

/// Renders and writes every film of the plan as a TIFF.
pub fn write_films(
    plan: &FilmPlan<'_>,
    service: &FilmServiceSection,
    staged: &StagedDir,
    progress: &dyn Fn(&str),
) -> Result<Vec<(FilmReport, DeviceImage)>, FilmsError> {
    let mut out = Vec::new();
    for (i, pf) in plan.films.iter().enumerate() {
        progress(&format!(
            "rendering {} at {} dpi in bands",
            pf.selected.title, service.dpi
        ));
        let job = plan.job(i);
        let file = format!("{}.tif", pf.selected.key);
        let width = compose::film_map(&plan.frame, &pf.recipe).width;
        let (map, mut warnings) = write_film_tiff(
            &staged.path(&file),
            &job,
            service.compression,
            band_rows_for(width, BAND_BYTES),
        )
        .map_err(|e| FilmsError::Output(e.to_string()))?;
        warnings.extend(ring_warnings(
            &job,
            plan.profile.drill_marks.min_annular_ring_mm,
        ));
        let mut report = film_report(pf, &map, warnings);
        report.reasons.push(format!(
            "film service: 1-bit TIFF at {} dpi, {}",
            service.dpi,
            match service.compression {
                TiffCompression::PackBits => "PackBits",
                TiffCompression::None => "uncompressed",
            }
        ));
        out.push((
            report,
            DeviceImage {
                film: pf.selected.key.clone(),
                file,
                size_px: [map.width, map.height],
                dpi: [pf.recipe.dpi_x, pf.recipe.dpi_y],
                board_to_image_px: map.affine(),
                pixels: "1 = black = opaque (PhotometricInterpretation WhiteIsZero)".into(),
            },
        ));
    }
    Ok(out)
}
