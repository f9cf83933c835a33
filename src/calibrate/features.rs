//! The calibration sheet's test patterns for the whole process: fine features (line groups at
//! decreasing pitch, concentric rings, a radial star) and the exposure strip with its
//! schedule. Shapes are drawn on a [`Canvas`] in nominal sheet mm; straight lines that test a
//! width sit on the dot grid (see `draw.rs`), so their printed labels are exact.

use super::draw::{Align, Canvas};
use super::sheet::StripSegment;
use super::{format_time, ScheduleStep};
use crate::film::font;
use crate::image::{Bounds, Contour, Point, Segment, Shape, Turn};
use crate::process::{PrintedSide, Profile};
use crate::raster::MM_PER_INCH;

/// Target widths of the line groups, µm: common track widths of hobby boards (0.3 mm down
/// to 0.05 mm). Each is drawn as the nearest whole number of dots, labelled with the width
/// actually drawn.
const GROUP_TARGETS_UM: [f64; 8] = [300.0, 250.0, 200.0, 150.0, 125.0, 100.0, 75.0, 50.0];
const GROUP_PITCH_MM: f64 = 8.25;
const GROUP_LINE_MM: f64 = 4.0;
const FEATURES_W_MM: f64 = 66.0;
const FEATURES_H_MM: f64 = 47.0;
/// Ring targets: line width = gap width, µm; outer radius, mm.
const RING_WIDTHS_UM: [f64; 2] = [200.0, 100.0];
const RING_RADIUS_MM: f64 = 6.0;
/// The star: black spokes and their radius. With 36 spokes a spoke at radius r is
/// π·r/36 wide (arc length of a 5° sector), 87.3 µm per mm of radius.
const STAR_SPOKES: u32 = 36;
const STAR_RADIUS_MM: f64 = 8.0;

/// Distinct whole-dot widths near the targets, widest first, at least one dot.
fn group_widths_dots(dpi: f64) -> Vec<i64> {
    let dot_um = super::dot_um(dpi);
    let mut out: Vec<i64> = Vec::new();
    for t in GROUP_TARGETS_UM {
        let d = ((t / dot_um).round() as i64).max(1);
        if out.last() != Some(&d) {
            out.push(d);
        }
    }
    out
}

pub(crate) fn features_size() -> (f64, f64) {
    (FEATURES_W_MM, FEATURES_H_MM)
}

/// Three parallel lines of `w` dots with gaps of `w` dots (a 1:1 group): vertical lines
/// (widths along x) centred at `cx`, from `y0` to `y1`.
fn vertical_group(c: &mut Canvas, cx: f64, y0: f64, y1: f64, w: i64, dark: bool) {
    let left = (c.px_x(cx) - 2.5 * w as f64).round() as i64;
    let (t, b) = c.rows_of(y0, y1);
    for k in 0..3 {
        let l = left + 2 * k * w;
        c.rect_px(l, t, l + w, b, dark);
    }
}

/// Three horizontal lines of `w` dots (widths along y) centred at `cy`, from `x0` to `x1`.
fn horizontal_group(c: &mut Canvas, cy: f64, x0: f64, x1: f64, w: i64, dark: bool) {
    let top = (c.px_y(cy) - 2.5 * w as f64).round() as i64;
    let (l, r) = c.cols_of(x0, x1);
    for k in 0..3 {
        let t = top + 2 * k * w;
        c.rect_px(l, t, r, t + w, dark);
    }
}

/// Fine features: two rows of line groups (black on clear, clear in black), two ring
/// targets and the star. `o` is the block's lower-left corner.
pub(crate) fn draw_features(c: &mut Canvas, o: Point) {
    let top = o.y + FEATURES_H_MM;
    c.text(
        "Fine features: line groups (line = gap), rings, star",
        o.x,
        top - 1.8,
        1.8,
        Align::Left,
    );
    let (dpi_x, dpi_y) = (c.map.dpi_x, c.map.dpi_y);
    let wx = group_widths_dots(dpi_x);
    let wy = group_widths_dots(dpi_y);
    // Row A: black on clear; row B: clear cut into a black band.
    let rows = [(top - 9.0, true), (top - 18.5, false)];
    for (row_y, dark) in rows {
        let band_top = row_y + GROUP_LINE_MM / 2.0 + 0.8;
        let band_bot = row_y - GROUP_LINE_MM / 2.0 - 0.8;
        if !dark {
            let (l, r) = c.cols_of(o.x, o.x + FEATURES_W_MM);
            let (t, b) = c.rows_of(band_bot, band_top);
            c.rect_px(l, t, r, b, true);
        }
        for (i, (&dx, &dy)) in wx.iter().zip(wy.iter()).enumerate() {
            let x = o.x + GROUP_PITCH_MM * i as f64;
            vertical_group(
                c,
                x + 1.6,
                row_y - GROUP_LINE_MM / 2.0,
                row_y + GROUP_LINE_MM / 2.0,
                dx,
                dark,
            );
            horizontal_group(c, row_y, x + 3.6, x + 3.6 + GROUP_LINE_MM, dy, dark);
            let um = dx as f64 * MM_PER_INCH * 1000.0 / dpi_x;
            c.text(
                &format!("{um:.0}"),
                x + 3.8,
                band_bot - 2.0,
                1.2,
                Align::Center,
            );
        }
    }
    c.text(
        "µm (line and gap width)",
        o.x + FEATURES_W_MM,
        top - 4.2,
        1.2,
        Align::Right,
    );

    // Row C: rings and star.
    let cy = o.y + 3.5 + STAR_RADIUS_MM;
    for (k, w_um) in RING_WIDTHS_UM.iter().enumerate() {
        let cx = o.x + RING_RADIUS_MM + k as f64 * (2.0 * RING_RADIUS_MM + 3.0);
        rings(c, Point::new(cx, cy), w_um / 1000.0);
        c.text(
            &format!("rings {w_um:.0} µm"),
            cx,
            o.y + 0.3,
            1.2,
            Align::Center,
        );
    }
    let sx = o.x + FEATURES_W_MM - STAR_RADIUS_MM - 0.5;
    star(c, Point::new(sx, cy));
    c.text(
        "star: spoke 87 µm per mm of radius",
        o.x + FEATURES_W_MM,
        o.y + 0.3 - 0.0,
        1.2,
        Align::Right,
    );
}

/// Concentric rings of width `w` mm with gaps of `w`, around a central dot.
fn rings(c: &mut Canvas, center: Point, w: f64) {
    c.push(
        true,
        Shape::Disc {
            center,
            diameter: w,
        },
    );
    let mut r = 1.5 * w;
    while r + w / 2.0 <= RING_RADIUS_MM {
        let start = Point::new(center.x + r, center.y);
        c.push(
            true,
            Shape::Stroke {
                start,
                end: start,
                arc: Some((center, Turn::CounterClockwise)),
                width: w,
            },
        );
        r += 2.0 * w;
    }
}

/// A radial star: [`STAR_SPOKES`] black sectors of 360/(2·spokes) degrees each.
fn star(c: &mut Canvas, center: Point) {
    let step = std::f64::consts::PI / STAR_SPOKES as f64;
    let at = |a: f64| {
        Point::new(
            center.x + STAR_RADIUS_MM * a.cos(),
            center.y + STAR_RADIUS_MM * a.sin(),
        )
    };
    for k in 0..STAR_SPOKES {
        let a0 = 2.0 * step * k as f64;
        let contour = Contour {
            start: center,
            segments: vec![
                Segment::Line { to: at(a0) },
                Segment::Arc {
                    to: at(a0 + step),
                    center,
                    turn: Turn::CounterClockwise,
                },
                Segment::Line { to: center },
            ],
        };
        c.push(true, Shape::Polygon(contour));
    }
}

/// Strip geometry, mm.
const STRIP_BODY_MM: f64 = 24.0;
const STRIP_TITLE_MM: f64 = 4.0;
const STRIP_TICK_MM: f64 = 1.5;
const MAX_SEGMENT_W_MM: f64 = 24.0;
/// Widths of the strip's test lines, µm (nearest whole dots): a fine track, a common one, a
/// wide one.
const STRIP_LINES_UM: [f64; 3] = [100.0, 150.0, 250.0];

pub(crate) fn strip_size(n: usize, content_w: f64) -> (f64, f64) {
    let sw = (content_w / n as f64).min(MAX_SEGMENT_W_MM).floor();
    (
        sw * n as f64,
        STRIP_BODY_MM + 2.0 * STRIP_TICK_MM + STRIP_TITLE_MM,
    )
}

/// The exposure strip: `times.len()` numbered segments side by side, each with its total
/// time, a clear field, black lines on clear and clear lines in black. When `mirrored`, the
/// segments are drawn mirror-image so that, with the printed side toward the board, they read
/// correctly through the film and on the etched board.
pub(crate) fn draw_strip(
    c: &mut Canvas,
    o: Point,
    size: (f64, f64),
    times: &[f64],
    mirrored: bool,
) -> Vec<StripSegment> {
    let n = times.len();
    let sw = size.0 / n as f64;
    let bot = o.y + STRIP_TICK_MM;
    let top = bot + STRIP_BODY_MM;
    c.text(
        if mirrored {
            "Exposure strip (mirrored: reads correctly through the film, printed side down)"
        } else {
            "Exposure strip"
        },
        o.x,
        top + STRIP_TICK_MM + 1.0,
        1.8,
        Align::Left,
    );
    let from = c.objects.len();
    let (tx, ty) = (
        ((0.2 * c.map.dpi_x / MM_PER_INCH).round() as i64).max(1),
        ((0.2 * c.map.dpi_y / MM_PER_INCH).round() as i64).max(1),
    );
    // Frame: top and bottom edges, and boundaries reaching beyond the strip so the cover's
    // edge can be set on them.
    c.hline_px(bot, o.x, o.x + size.0, ty, true);
    c.hline_px(top, o.x, o.x + size.0, ty, true);
    for k in 0..=n {
        let x = o.x + sw * k as f64;
        c.vline_px(x, o.y, top + STRIP_TICK_MM, tx, true);
    }
    let dot_um_x = super::dot_um(c.map.dpi_x);
    let line_dots: Vec<i64> = STRIP_LINES_UM
        .iter()
        .map(|u| ((u / dot_um_x).round() as i64).max(1))
        .collect();
    let mut segs = Vec::with_capacity(n);
    for (k, t) in times.iter().enumerate() {
        let x0 = o.x + sw * k as f64;
        let cx = x0 + sw / 2.0;
        c.text(&(k + 1).to_string(), cx, top - 5.5, 4.0, Align::Center);
        c.text(&format_time(*t), cx, top - 8.6, 1.6, Align::Center);
        // Lower part: black lines on clear (left half), clear lines in a black patch (right).
        let (y0, y1) = (bot + 1.5, top - 10.5);
        let half = sw / 2.0;
        c.rect_mm(x0 + half + 0.3, y0, x0 + sw - 1.2, y1, true);
        for (i, &d) in line_dots.iter().enumerate() {
            let step = (half - 1.5) / line_dots.len() as f64;
            let lx = x0 + 1.2 + step * (i as f64 + 0.5);
            vertical_group(c, lx, y0, y1, d, true);
            vertical_group(c, lx + half - 0.3, y0 + 0.8, y1 - 0.8, d, false);
        }
        let mut rect = Bounds {
            min_x: x0,
            min_y: bot,
            max_x: x0 + sw,
            max_y: top,
        };
        if mirrored {
            let axis = o.x + size.0 / 2.0;
            let (a, b) = (2.0 * axis - rect.max_x, 2.0 * axis - rect.min_x);
            rect.min_x = a;
            rect.max_x = b;
        }
        segs.push(StripSegment {
            number: k as u32 + 1,
            total_s: *t,
            rect_mm: rect,
        });
    }
    if mirrored {
        c.mirror_from(from, o.x + size.0 / 2.0);
    }
    segs
}

const SCHEDULE_CAP_MM: f64 = 1.5;
const SCHEDULE_PITCH_MM: f64 = 2.6;

/// The schedule's lines: how to give every segment its total time.
pub(crate) fn schedule_lines(
    schedule: &[ScheduleStep],
    times: &[f64],
    profile: &Profile,
) -> Vec<String> {
    let n = times.len();
    let side = match profile.process.printed_side {
        PrintedSide::TowardBoard => "printed side down on the board",
        PrintedSide::AwayFromBoard => "printed side up",
    };
    let mut lines = vec![
        format!(
            "Exposure schedule: segment 1 gets {} in total, segment {n} {}.",
            format_time(times[0]),
            format_time(times[n - 1])
        ),
        format!(
            "Lay the strip {side}; cover segments 1 to {} with card.",
            n - 1
        ),
    ];
    for s in schedule {
        let what = if s.step == 1 {
            format!("step 1: expose {}", format_time(s.expose_s))
        } else {
            format!(
                "step {}: uncover segment {}, expose {}",
                s.step,
                s.uncover,
                format_time(s.expose_s)
            )
        };
        lines.push(format!(
            "{what} (lamp time so far {})",
            format_time(s.elapsed_s)
        ));
    }
    lines.push("Develop and etch as usual. Best segment: clear areas clean,".into());
    lines.push("finest lines sharp and whole, black patch intact.".into());
    lines
}

pub(crate) fn schedule_size(lines: &[String]) -> (f64, f64) {
    let w = lines
        .iter()
        .map(|l| font::text_width_mm(l, SCHEDULE_CAP_MM))
        .fold(0.0, f64::max);
    (w, lines.len() as f64 * SCHEDULE_PITCH_MM)
}

pub(crate) fn draw_schedule(c: &mut Canvas, o: Point, size: (f64, f64), lines: &[String]) {
    let mut y = o.y + size.1 - SCHEDULE_CAP_MM;
    for l in lines {
        c.text(l, o.x, y, SCHEDULE_CAP_MM, Align::Left);
        y -= SCHEDULE_PITCH_MM;
    }
}
