//! What every sheet of `umbra films` must satisfy, checked on the manifest, the PDF bytes
//! and the decoded sheet PNGs: pieces, captions, mark bands and tile alignment marks. Shared
//! by the sheet layout tests (films_layout) and the tile mark tests (films_tile_marks).

#![allow(dead_code)]

use crate::films_support::*;
use serde_json::Value;
use std::path::Path;
use umbra::film::font;
use umbra::image::Point;

/// Caption drawing of src/films/sheets.rs (no outside source: the caption is umbra's own): 1.6 mm
/// capitals, pen 0.16 mm, baseline 1 mm above the piece starting half a pen in from its left
/// edge, text
/// "<film> - <mirrored|as drawn>[ - copy k/n][ - tile row r col c of RxC]".
pub const CAPTION_CAP_MM: f64 = 1.6;
pub const CAPTION_PEN_MM: f64 = 0.16;

pub fn caption_text(film: &Value, p: &Value, copies: u32) -> String {
    let mut s = format!(
        "{} - {}",
        film["title"].as_str().unwrap(),
        if film["mirrored"].as_bool().unwrap() {
            "mirrored"
        } else {
            "as drawn"
        }
    );
    if copies > 1 {
        s.push_str(&format!(" - copy {}/{copies}", p["copy"]));
    }
    if let Some(t) = p["tile"].as_array() {
        s.push_str(&format!(
            " - tile row {} col {} of {}x{}",
            t[0], t[1], t[2], t[3]
        ));
    }
    s
}

/// The caption's box in sheet mm [x0, y0, x1, y1] (descenders 2.5/8 of the cap height,
/// docs/marks-and-labels.md "The stroke font"; half a pen all round).
pub fn caption_box(p: &Value, text: &str) -> [f64; 4] {
    let Point { x, y: base } = caption_origin(p);
    let pen = CAPTION_PEN_MM / 2.0;
    [
        x - pen,
        base - CAPTION_CAP_MM * 2.5 / 8.0 - pen,
        x + font::text_width_mm(text, CAPTION_CAP_MM) + pen,
        base + CAPTION_CAP_MM + pen,
    ]
}

pub fn caption_origin(p: &Value) -> Point {
    Point::new(
        f(&p["x_mm"]) + CAPTION_PEN_MM / 2.0,
        f(&p["y_mm"]) + f(&p["height_mm"]) + bands_of(p)[2] + 1.0,
    )
}

/// Tile mark bands of docs/sheets.md "Tile alignment marks" (umbra's own rule, no outside
/// source): 3 mm beside the film block, on the top and bottom edges of the tiles of a film
/// with several columns and on the left and right edges of those of a film with several rows;
/// none for a whole film. [left, right, top, bottom] in mm.
pub const TILE_BAND_MM: f64 = 3.0;

pub fn bands_of(p: &Value) -> [f64; 4] {
    let Some(t) = p["tile"].as_array() else {
        return [0.0; 4];
    };
    let (rows, cols) = (t[2].as_u64().unwrap(), t[3].as_u64().unwrap());
    let along = if rows > 1 { TILE_BAND_MM } else { 0.0 };
    let across = if cols > 1 { TILE_BAND_MM } else { 0.0 };
    [along, along, across, across]
}

/// The piece with its mark bands, sheet mm [x0, y0, x1, y1].
pub fn reserved_rect_of(p: &Value) -> [f64; 4] {
    let r = rect_of(p);
    let b = bands_of(p);
    [r[0] - b[0], r[1] - b[3], r[2] + b[1], r[3] + b[2]]
}

pub fn rect_of(p: &Value) -> [f64; 4] {
    let (x, y) = (f(&p["x_mm"]), f(&p["y_mm"]));
    [x, y, x + f(&p["width_mm"]), y + f(&p["height_mm"])]
}

pub fn overlap(a: &[f64; 4], b: &[f64; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

pub fn inside(r: &[f64; 4], area: &[f64; 4], tol: f64) -> bool {
    r[0] >= area[0] - tol && r[1] >= area[1] - tol && r[2] <= area[2] + tol && r[3] <= area[3] + tol
}

pub struct SheetRules {
    /// Margins with the sheet held in portrait: top, right, bottom, left (mm).
    pub margins: (f64, f64, f64, f64),
    pub gap_mm: f64,
    pub dpi: f64,
    pub copies: u32,
}

/// Everything that must hold on every sheet of a run; returns the number of pieces seen.
pub fn check_sheets(out: &Path, m: &Value, rules: &SheetRules) -> usize {
    let films = m["films"].as_array().unwrap();
    let pdf = std::fs::read(out.join("films.pdf")).unwrap();
    let boxes = media_boxes(&pdf);
    let sheets = m["sheets"].as_array().unwrap();
    assert_eq!(boxes.len(), sheets.len(), "one PDF page per sheet");
    let s = rules.dpi / MM_PER_INCH;
    let mut pieces_seen = 0;
    for (si, sh) in sheets.iter().enumerate() {
        let number = si + 1;
        let size = (f(&sh["size_mm"][0]), f(&sh["size_mm"][1]));
        // PDF user space unit 1/72 in (ISO 32000-1 §8.3.2.1): the page is the sheet.
        let mb = boxes[si];
        assert!(
            (mb[2] - mb[0] - size.0 / MM_PER_INCH * 72.0).abs() < 0.01
                && (mb[3] - mb[1] - size.1 / MM_PER_INCH * 72.0).abs() < 0.01,
            "sheet {number}: MediaBox {mb:?} for {size:?} mm"
        );
        let sheet = Sheet::load(&out.join(sh["png"].as_str().unwrap()));
        assert_eq!(sheet.width, (size.0 * s).round() as usize);
        assert_eq!(sheet.height, (size.1 * s).round() as usize);
        // PNG pHYs: pixels per metre, round(dpi / 0.0254) (PNG spec §11.3.5.3).
        let ppm = (rules.dpi / 0.0254).round() as u32;
        assert_eq!(sheet.ppm, Some((ppm, ppm)), "sheet {number}: pHYs");

        let (t, r, b, l) = rules.margins;
        let printable = printable_mm(size, t, r, b, l);
        let mut rects = Vec::new();
        let mut captions = Vec::new();
        for film in films {
            for p in film["placements"].as_array().unwrap() {
                if p["sheet"].as_u64().unwrap() as usize != number {
                    continue;
                }
                let rect = rect_of(p);
                // The piece and its mark bands stay printable (docs/sheets.md).
                let reserved = reserved_rect_of(p);
                assert!(
                    inside(&reserved, &printable, 1e-6),
                    "sheet {number}: {} at {reserved:?} (with mark bands) leaves the printable area {printable:?}",
                    film["key"]
                );
                if p["tile"].is_null() {
                    // A whole film has no alignment marks (docs/sheets.md).
                    assert!(p["tile_marks"].as_array().unwrap().is_empty());
                }
                let text = caption_text(film, p, rules.copies);
                // The caption's box errs on the large side (half a pen all round), so whether
                // the caption stays printable is checked on the pixels below.
                let cap = caption_box(p, &text);
                assert!(
                    cap[2] <= rect[2] + 0.1,
                    "sheet {number}: caption \"{text}\" is wider than its piece {rect:?}"
                );
                // The caption says what the piece is (compared with the text drawn by the
                // stroke font at the caption's place).
                let to_px =
                    |x: f64, y: f64| ((x * s).floor() as i64, ((size.1 - y) * s).floor() as i64);
                let (i0, j1) = to_px(cap[0] - 0.3, cap[1] - 0.3);
                let (i1, j0) = to_px(cap[2] + 0.3, cap[3] + 0.3);
                let shapes = font::text_shapes(
                    &text,
                    caption_origin(p),
                    CAPTION_CAP_MM,
                    CAPTION_PEN_MM,
                    false,
                    0.0,
                );
                let (diff, ink) =
                    text_difference(&sheet, rules.dpi, shapes, (i0, j0, i1 + 1, j1 + 1), 1);
                assert!(
                    diff * 5 < ink,
                    "sheet {number}: caption \"{text}\" not found ({diff} of {ink} pixels differ)"
                );
                // The frame's position on the sheet equals the manifest's placement rect: a
                // registration target is found, from pixels, where the rect and the film's
                // own map put it (within one pixel).
                if p["tile"].is_null() {
                    let fa = Affine::of(&film["board_to_film_px"]);
                    let (left, top) =
                        placement_top_left_px(p, sheet.height as f64 / s, (rules.dpi, rules.dpi));
                    for (tx, ty) in manifest_targets(m) {
                        let (u, v) = fa.apply(tx, ty);
                        let predicted = (left + u, top + v);
                        let got = mark_centre(&sheet, predicted, 0.55 * 5.0 * s);
                        assert!(
                            (got.0 - predicted.0).abs() <= 1.0 && (got.1 - predicted.1).abs() <= 1.0,
                            "sheet {number}: {} target ({tx}, {ty}) at {got:?}, placement says {predicted:?}",
                            film["key"]
                        );
                    }
                }
                rects.push((film["key"].as_str().unwrap().to_string(), reserved));
                captions.push((text, cap));
                pieces_seen += 1;
            }
        }
        // docs/sheets.md "Nesting": any two placements (with their mark bands) are at least
        // gap_mm apart along x or y, so they never overlap; no caption overlaps another piece
        // or caption.
        for i in 0..rects.len() {
            for j in i + 1..rects.len() {
                let (a, b) = (&rects[i].1, &rects[j].1);
                let dx = (b[0] - a[2]).max(a[0] - b[2]);
                let dy = (b[1] - a[3]).max(a[1] - b[3]);
                assert!(
                    dx >= rules.gap_mm - 1e-6 || dy >= rules.gap_mm - 1e-6,
                    "sheet {number}: {} and {} are closer than {} mm",
                    rects[i].0,
                    rects[j].0,
                    rules.gap_mm
                );
                assert!(!overlap(&captions[i].1, &captions[j].1), "captions overlap");
            }
            for (j, (_, r)) in rects.iter().enumerate() {
                assert!(
                    i == j || !overlap(&captions[i].1, r),
                    "caption \"{}\" overlaps the piece {}",
                    captions[i].0,
                    rects[j].0
                );
            }
        }
        // From the pixels: nothing is printed in the unprintable margins, and every black
        // pixel belongs to a piece (with its mark bands, if tiled) or a caption. A whole film
        // has no bands, so an untiled sheet gains no black pixel from the marks.
        let tol = 0.5 / s;
        sheet.for_each_black(|x, y| {
            let (cx, cy) = ((x as f64 + 0.5) / s, (sheet.height as f64 - y as f64 - 0.5) / s);
            let at = [cx, cy, cx, cy];
            assert!(
                inside(&at, &printable, tol),
                "sheet {number}: black pixel ({x}, {y}) = ({cx:.2}, {cy:.2}) mm lies in the unprintable margin {printable:?}"
            );
            let in_piece = rects.iter().any(|(_, r)| inside(&at, r, tol));
            let in_caption = captions.iter().any(|(_, c)| inside(&at, c, tol));
            assert!(
                in_piece || in_caption,
                "sheet {number}: black pixel ({cx:.2}, {cy:.2}) mm is neither a piece nor a caption"
            );
        });
    }
    pieces_seen
}

pub fn demo_run(dir: &Path, profile: &str) -> Value {
    write_profile(dir, "p.toml", profile);
    films_ok(
        dir,
        &[
            demo_dir().to_str().unwrap(),
            "-o",
            "out",
            "--profile",
            "p.toml",
        ],
    );
    manifest(&dir.join("out"))
}

pub fn default_rules(dpi: f64) -> SheetRules {
    // Default margins 5 mm each and gap 5 mm (docs/sheets.md, src/default-profile.toml).
    SheetRules {
        margins: (5.0, 5.0, 5.0, 5.0),
        gap_mm: 5.0,
        dpi,
        copies: 1,
    }
}

pub use crate::poppler::read_pgm;

/// How a tile mark looks (docs/sheets.md "Tile alignment marks"; umbra's own design, no
/// outside source): a tick across its band, 1 mm either side of the band's centre line, with
/// an arm along the band pointing into the overlap strip, from the mark's point.
pub const MARK_HALF_TICK_MM: f64 = 1.0;
pub const MARK_CLEAR_MM: f64 = 0.5;

/// Where a tile mark is drawn, found from the pixels near `predicted` (sheet px): the centre
/// of the tick (across the band) and of the arm (along it), as sheet px coordinates.
pub fn detect_mark(
    sheet: &Sheet,
    predicted: (f64, f64),
    across_x: bool,
    dir: f64,
    s: f64,
) -> (f64, f64) {
    // In band-aligned coordinates: `a` along the band, `c` across it.
    let (pa, pc) = if across_x {
        (predicted.1, predicted.0)
    } else {
        (predicted.0, predicted.1)
    };
    let black = |a: i64, c: i64| {
        if across_x {
            sheet.black(c, a)
        } else {
            sheet.black(a, c)
        }
    };
    let centre = |counts: &[(i64, u64)]| -> f64 {
        let most = counts.iter().map(|c| c.1).max().unwrap_or(0);
        assert!(most > 0, "no mark near {predicted:?}");
        let on: Vec<f64> = counts
            .iter()
            .filter(|c| c.1 * 2 >= most)
            .map(|c| c.0 as f64 + 0.5)
            .collect();
        on.iter().sum::<f64>() / on.len() as f64
    };
    // The tick: the line across the band with the most ink, within 1 mm along.
    let half_c = ((MARK_HALF_TICK_MM - 0.1) * s) as i64;
    let ticks: Vec<(i64, u64)> = ((pa - s) as i64..=(pa + s) as i64)
        .map(|a| {
            let n = (pc as i64 - half_c..=pc as i64 + half_c)
                .filter(|&c| black(a, c))
                .count();
            (a, n as u64)
        })
        .collect();
    // The arm: the line along the band with the most ink on the arm's side of the tick.
    let arm_span = if dir > 0.0 {
        (pa + 0.3 * s) as i64..=(pa + s) as i64
    } else {
        (pa - s) as i64..=(pa - 0.3 * s) as i64
    };
    let arms: Vec<(i64, u64)> = ((pc - 0.5 * s) as i64..=(pc + 0.5 * s) as i64)
        .map(|c| {
            let n = arm_span.clone().filter(|&a| black(a, c)).count();
            (c, n as u64)
        })
        .collect();
    let (a, c) = (centre(&ticks), centre(&arms));
    if across_x {
        (c, a)
    } else {
        (a, c)
    }
}

/// Checks the alignment marks of every tile against the pixels, and that the two tiles of
/// every join carry them at the same film coordinates. Returns the number of mark pairs.
///
/// Film pixel → sheet pixel for a piece is the difference of its placement's board → sheet
/// transform and the film's board → film transform (both in the manifest); a film-local mm
/// point (u, v) is film pixel (u·dpi/25.4, height_px − v·dpi/25.4): 1 in = 25.4 mm by
/// definition, and pixel rows count down from the top row as PNG scanlines do (from memory
/// of the PNG spec) while film-local y is up (docs/sheets.md).
pub fn check_tile_marks(out: &Path, m: &Value, dpi: f64) -> usize {
    check_tile_marks_on(m, dpi, |number| {
        Sheet::load(&out.join(m["sheets"][number - 1]["png"].as_str().unwrap()))
    })
}

/// [`check_tile_marks`] on the sheets `load` gives by 1-based number.
pub fn check_tile_marks_on(m: &Value, dpi: f64, load: impl Fn(usize) -> Sheet) -> usize {
    use std::collections::BTreeMap;
    let s = dpi / MM_PER_INCH;
    let mut sheets: BTreeMap<usize, Sheet> = BTreeMap::new();
    // (film, copy, tile pair, edge, end) → the mark's detected film pixel on each tile.
    type Key = (String, u64, [u64; 4], String, String);
    let mut found: BTreeMap<Key, Vec<(f64, f64)>> = BTreeMap::new();
    for film in m["films"].as_array().unwrap() {
        let key = film["key"].as_str().unwrap();
        let fa = Affine::of(&film["board_to_film_px"]);
        let fh = f(&film["size_px"][1]);
        for p in film["placements"].as_array().unwrap() {
            let Some(t) = p["tile"].as_array() else {
                continue;
            };
            let (row, col) = (t[0].as_u64().unwrap() - 1, t[1].as_u64().unwrap() - 1);
            let number = p["sheet"].as_u64().unwrap() as usize;
            let sheet = sheets.entry(number).or_insert_with(|| load(number));
            let sheet_h_mm = f(&m["sheets"][number - 1]["size_mm"][1]);
            let a = Affine::of(&p["board_to_sheet_px"]);
            let off = (a.c - fa.c, a.f - fa.f);
            let block = rect_of(p);
            let marks = p["tile_marks"].as_array().unwrap();
            // Every neighbour gets both ends of its strip in both bands across the strip.
            let neighbours = [
                (row > 0, [row - row.min(1), col]),
                (row + 1 < t[2].as_u64().unwrap(), [row + 1, col]),
                (col > 0, [row, col - col.min(1)]),
                (col + 1 < t[3].as_u64().unwrap(), [row, col + 1]),
            ];
            let expected: usize = neighbours.iter().filter(|n| n.0).count() * 4;
            assert_eq!(marks.len(), expected, "{key} tile {t:?}: marks {marks:?}");
            for mk in marks {
                let (u, v) = (f(&mk["at"]["x"]), f(&mk["at"]["y"]));
                let edge = mk["edge"].as_str().unwrap().to_string();
                let end = mk["end"].as_str().unwrap().to_string();
                let nb = [
                    mk["neighbour"][0].as_u64().unwrap(),
                    mk["neighbour"][1].as_u64().unwrap(),
                ];
                assert!(
                    neighbours.iter().any(|n| n.0 && n.1 == nb),
                    "{key}: mark for {nb:?}"
                );
                let predicted = (u * s + off.0, fh - v * s + off.1);
                let across_x = edge == "left" || edge == "right";
                // The arm points into the strip: +film coordinate at its start. Film y is up,
                // pixel rows down.
                let dir = if end == "start" { 1.0 } else { -1.0 };
                let dir = if across_x { -dir } else { dir };
                let got = detect_mark(sheet, predicted, across_x, dir, s);
                assert!(
                    (got.0 - predicted.0).abs() <= 1.0 && (got.1 - predicted.1).abs() <= 1.0,
                    "{key} tile {t:?}: {edge} {end} mark drawn at {got:?}, manifest says {predicted:?}"
                );
                // The mark lies in its band, outside the film block: its point is at least
                // the tick's half length and the clear space away from the block's edge.
                let (x_mm, y_mm) = (got.0 / s, sheet_h_mm - got.1 / s);
                let away = match edge.as_str() {
                    "top" => y_mm - block[3],
                    "bottom" => block[1] - y_mm,
                    "left" => block[0] - x_mm,
                    _ => x_mm - block[2],
                };
                assert!(
                    away >= MARK_HALF_TICK_MM + MARK_CLEAR_MM - 1.0 / s,
                    "{key} tile {t:?}: {edge} mark {away} mm from the film block"
                );
                let pair = if (row, col) < (nb[0], nb[1]) {
                    [row, col, nb[0], nb[1]]
                } else {
                    [nb[0], nb[1], row, col]
                };
                let film_px = (got.0 - off.0, got.1 - off.1);
                found
                    .entry((
                        key.to_string(),
                        p["copy"].as_u64().unwrap(),
                        pair,
                        edge,
                        end,
                    ))
                    .or_default()
                    .push(film_px);
            }
        }
    }
    // Laid over each other in register, the two tiles' marks coincide: the same film pixel
    // within one pixel.
    for (k, at) in &found {
        assert_eq!(
            at.len(),
            2,
            "{k:?}: the mark is on {} tiles, not 2",
            at.len()
        );
        assert!(
            (at[0].0 - at[1].0).abs() <= 1.0 && (at[0].1 - at[1].1).abs() <= 1.0,
            "{k:?}: the two tiles' marks are at film pixels {:?} and {:?}",
            at[0],
            at[1]
        );
    }
    found.len()
}
