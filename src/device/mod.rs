//! Exposure devices: what the films are made for.
//!
//! - **printer**: sheets for a laser or inkjet printer (the `[printer]` and `[sheet]`
//!   sections; `films::run`'s own path).
//! - **lcd**: a masked LCD screen (the kind in resin 3D printers) that the board lies on. Each
//!   film becomes one PNG at the screen's exact pixel grid (pixel count and pitch, which may
//!   differ in x and y), placed on the active area: [`lcd`].
//! - **film-service**: a film-plotting service that wants one 1-bit TIFF per film at its
//!   resolution (4000 to 25400 dpi), rendered in bands so no whole bitmap is ever held:
//!   [`service`].
//!
//! The device decides the pixel grid and what is physically "the printed side"; the film
//! decisions themselves (polarity, mirroring, edge offset) stay those of `process::plan`.
//! See `docs/devices.md`.

pub mod lcd;
pub mod service;

use crate::film::compose;
use crate::films::{FilmReport, FilmsError, PlannedFilm};
use crate::process::{PrintedSide, PrinterSection, Profile};
use crate::raster::{Affine, DeviceMap, MM_PER_INCH};
use serde::{Deserialize, Serialize};

/// Which kind of device exposes the films.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DeviceKind {
    /// Sheets for a printer: PDF and PNG per sheet.
    #[default]
    Printer,
    /// A masked LCD screen: one PNG per film at the screen's pixel grid.
    Lcd,
    /// A film-plotting service: one 1-bit TIFF per film.
    FilmService,
}

impl DeviceKind {
    /// The name used in profiles and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            DeviceKind::Printer => "printer",
            DeviceKind::Lcd => "lcd",
            DeviceKind::FilmService => "film-service",
        }
    }
}

impl std::str::FromStr for DeviceKind {
    type Err = String;
    fn from_str(s: &str) -> Result<DeviceKind, String> {
        match s {
            "printer" => Ok(DeviceKind::Printer),
            "lcd" => Ok(DeviceKind::Lcd),
            "film-service" => Ok(DeviceKind::FilmService),
            _ => Err(format!(
                "\"{s}\" is not an exposure device; use printer, lcd or film-service"
            )),
        }
    }
}

/// A corner of the screen, seen from its front (the side its picture reads correctly from).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Corner {
    #[default]
    TopLeft,
    TopRight,
    BottomLeft,
    BottomRight,
}

impl Corner {
    /// The name used in profiles.
    pub fn name(self) -> &'static str {
        match self {
            Corner::TopLeft => "top-left",
            Corner::TopRight => "top-right",
            Corner::BottomLeft => "bottom-left",
            Corner::BottomRight => "bottom-right",
        }
    }

    /// Whether an image file must be flipped left-right / top-bottom so that a screen showing
    /// its first pixel at this corner shows the planned picture.
    pub fn flips(self) -> (bool, bool) {
        match self {
            Corner::TopLeft => (false, false),
            Corner::TopRight => (true, false),
            Corner::BottomLeft => (false, true),
            Corner::BottomRight => (true, true),
        }
    }
}

/// Where a masked LCD lets light through.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Transmits {
    /// White image pixels pass light (how resin printer screens show their slices).
    #[default]
    White,
    /// Black image pixels pass light (a screen or firmware that inverts).
    Black,
}

/// Where the film goes on the screen.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Placement {
    /// The board's centre on the screen's centre (shifted only as far as needed to keep the
    /// targets and label on the screen).
    #[default]
    #[serde(alias = "center")]
    Centre,
    /// The film's top-left corner `offset_mm` from the screen's top-left corner (front view).
    Offset,
}

/// A masked LCD screen.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LcdScreen {
    /// A name for labels and messages.
    #[serde(default)]
    pub name: String,
    /// Pixels across (x) and down (y) the active area.
    pub pixels_x: u32,
    pub pixels_y: u32,
    /// Pixel pitch along x and y, µm (often different: non-square pixels).
    pub pitch_x_um: f64,
    pub pitch_y_um: f64,
    /// The corner, seen from the screen's front, where an image file's first pixel shows.
    #[serde(default)]
    pub origin: Corner,
    /// The board sees the screen's picture mirrored: it faces the screen's back, or the
    /// firmware flips pictures. Like a film whose printed side faces away from the board.
    #[serde(default)]
    pub mirrored_by_screen: bool,
    /// Where the screen passes light: "white" or "black" image pixels.
    #[serde(default)]
    pub transmits_where: Transmits,
    #[serde(default)]
    pub placement: Placement,
    /// With `placement = "offset"`: film's top-left corner from the screen's top-left, mm
    /// (x to the right, y down, front view).
    #[serde(default)]
    pub offset_mm: Option<[f64; 2]>,
}

impl LcdScreen {
    /// Resolution along x: 25,400 µm per inch ÷ pitch.
    pub fn dpi_x(&self) -> f64 {
        MM_PER_INCH * 1000.0 / self.pitch_x_um
    }

    pub fn dpi_y(&self) -> f64 {
        MM_PER_INCH * 1000.0 / self.pitch_y_um
    }

    /// Active area, mm.
    pub fn size_mm(&self) -> (f64, f64) {
        (
            self.pixels_x as f64 * self.pitch_x_um / 1000.0,
            self.pixels_y as f64 * self.pitch_y_um / 1000.0,
        )
    }

    /// "the Larkspur screen" or "the screen".
    pub fn called(&self) -> String {
        if self.name.trim().is_empty() {
            "the screen".into()
        } else {
            format!("the screen \"{}\"", self.name.trim())
        }
    }

    fn validate(&self) -> Result<(), String> {
        for (k, v) in [("pixels_x", self.pixels_x), ("pixels_y", self.pixels_y)] {
            if !(1..=100_000).contains(&v) {
                return Err(format!(
                    "device.lcd.{k} = {v} must be between 1 and 100000 pixels"
                ));
            }
        }
        for (k, v) in [
            ("pitch_x_um", self.pitch_x_um),
            ("pitch_y_um", self.pitch_y_um),
        ] {
            // 5 µm to 0.5 mm: far beyond the 22-50 µm of real masked screens either way.
            if !(v.is_finite() && (5.0..=500.0).contains(&v)) {
                return Err(format!("device.lcd.{k} = {v} must be between 5 and 500 µm"));
            }
        }
        match (self.placement, self.offset_mm) {
            (Placement::Offset, None) => Err(
                "device.lcd.placement = \"offset\" needs offset_mm = [x, y] (mm from the screen's top-left corner)".into(),
            ),
            (Placement::Centre, Some(_)) => Err(
                "device.lcd.offset_mm is used only with placement = \"offset\"; remove it or set placement = \"offset\"".into(),
            ),
            (_, Some(o)) if !o.iter().all(|v| v.is_finite() && *v >= 0.0) => {
                Err("device.lcd.offset_mm must be two distances of 0 mm or more".into())
            }
            _ => Ok(()),
        }
    }
}

/// Image format a film service takes.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ServiceFormat {
    /// 1-bit TIFF, one per film.
    #[default]
    Tiff,
}

/// A film-plotting service.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct FilmServiceSection {
    /// Plotting resolution, dots per inch (services plot at 4000 to 25400).
    pub dpi: f64,
    pub format: ServiceFormat,
    pub compression: crate::output::tiff::TiffCompression,
}

impl Default for FilmServiceSection {
    fn default() -> Self {
        FilmServiceSection {
            dpi: 10160.0,
            format: ServiceFormat::Tiff,
            compression: crate::output::tiff::TiffCompression::PackBits,
        }
    }
}

/// The profile's `[device]` section.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct DeviceSection {
    pub kind: DeviceKind,
    /// The screen, needed when `kind = "lcd"`.
    pub lcd: Option<LcdScreen>,
    pub film_service: FilmServiceSection,
}

impl DeviceSection {
    /// Checks value ranges (called by `Profile::validate`).
    pub fn validate(&self) -> Result<(), String> {
        if let Some(s) = &self.lcd {
            s.validate()?;
        }
        if self.kind == DeviceKind::Lcd && self.lcd.is_none() {
            return Err(
                "device kind \"lcd\" needs a [device.lcd] section describing the screen (pixels_x, pixels_y, pitch_x_um, pitch_y_um); see examples/larkspur-lcd-profile.toml".into(),
            );
        }
        let d = self.film_service.dpi;
        if !(d.is_finite() && (50.0..=25400.0).contains(&d)) {
            return Err(format!(
                "device.film_service.dpi = {d} is not a usable resolution (50 to 25400 dots per inch)"
            ));
        }
        Ok(())
    }
}

/// The profile as the device sees it: the `[printer]` numbers replaced by the device's pixel
/// grid (no printer stretch, no toner), one copy of each film, and for an LCD the side of
/// the picture facing the board.
pub fn profile_for_device(profile: &Profile) -> Profile {
    let mut p = profile.clone();
    let exact = |dpi: f64, dpi_y: Option<f64>| PrinterSection {
        dpi,
        dpi_y,
        scale_x: 1.0,
        scale_y: 1.0,
        toner_spread_um: 0.0,
    };
    match (p.device.kind, &p.device.lcd) {
        (DeviceKind::Printer, _) => {}
        (DeviceKind::Lcd, Some(s)) => {
            p.printer = exact(s.dpi_x(), Some(s.dpi_y()));
            // The screen's picture faces the board as a film's printed side would, unless the
            // screen mirrors it; the table of docs/film-rules.md then decides the mirror.
            p.process.printed_side = if s.mirrored_by_screen {
                PrintedSide::AwayFromBoard
            } else {
                PrintedSide::TowardBoard
            };
            p.films.copies = 1;
        }
        (DeviceKind::Lcd, None) => {}
        (DeviceKind::FilmService, _) => {
            p.printer = exact(p.device.film_service.dpi, None);
            p.films.copies = 1;
        }
    }
    p
}

/// One image file written for a device (an LCD screen image or a film-service TIFF).
#[derive(Debug, Clone, Serialize)]
pub struct DeviceImage {
    /// The film's key, as in `films[].key`.
    pub film: String,
    pub file: String,
    pub size_px: [usize; 2],
    pub dpi: [f64; 2],
    /// Board mm → this file's pixels (px = a·x + b·y + c, py = d·x + e·y + f; top-left origin).
    pub board_to_image_px: Affine,
    /// What the pixels mean.
    pub pixels: String,
}

/// The summary entry of a film made for a device; `map` is the film's own pixel grid.
pub(crate) fn film_report(
    pf: &PlannedFilm<'_>,
    map: &DeviceMap,
    warnings: Vec<String>,
) -> FilmReport {
    let r = compose::realized_for(&pf.recipe);
    let s = &pf.selected;
    FilmReport {
        key: s.key.clone(),
        title: s.title.clone(),
        source: s.source.clone(),
        side: format!("{}", s.id.side),
        polarity: crate::films::polarity_words(&s.id, &pf.recipe),
        mirrored: pf.recipe.mirror,
        edge_offset_requested_um: pf.recipe.edge_offset_um,
        edge_offset_realized_um: [r.x_um, r.y_um],
        edge_offset_realized_px: [r.x_px, r.y_px],
        scale: [pf.recipe.scale_x, pf.recipe.scale_y],
        dpi: [pf.recipe.dpi_x, pf.recipe.dpi_y],
        size_px: [map.width, map.height],
        size_mm: [
            map.width as f64 * MM_PER_INCH / pf.recipe.dpi_x,
            map.height as f64 * MM_PER_INCH / pf.recipe.dpi_y,
        ],
        board_to_film_px: map.affine(),
        map: *map,
        reasons: pf.recipe.reasons.clone(),
        placements: Vec::new(),
        warnings,
    }
}

/// Writes the optional tooling-hole drill file; returns its name.
fn write_tooling_holes(
    staged: &crate::films::StagedDir,
    frame: &compose::BoardFrame,
    profile: &Profile,
) -> Result<Option<String>, FilmsError> {
    let (true, Some(t)) = (profile.films.tooling_holes, &frame.targets) else {
        return Ok(None);
    };
    let text = crate::film::marks::tooling_drill_file(t, profile.films.tooling_hole_mm);
    let name = "tooling-holes.xln".to_string();
    write_text(staged, &name, &text)?;
    Ok(Some(name))
}

fn write_text(staged: &crate::films::StagedDir, name: &str, text: &str) -> Result<(), FilmsError> {
    let path = staged.path(name);
    crate::output::write_atomically(&path, |w| {
        use std::io::Write;
        w.write_all(text.as_bytes())
            .map_err(|source| crate::output::OutputError::Io {
                path: path.clone(),
                source,
            })
    })
    .map_err(|e| FilmsError::Output(e.to_string()))
}

/// The `films` job for an LCD screen or a film service (`films::run` calls this for every
/// device but the printer): one image file per film, the manifest, the summary.
pub fn run(
    board: &crate::load::Board,
    profile: &Profile,
    job: Option<&crate::job::Job>,
    opts: &crate::films::RunOptions,
    progress: &dyn Fn(&str),
) -> Result<crate::films::Summary, FilmsError> {
    profile.device.validate().map_err(FilmsError::Input)?;
    let device_profile = profile_for_device(profile);
    let staged = crate::films::StagedDir::new(&opts.out, opts.force)?;
    let plan = crate::films::plan_films(board, &device_profile, job, &opts.board_name, &opts.date)?;
    let made = match (profile.device.kind, &profile.device.lcd) {
        (DeviceKind::Lcd, Some(screen)) => lcd::write_films(&plan, screen, &staged, progress)?,
        _ => service::write_films(&plan, &profile.device.film_service, &staged, progress)?,
    };
    let mut warnings = Vec::new();
    for (report, _) in &made {
        warnings.extend(
            report
                .warnings
                .iter()
                .map(|w| format!("{}: {w}", report.title)),
        );
    }
    warnings.extend(board.warnings.iter().map(|w| w.to_string()));
    let tooling_holes = write_tooling_holes(&staged, &plan.frame, &plan.profile)?;
    let (films, images) = made.into_iter().unzip();
    let summary = crate::films::Summary {
        board: opts.board_name.clone(),
        date: opts.date.clone(),
        board_extents_mm: plan.frame.board,
        targets_mm: plan.frame.targets,
        films,
        sheets: Vec::new(),
        pdf: String::new(),
        tooling_holes,
        warnings,
        device: profile.device.kind,
        images,
        check: None,
        vector_files: Vec::new(),
    };
    let manifest =
        serde_json::to_string_pretty(&summary).map_err(|e| FilmsError::Output(e.to_string()))?;
    write_text(&staged, "manifest.json", &manifest)?;
    staged.commit()?;
    Ok(summary)
}

/// The summary's closing line for a device run: what was written and how to use it.
pub fn written_note(s: &crate::films::Summary, out: &std::path::Path) -> String {
    let files: Vec<&str> = s.images.iter().map(|i| i.file.as_str()).collect();
    let how = match s.device {
        DeviceKind::Lcd => "show each image full-screen on the LCD, unscaled",
        _ => "send the TIFF files to the film service as they are, at the resolution they carry",
    };
    format!(
        "\nwritten to {}: {} ({how}), manifest.json{}\n",
        out.display(),
        files.join(", "),
        s.tooling_holes
            .as_ref()
            .map(|t| format!(", {t}"))
            .unwrap_or_default()
    )
}
