//! The main job: a loaded board and a process profile in, a set of aligned, labelled film
//! sheets out (PDF, one PNG per sheet, manifest), plus the summary of every decision.

//!
//! - [`select`]: which files become films, and the board's extents;
//! - [`plan`]: each film's recipe and label, and rendering them;
//! - [`sheets`]: laying the films out on sheets and composing the sheets;
//! - [`background`]: the process check's lower-priority threads beside the sheets;
//! - [`staged`]: the output folder, written whole or not at all;
//! - [`summary`]: the summary, the manifest's records and the terminal table.

mod background;
pub mod plan;
pub mod select;
pub mod sheets;
pub mod staged;
pub mod summary;

pub(crate) use plan::polarity_words;
pub use plan::{make_films, plan_films, FilmPlan, MadeFilm, PlannedFilm};
pub use select::{board_extents, drill_files, identities, select, Selected};
pub use sheets::{caption_shapes, compose_sheet, lay_out, piece_pixels, RenderedSheet};
pub use staged::StagedDir;
pub use summary::{summary_text, FilmReport, PlacementReport, SheetReport, Summary, SAFETY_NOTE};

use crate::film::compose::BoardFrame;
use crate::film::marks;
use crate::job::Job;
use crate::load::{Board, Content};
use crate::output::pdf::{PageSize, PdfPage, PlacedImage};
use crate::process::Profile;
use std::path::PathBuf;
use summary::report_of;

/// Why the job could not make films.
#[derive(Debug, thiserror::Error)]
pub enum FilmsError {
    #[error("{0}")]
    Input(String),
    #[error("{0}")]
    Layout(String),
    #[error("{0}")]
    Output(String),
}

/// Options of one `films` run.
#[derive(Debug, Clone)]
pub struct RunOptions {
    pub out: PathBuf,
    pub force: bool,
    pub board_name: String,
    pub date: String,
    /// Also write vector films (films-vector.pdf and one SVG per film).
    pub vector: bool,
}

/// The whole job: films, layout, sheets, files. Returns the summary.
pub fn run(
    board: &Board,
    profile: &Profile,
    job: Option<&Job>,
    opts: &RunOptions,
    progress: &dyn Fn(&str),
) -> Result<Summary, FilmsError> {
    if profile.device.kind != crate::device::DeviceKind::Printer {
        if opts.vector {
            // Silently dropping the request would leave the user looking for files that
            // were never written.
            return Err(FilmsError::Input(format!(
                "--vector makes vector sheets for a printer, but the device is `{}`, whose \
                 films are images at the device's own pixel grid; leave out --vector or use \
                 --device printer",
                profile.device.kind.name()
            )));
        }
        return crate::device::run(board, profile, job, opts, progress);
    }
    let staged = StagedDir::new(&opts.out, opts.force)?;
    progress("rendering films");
    let (films, frame, warnings) = make_films(board, profile, job, &opts.board_name, &opts.date)?;
    // The process check and the proof picture run beside the sheets and the PDF, which are
    // mostly single-threaded compression, at a lower priority (see `background`).
    std::thread::scope(|scope| {
        let checking = scope.spawn(|| {
            background::in_background(|| {
                crate::proof::check_with_proof(
                    &staged.path("proof.png"),
                    "proof.png",
                    &opts.board_name,
                    &films,
                    board,
                    &frame,
                    profile.artwork.target_size_mm,
                    &profile.limits,
                )
                .map_err(|e| FilmsError::Output(e.to_string()))
            })
        });
        let written = write_sheets(
            board,
            &films,
            &frame,
            profile,
            &staged,
            opts.vector,
            progress,
        );
        let check = checking
            .join()
            .map_err(|_| FilmsError::Output("the process check failed unexpectedly".into()))??;
        Ok((written?, check))
    })
    .and_then(|(written, check)| finish(board, opts, staged, &frame, written, warnings, check))
}

/// What [`write_sheets`] wrote.
struct SheetsWritten {
    reports: Vec<FilmReport>,
    sheets: Vec<SheetReport>,
    tooling: Option<String>,
    vector_files: Vec<String>,
}

/// Lays out the films and writes the sheets (PNG), the PDF and the tooling-hole file.
fn write_sheets(
    board: &Board,
    films: &[MadeFilm],
    frame: &BoardFrame,
    profile: &Profile,
    staged: &StagedDir,
    vector: bool,
    progress: &dyn Fn(&str),
) -> Result<SheetsWritten, FilmsError> {
    let layout = lay_out(films, profile)?;
    let mut reports: Vec<FilmReport> = films.iter().map(report_of).collect();
    let mut sheets = Vec::new();
    let mut pdf_pages_bitmaps = Vec::new();
    for (i, plan) in layout.sheets.iter().enumerate() {
        progress(&format!(
            "composing sheet {} of {}",
            i + 1,
            layout.sheets.len()
        ));
        let rs = compose_sheet(i + 1, plan, films, profile);
        let png = format!("sheet-{:02}.png", i + 1);
        crate::output::png::write_png(&staged.path(&png), &rs.bitmap, rs.dpi.0, rs.dpi.1, true)
            .map_err(|e| FilmsError::Output(e.to_string()))?;
        for (film, pr) in &rs.pieces {
            reports[*film].placements.push(pr.clone());
        }
        sheets.push(SheetReport {
            number: i + 1,
            png,
            pdf_page: i + 1,
            size_mm: [rs.size_mm.0, rs.size_mm.1],
            size_px: [rs.bitmap.width(), rs.bitmap.height()],
        });
        pdf_pages_bitmaps.push(rs);
    }
    progress("writing PDF");
    let pages: Vec<PdfPage<'_>> = pdf_pages_bitmaps
        .iter()
        .map(|rs| {
            let size = PageSize::from_mm(rs.size_mm.0, rs.size_mm.1);
            let mut page = PdfPage::new(size);
            let img = PlacedImage::at_resolution(&rs.bitmap, true, 0.0, 0.0, rs.dpi.0, rs.dpi.1);
            // The bitmap's top-left pixel is the page's top-left corner.
            let y = size.height_pt - img.height_pt;
            page.images.push(PlacedImage { y_pt: y, ..img });
            page
        })
        .collect();
    crate::output::pdf::write_pdf(&staged.path("films.pdf"), &pages)
        .map_err(|e| FilmsError::Output(e.to_string()))?;
    drop(pages);
    drop(pdf_pages_bitmaps);
    let mut vector_files = Vec::new();
    if vector {
        progress("composing vector films");
        vector_files =
            crate::vector::write_vector_outputs(staged, board, films, frame, &layout, profile)
                .map_err(FilmsError::Output)?;
    }
    let mut tooling = None;
    if profile.films.tooling_holes {
        if let Some(t) = &frame.targets {
            let text = marks::tooling_drill_file(t, profile.films.tooling_hole_mm);
            let name = "tooling-holes.xln".to_string();
            crate::output::write_atomically(&staged.path(&name), |w| {
                use std::io::Write;
                w.write_all(text.as_bytes())
                    .map_err(|e| crate::output::OutputError::Io {
                        path: staged.path(&name),
                        source: e,
                    })
            })
            .map_err(|e| FilmsError::Output(e.to_string()))?;
            tooling = Some(name);
        }
    }
    Ok(SheetsWritten {
        reports,
        sheets,
        tooling,
        vector_files,
    })
}

/// Writes the manifest and moves the finished folder into place.
fn finish(
    board: &Board,
    opts: &RunOptions,
    staged: StagedDir,
    frame: &BoardFrame,
    written: SheetsWritten,
    mut warnings: Vec<String>,
    check: crate::check::CheckReport,
) -> Result<Summary, FilmsError> {
    for w in &board.warnings {
        warnings.push(w.to_string());
    }
    // The readers' warnings: all of them when few, else a sample and a pointer to inspect.
    let reader: Vec<String> = board
        .files
        .iter()
        .flat_map(|f| match &f.content {
            Content::Gerber(g) => g.warnings.iter().map(|w| w.to_string()).collect(),
            Content::Drill(d) => d.warnings.iter().map(|w| w.to_string()).collect(),
            _ => Vec::new(),
        })
        .collect();
    const SHOWN: usize = 8;
    if reader.len() > SHOWN {
        warnings.extend(reader.iter().take(SHOWN - 1).cloned());
        warnings.push(format!(
            "… and {} more reader warnings; `umbra inspect` lists them all",
            reader.len() - (SHOWN - 1)
        ));
    } else {
        warnings.extend(reader);
    }
    let summary = Summary {
        board: opts.board_name.clone(),
        date: opts.date.clone(),
        board_extents_mm: frame.board,
        targets_mm: frame.targets,
        films: written.reports,
        sheets: written.sheets,
        pdf: "films.pdf".into(),
        tooling_holes: written.tooling,
        warnings,
        device: crate::device::DeviceKind::Printer,
        images: Vec::new(),
        check: Some(check),
        vector_files: written.vector_files,
    };
    let manifest =
        serde_json::to_string_pretty(&summary).map_err(|e| FilmsError::Output(e.to_string()))?;
    crate::output::write_atomically(&staged.path("manifest.json"), |w| {
        use std::io::Write;
        w.write_all(manifest.as_bytes())
            .map_err(|e| crate::output::OutputError::Io {
                path: staged.path("manifest.json"),
                source: e,
            })
    })
    .map_err(|e| FilmsError::Output(e.to_string()))?;
    staged.commit()?;
    Ok(summary)
}
