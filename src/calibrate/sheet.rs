//! The calibration sheet: one page at the printer's resolution, sheet and margins.
//!
//! What is on it and why (details in `docs/calibration.md`):
//! - **Rulers** along the bottom (X) and the right edge (Y), as long as the printable area
//!   allows in whole centimetres, with millimetre ticks numbered every 10 mm. The user
//!   measures them to find the scale factors.
//! - **Line and gap ladders** in both directions: black lines and clear gaps of 1, 2, 3 …
//!   device dots, each on the dot grid so it is exactly that many dots wide, labelled with
//!   the dots and the µm. The smallest gap still open gives the toner spread.
//! - **Fine features** (line groups at decreasing pitch, rings, a radial star) to judge what
//!   survives exposure and etching.
//! - An **exposure strip** of numbered segments and the **schedule** that gives each segment
//!   a known total exposure.
//! - A **label** with the profile's settings, the date and the instructions.
//!
//! The sheet is drawn as normalized-image shapes in nominal sheet millimetres and rendered
//! with [`crate::raster::render`] through a [`DeviceMap`] carrying the profile's current scale
//! correction, exactly as films are: a re-printed sheet then shows the residual error, and
//! `calibrate solve` multiplies it into the old factor. The correction scales about the
//! sheet's lower-left corner; everything is laid out inside the printable area divided by the
//! factors, so after scaling it still lies inside the printable area.

use super::draw::{Align, Canvas};
use super::features;
use super::{dot_um, CalibrateError, ScheduleStep};
use crate::image::{Bounds, Object, Point};
use crate::output::pdf::{PageSize, PdfPage, PlacedImage};
use crate::process::{PrintedSide, Profile};
use crate::raster::{render, Bitmap, DeviceMap, MM_PER_INCH};
use crate::sheet::Orientation;
use serde::Serialize;
use std::path::{Path, PathBuf};

/// A sheet axis: X across the page, Y up the page (the films' axes, `scale_x`/`scale_y`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Axis {
    X,
    Y,
}

/// What a ladder rung is: a black line or a clear gap cut into black.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum RungKind {
    Line,
    Gap,
}

/// One rung of a line or gap ladder.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LadderRung {
    /// The axis along which the rung's width is measured (X: a vertical line).
    pub axis: Axis,
    pub kind: RungKind,
    /// Width in device dots.
    pub dots: u32,
    /// The labels printed beside it: the dots and the width in µm.
    pub dots_label: String,
    pub um_label: String,
    /// The line or gap in sheet pixels: columns `px[0]..px[2]`, rows `px[1]..px[3]` (y down).
    pub px: [i64; 4],
}

/// One ruler.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Ruler {
    /// X: along the bottom, ticks pointing up; Y: along the right edge, ticks pointing left.
    pub axis: Axis,
    /// Sheet point (nominal mm) of the 0 tick's centre on the baseline.
    pub zero_mm: Point,
    /// Distance from the 0 tick to the last numbered tick, nominal mm.
    pub length_mm: f64,
    /// Tick and baseline thickness, device dots.
    pub tick_dots: i64,
    /// Tick lengths from the baseline: every mm, every 5 mm, every 10 mm.
    pub short_tick_mm: f64,
    pub medium_tick_mm: f64,
    pub long_tick_mm: f64,
}

/// One segment of the exposure strip.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StripSegment {
    pub number: u32,
    /// Total exposure the schedule gives it, seconds.
    pub total_s: f64,
    /// Where it is on the sheet, nominal mm.
    pub rect_mm: Bounds,
}

/// The laid-out sheet: every shape, the map to pixels, and the positions of the parts that
/// tests and the solver need.
#[derive(Debug, Clone)]
pub struct SheetPlan {
    /// Sheet size as used (after orientation), mm.
    pub width_mm: f64,
    pub height_mm: f64,
    pub landscape: bool,
    /// Nominal sheet mm → sheet pixels, with the profile's scale correction.
    pub map: DeviceMap,
    pub objects: Vec<Object>,
    pub ruler_x: Ruler,
    pub ruler_y: Ruler,
    pub rungs: Vec<LadderRung>,
    pub segments: Vec<StripSegment>,
    pub schedule: Vec<ScheduleStep>,
}

/// Options of one sheet.
#[derive(Debug, Clone)]
pub struct SheetOptions {
    /// Printed on the label, e.g. "2026-12-02".
    pub date: String,
}

/// Tick lengths (mm, from the baseline) and number size of the rulers.
const SHORT_TICK_MM: f64 = 1.5;
const MEDIUM_TICK_MM: f64 = 2.5;
const LONG_TICK_MM: f64 = 4.0;
const RULER_NUMBER_CAP_MM: f64 = 1.6;
/// Room kept clear of other parts along the rulers, mm.
const X_RULER_ZONE_MM: f64 = 11.0;
const Y_RULER_ZONE_MM: f64 = 13.0;
/// Nominal tick thickness: 0.1 mm reads crisply under a steel rule's engraving (common
/// practice for printed scales, from memory).
const TICK_MM: f64 = 0.1;

/// Ladder geometry, mm.
const RUNG_PITCH_MM: f64 = 4.5;
/// Rungs across Y are stacked closer: their labels sit beside them, not below.
const Y_RUNG_PITCH_MM: f64 = 3.5;
const BAR_MM: f64 = 8.0;
/// The ladders go up to this width (or at least 8, at most 16 rungs): toner spreads
/// 1–1.5 dots per edge on a 1200 dpi laser (TRADE.md), so gaps up to about 4 dots may close;
/// 200 µm leaves room for worse printers.
const LADDER_REACH_UM: f64 = 200.0;
const MIN_RUNGS: u32 = 8;
const MAX_RUNGS: u32 = 16;

/// Space between parts on the sheet, mm.
const PART_GAP_X_MM: f64 = 8.0;
const PART_GAP_Y_MM: f64 = 5.0;

/// The sheet size and whether it is used in landscape: portrait unless the profile says
/// landscape (films printed in landscape should be calibrated in landscape, since the
/// printer's feed direction then runs along the sheet's x).
fn sheet_frame(profile: &Profile) -> (f64, f64, bool) {
    let (short, long) = profile.sheet.size.short_long_mm();
    let landscape = profile.sheet.orientation == Orientation::Landscape;
    if landscape {
        (long, short, true)
    } else {
        (short, long, false)
    }
}

/// The map of the sheet: nominal sheet mm → pixels, with the profile's scale correction.
fn sheet_map(profile: &Profile, width_mm: f64, height_mm: f64) -> DeviceMap {
    let (dx, dy) = (profile.dpi_x(), profile.dpi_y());
    let mut map = DeviceMap::new(
        Point::new(0.0, 0.0),
        (width_mm / MM_PER_INCH * dx).round() as usize,
        (height_mm / MM_PER_INCH * dy).round() as usize,
        dx,
        dy,
    );
    map.scale_x = profile.printer.scale_x;
    map.scale_y = profile.printer.scale_y;
    map
}

/// The area (nominal mm) that lands inside the printable area after the scale correction.
fn nominal_area(profile: &Profile, width_mm: f64, height_mm: f64, landscape: bool) -> Bounds {
    let p = profile
        .sheet
        .margins
        .for_orientation(landscape)
        .printable(width_mm, height_mm);
    let (sx, sy) = (profile.printer.scale_x, profile.printer.scale_y);
    Bounds {
        min_x: p.min_x / sx,
        min_y: p.min_y / sy,
        max_x: p.max_x / sx,
        max_y: p.max_y / sy,
    }
}

fn thickness_dots(dpi: f64) -> i64 {
    ((TICK_MM * dpi / MM_PER_INCH).round() as i64).max(1)
}

/// The two rulers of the sheet the profile describes. `calibrate solve` takes the nominal
/// lengths from here.
pub fn rulers(profile: &Profile) -> Result<(Ruler, Ruler), CalibrateError> {
    profile.validate().map_err(CalibrateError)?;
    let (w, h, landscape) = sheet_frame(profile);
    let a = nominal_area(profile, w, h, landscape);
    let len_x = ((a.width() - 4.0) / 10.0).floor() * 10.0;
    let y0 = a.min_y + X_RULER_ZONE_MM + 2.0;
    let len_y = ((a.max_y - 2.0 - y0) / 10.0).floor() * 10.0;
    if len_x < 50.0 || len_y < 50.0 {
        return Err(CalibrateError(format!(
            "the printable area of {} is too small for the calibration rulers",
            profile.sheet.size.name
        )));
    }
    let rx = Ruler {
        axis: Axis::X,
        zero_mm: Point::new(a.min_x + 2.0, a.min_y + 1.0),
        length_mm: len_x,
        tick_dots: thickness_dots(profile.dpi_x()),
        short_tick_mm: SHORT_TICK_MM,
        medium_tick_mm: MEDIUM_TICK_MM,
        long_tick_mm: LONG_TICK_MM,
    };
    let ry = Ruler {
        axis: Axis::Y,
        zero_mm: Point::new(a.max_x - 1.0, y0),
        length_mm: len_y,
        tick_dots: thickness_dots(profile.dpi_y()),
        ..rx
    };
    Ok((rx, ry))
}

fn draw_ruler(c: &mut Canvas, r: &Ruler) {
    let n = r.length_mm.round() as i64;
    let z = r.zero_mm;
    // Ticks across the ruler are thin in the ruler's own direction; the baseline is thin
    // across it. Both use the ruler's tick thickness in the matching axis.
    let (tx, ty) = (thickness_dots(c.map.dpi_x), thickness_dots(c.map.dpi_y));
    for k in 0..=n {
        let len = if k % 10 == 0 {
            r.long_tick_mm
        } else if k % 5 == 0 {
            r.medium_tick_mm
        } else {
            r.short_tick_mm
        };
        match r.axis {
            Axis::X => {
                let x = z.x + k as f64;
                c.vline_px(x, z.y, z.y + len, tx, true);
                if k % 10 == 0 {
                    let y = z.y + r.long_tick_mm + 0.7;
                    c.text(&k.to_string(), x, y, RULER_NUMBER_CAP_MM, Align::Center);
                }
            }
            Axis::Y => {
                let y = z.y + k as f64;
                c.hline_px(y, z.x - len, z.x, ty, true);
                if k % 10 == 0 {
                    let x = z.x - r.long_tick_mm - 0.7;
                    let base = y - RULER_NUMBER_CAP_MM / 2.0;
                    c.text(&k.to_string(), x, base, RULER_NUMBER_CAP_MM, Align::Right);
                }
            }
        }
    }
    match r.axis {
        Axis::X => {
            c.hline_px(z.y, z.x, z.x + r.length_mm, ty, true);
            let end = z.x + r.length_mm;
            c.text("X mm", end + 3.0, z.y + 0.5, 1.6, Align::Left);
        }
        Axis::Y => {
            c.vline_px(z.x, z.y, z.y + r.length_mm, tx, true);
            c.text("Y mm", z.x - 1.0, z.y - 3.5, 1.6, Align::Right);
        }
    }
}

/// Number of ladder rungs (1 to n dots) for a resolution: enough to reach 200 µm, at least
/// 8 and at most 16.
pub fn rung_count(dpi: f64) -> u32 {
    ((LADDER_REACH_UM / dot_um(dpi)).ceil() as u32).clamp(MIN_RUNGS, MAX_RUNGS)
}

/// Width in µm of `dots` dots at `dpi`, as printed on the labels (whole µm).
/// (Halves round up: 3 dots at 1200 dpi are 63.5 µm, labelled 64.)
pub fn dots_um_label(dots: u32, dpi: f64) -> String {
    format!("{:.0}", (dots as f64 * dot_um(dpi)).round())
}

fn ladder_x_title(kind: RungKind, dpi: f64) -> String {
    let what = match kind {
        RungKind::Line => "X lines",
        RungKind::Gap => "X gaps",
    };
    format!("{what}: dots, µm (1 dot = {:.1} µm)", dot_um(dpi))
}

const LADDER_TITLE_CAP_MM: f64 = 1.8;

/// Size (w, h) of a ladder across X.
fn ladder_x_size(kind: RungKind, dpi: f64) -> (f64, f64) {
    let title = crate::film::font::text_width_mm(&ladder_x_title(kind, dpi), LADDER_TITLE_CAP_MM);
    ((rung_count(dpi) as f64 * RUNG_PITCH_MM).max(title), 15.5)
}

/// A ladder of vertical lines (or gaps) whose widths along X are 1, 2, … dots.
fn draw_ladder_x(c: &mut Canvas, o: Point, kind: RungKind, rungs: &mut Vec<LadderRung>) {
    let dpi = c.map.dpi_x;
    let n = rung_count(dpi);
    let w = n as f64 * RUNG_PITCH_MM;
    let (y0, y1) = (o.y + 4.5, o.y + 4.5 + BAR_MM);
    c.text(
        &ladder_x_title(kind, dpi),
        o.x,
        o.y + 13.7,
        LADDER_TITLE_CAP_MM,
        Align::Left,
    );
    if kind == RungKind::Gap {
        let (l, r) = c.cols_of(o.x, o.x + w);
        let (t, b) = c.rows_of(y0, y1);
        c.rect_px(l, t, r, b, true);
    }
    for i in 0..n {
        let dots = i + 1;
        let cx = o.x + RUNG_PITCH_MM * (i as f64 + 0.5);
        // Gaps are slots inside the black band, closed at both ends.
        let (ya, yb) = match kind {
            RungKind::Line => (y0, y1),
            RungKind::Gap => (y0 + 1.0, y1 - 1.0),
        };
        let (l, r) = c.vline_px(cx, ya, yb, dots as i64, kind == RungKind::Line);
        let (t, b) = c.rows_of(ya, yb);
        let dots_label = dots.to_string();
        let um_label = dots_um_label(dots, dpi);
        c.text(&dots_label, cx, o.y + 2.2, 1.5, Align::Center);
        c.text(&um_label, cx, o.y + 0.3, 1.1, Align::Center);
        rungs.push(LadderRung {
            axis: Axis::X,
            kind,
            dots,
            dots_label,
            um_label,
            px: [l, t, r, b],
        });
    }
}

/// Size of the pair of ladders across Y (lines left, labels in the middle, gaps right).
fn ladder_y_size(n: u32) -> (f64, f64) {
    (30.0, n as f64 * Y_RUNG_PITCH_MM + 6.5)
}

fn draw_ladders_y(c: &mut Canvas, o: Point, rungs: &mut Vec<LadderRung>) {
    let dpi = c.map.dpi_y;
    let n = rung_count(dpi);
    let rows_h = n as f64 * Y_RUNG_PITCH_MM;
    let top = o.y + rows_h;
    c.text("Y lines", o.x + BAR_MM / 2.0, top + 1.0, 1.5, Align::Center);
    c.text("Y gaps", o.x + 26.0, top + 1.0, 1.5, Align::Center);
    c.text(
        &format!("1 dot = {:.1} µm", dot_um(dpi)),
        o.x,
        top + 4.0,
        1.5,
        Align::Left,
    );
    // The gap band (black), with clear slots cut across it.
    let (gx0, gx1) = (o.x + 22.0, o.x + 30.0);
    let (l, r) = c.cols_of(gx0, gx1);
    let (t, b) = c.rows_of(o.y, top);
    c.rect_px(l, t, r, b, true);
    for i in 0..n {
        let dots = i + 1;
        let cy = top - Y_RUNG_PITCH_MM * (i as f64 + 0.5);
        let dots_label = dots.to_string();
        let um_label = dots_um_label(dots, dpi);
        let (t, b) = c.hline_px(cy, o.x, o.x + BAR_MM, dots as i64, true);
        let (l, r) = c.cols_of(o.x, o.x + BAR_MM);
        rungs.push(LadderRung {
            axis: Axis::Y,
            kind: RungKind::Line,
            dots,
            dots_label: dots_label.clone(),
            um_label: um_label.clone(),
            px: [l, t, r, b],
        });
        let (t, b) = c.hline_px(cy, gx0 + 1.0, gx1 - 1.0, dots as i64, false);
        let (l, r) = c.cols_of(gx0 + 1.0, gx1 - 1.0);
        rungs.push(LadderRung {
            axis: Axis::Y,
            kind: RungKind::Gap,
            dots,
            dots_label: dots_label.clone(),
            um_label: um_label.clone(),
            px: [l, t, r, b],
        });
        let base = cy - 0.75;
        c.text(&dots_label, o.x + 13.0, base, 1.5, Align::Right);
        c.text(&um_label, o.x + 14.0, base, 1.1, Align::Left);
    }
}

/// The label: title, settings, date and the instructions.
fn header_lines(profile: &Profile, opts: &SheetOptions, rx: &Ruler, ry: &Ruler) -> Vec<String> {
    let pr = &profile.printer;
    let (dx, dy) = (profile.dpi_x(), profile.dpi_y());
    let res = if dx == dy {
        format!("{dx} dpi (1 dot = {:.1} µm)", dot_um(dx))
    } else {
        format!(
            "{dx} × {dy} dpi (1 dot = {:.1} × {:.1} µm)",
            dot_um(dx),
            dot_um(dy)
        )
    };
    let m = profile.sheet.margins;
    let e = &profile.exposure;
    let side = match profile.process.printed_side {
        PrintedSide::TowardBoard => "toward",
        PrintedSide::AwayFromBoard => "away from",
    };
    let (_, _, landscape) = sheet_frame(profile);
    vec![
        format!(
            "Printer {res}; scale x {:.6} y {:.6} (already applied); toner spread {:.1} µm per edge.",
            pr.scale_x, pr.scale_y, pr.toner_spread_um
        ),
        format!(
            "Sheet {} {}, margins {}/{}/{}/{} mm (top/right/bottom/left); exposure strip {} to {} in {} segments; printed {}; umbra {}.",
            profile.sheet.size.name,
            if landscape { "landscape" } else { "portrait" },
            m.top_mm,
            m.right_mm,
            m.bottom_mm,
            m.left_mm,
            super::format_time(e.min_s),
            super::format_time(e.max_s),
            e.segments,
            opts.date,
            env!("CARGO_PKG_VERSION")
        ),
        "1. Print at actual size (100 %, no fit to page, no scaling), best quality, darkest setting, on the film you use.".into(),
        format!(
            "2. Scale: with a steel rule measure the X ruler (bottom) from 0 to {:.0} mm and the Y ruler (right) from 0 to {:.0} mm.",
            rx.length_mm, ry.length_mm
        ),
        "3. Toner: under a loupe against a light, find in each ladder the narrowest gap still open all along and the narrowest solid line.".into(),
        format!(
            "4. Exposure: printed side {side} the board, expose a board through the strip as the schedule says; develop, etch, pick the best segment."
        ),
        "5. Run: umbra calibrate solve --ruler-x MM --ruler-y MM --open-gap DOTS --true-line DOTS --best-segment N".into(),
        "6. Print this sheet again with the new profile: the rulers should now measure true (repeat step 2 to check).".into(),
    ]
}

const TITLE_CAP_MM: f64 = 3.2;
const HEADER_CAP_MM: f64 = 1.5;
const HEADER_PITCH_MM: f64 = 2.6;

fn header_size(lines: &[String], width: f64) -> (f64, f64) {
    (
        width,
        TITLE_CAP_MM + 2.0 + lines.len() as f64 * HEADER_PITCH_MM,
    )
}

fn draw_header(c: &mut Canvas, o: Point, size: (f64, f64), lines: &[String]) {
    let top = o.y + size.1;
    c.text(
        "umbra calibration sheet",
        o.x,
        top - TITLE_CAP_MM,
        TITLE_CAP_MM,
        Align::Left,
    );
    let mut y = top - TITLE_CAP_MM - 2.0 - HEADER_CAP_MM;
    for l in lines {
        c.text(l, o.x, y, HEADER_CAP_MM, Align::Left);
        y -= HEADER_PITCH_MM;
    }
}

const READINGS: [&str; 3] = [
    "Your readings (write them here):",
    "X ruler 0 to end ________ mm     Y ruler 0 to end ________ mm",
    "narrowest open gap X ____ Y ____ dots     narrowest solid line X ____ Y ____ dots     best segment ____",
];

fn readings_size() -> (f64, f64) {
    let w = READINGS
        .iter()
        .map(|l| crate::film::font::text_width_mm(l, HEADER_CAP_MM))
        .fold(0.0, f64::max);
    (w, READINGS.len() as f64 * 4.0)
}

fn draw_readings(c: &mut Canvas, o: Point) {
    let mut y = o.y + READINGS.len() as f64 * 4.0 - HEADER_CAP_MM;
    for l in READINGS {
        c.text(l, o.x, y, HEADER_CAP_MM, Align::Left);
        y -= 4.0;
    }
}

/// The parts of the sheet, in reading order, for the shelf layout.
enum Part {
    Header,
    LadderX(RungKind),
    LaddersY,
    Features,
    Strip,
    Schedule,
    Readings,
}

/// Lays out and draws the whole sheet.
pub fn plan(profile: &Profile, opts: &SheetOptions) -> Result<SheetPlan, CalibrateError> {
    let (rx, ry) = rulers(profile)?;
    let schedule = profile.exposure.schedule().map_err(CalibrateError)?;
    let times = profile.exposure.segment_times().map_err(CalibrateError)?;
    let (w_mm, h_mm, landscape) = sheet_frame(profile);
    let map = sheet_map(profile, w_mm, h_mm);
    let limits = crate::limits::Limits::default();
    map.check_size(&limits)
        .map_err(|e| CalibrateError(e.to_string()))?;
    let area = nominal_area(profile, w_mm, h_mm, landscape);
    let content = Bounds {
        min_x: area.min_x + 1.0,
        min_y: area.min_y + X_RULER_ZONE_MM,
        max_x: area.max_x - Y_RULER_ZONE_MM,
        max_y: area.max_y - 1.0,
    };
    let mut c = Canvas::new(map);
    draw_ruler(&mut c, &rx);
    draw_ruler(&mut c, &ry);

    let lines = header_lines(profile, opts, &rx, &ry);
    let sched_lines = features::schedule_lines(&schedule, &times, profile);
    let mirror_strip = profile.process.printed_side == PrintedSide::TowardBoard;
    let parts = [
        Part::Header,
        Part::LadderX(RungKind::Line),
        Part::LadderX(RungKind::Gap),
        Part::LaddersY,
        Part::Features,
        Part::Schedule,
        Part::Strip,
        Part::Readings,
    ];
    let size_of = |p: &Part| -> (f64, f64) {
        match p {
            Part::Header => header_size(&lines, content.width()),
            Part::LadderX(kind) => ladder_x_size(*kind, map.dpi_x),
            Part::LaddersY => ladder_y_size(rung_count(map.dpi_y)),
            Part::Features => features::features_size(),
            Part::Strip => features::strip_size(times.len(), content.width()),
            Part::Schedule => features::schedule_size(&sched_lines),
            Part::Readings => readings_size(),
        }
    };
    // Shelf layout: parts left to right, top-aligned, a new row when one does not fit.
    let mut placed = Vec::new();
    let (mut x, mut row_top, mut row_h) = (content.min_x, content.max_y, 0.0f64);
    for p in &parts {
        let (w, h) = size_of(p);
        if w > content.width() + 1e-9 {
            return Err(too_small(profile, content));
        }
        let (mut nx, mut ntop, mut nh) = (x, row_top, row_h);
        if nx > content.min_x && nx + w > content.max_x {
            ntop -= row_h + PART_GAP_Y_MM;
            nx = content.min_x;
            nh = 0.0;
        }
        if ntop - h < content.min_y - 1e-9 {
            // The readings box is a convenience; everything else must fit.
            if matches!(p, Part::Readings) {
                continue;
            }
            return Err(too_small(profile, content));
        }
        placed.push((p, Point::new(nx, ntop - h), (w, h)));
        x = nx + w + PART_GAP_X_MM;
        row_top = ntop;
        row_h = nh.max(h);
    }

    let mut rungs = Vec::new();
    let mut segments = Vec::new();
    for (p, o, size) in placed {
        match p {
            Part::Header => draw_header(&mut c, o, size, &lines),
            Part::LadderX(kind) => draw_ladder_x(&mut c, o, *kind, &mut rungs),
            Part::LaddersY => draw_ladders_y(&mut c, o, &mut rungs),
            Part::Features => features::draw_features(&mut c, o),
            Part::Strip => {
                segments = features::draw_strip(&mut c, o, size, &times, mirror_strip);
            }
            Part::Schedule => features::draw_schedule(&mut c, o, size, &sched_lines),
            Part::Readings => draw_readings(&mut c, o),
        }
    }
    Ok(SheetPlan {
        width_mm: w_mm,
        height_mm: h_mm,
        landscape,
        map,
        objects: c.objects,
        ruler_x: rx,
        ruler_y: ry,
        rungs,
        segments,
        schedule,
    })
}

fn too_small(profile: &Profile, content: Bounds) -> CalibrateError {
    CalibrateError(format!(
        "the calibration sheet does not fit the printable area of {} ({:.0} × {:.0} mm left beside the rulers); use A4, Letter or larger, or smaller margins",
        profile.sheet.size.name,
        content.width(),
        content.height()
    ))
}

impl SheetPlan {
    /// The whole sheet at the printer's resolution (set bits are black).
    pub fn render(&self) -> Bitmap {
        render(&self.objects, &self.map)
    }

    /// Only the sheet pixels in columns `x0..x1` and rows `y0..y1` (y down), exactly as they
    /// are in [`SheetPlan::render`]: the window's map starts on a pixel boundary of the
    /// sheet's, so every pixel centre is the same point.
    pub fn render_window(&self, x0: usize, y0: usize, x1: usize, y1: usize) -> Bitmap {
        let x1 = x1.min(self.map.width).max(x0);
        let y1 = y1.min(self.map.height).max(y0);
        let mut m = self.map;
        m.origin = self.map.to_mm(x0 as f64, y1 as f64);
        m.width = x1 - x0;
        m.height = y1 - y0;
        render(&self.objects, &m)
    }

    /// Writes the sheet as a one-page PDF of the exact sheet size at `pdf` and as a PNG
    /// beside it (same name, `.png`). Returns the PNG's path.
    pub fn write(&self, bitmap: &Bitmap, pdf: &Path) -> Result<PathBuf, CalibrateError> {
        let (dx, dy) = (self.map.dpi_x, self.map.dpi_y);
        let png = pdf.with_extension("png");
        crate::output::png::write_png(&png, bitmap, dx, dy, true)
            .map_err(|e| CalibrateError(e.to_string()))?;
        let size = PageSize::from_mm(self.width_mm, self.height_mm);
        let mut page = PdfPage::new(size);
        let img = PlacedImage::at_resolution(bitmap, true, 0.0, 0.0, dx, dy);
        // The bitmap's top-left pixel is the page's top-left corner.
        let y_pt = size.height_pt - img.height_pt;
        page.images.push(PlacedImage { y_pt, ..img });
        crate::output::pdf::write_pdf(pdf, &[page]).map_err(|e| CalibrateError(e.to_string()))?;
        Ok(png)
    }
}
