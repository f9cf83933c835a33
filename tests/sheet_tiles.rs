//! Films too big for the printable area are cut into overlapping tiles.

use geo::{unary_union, Area, BoundingRect, Polygon, Rect};
use proptest::prelude::*;
use std::path::PathBuf;
use umbra::sheet::{layout, split_into_tiles, FilmRequest, Orientation, SheetSpec, Tile};

fn film(id: usize, w: f64, h: f64, copies: u32) -> FilmRequest {
    FilmRequest {
        id,
        width_mm: w,
        height_mm: h,
        copies,
        group: None,
    }
}

fn rect_polygon(t: &Tile) -> Polygon<f64> {
    let r = t.source_rect;
    Rect::new((r.min_x, r.min_y), (r.max_x, r.max_y)).to_polygon()
}

/// Checks that `tiles` cover a `w` × `h` film with the given overlap and each fits `pw` × `ph`.
fn check_tiles(tiles: &[Tile], w: f64, h: f64, overlap: f64, pw: f64, ph: f64) {
    let tol = 1e-6;
    let (rows, cols) = (tiles[0].rows, tiles[0].cols);
    assert_eq!(tiles.len() as u32, rows * cols);
    // Union of the source rectangles = the whole film: same area and same bounding box
    // (geo's boolean union, an implementation independent of ours).
    let polygons: Vec<Polygon<f64>> = tiles.iter().map(rect_polygon).collect();
    let union = unary_union(&polygons);
    assert!(
        (union.unsigned_area() - w * h).abs() <= 1e-6 * w * h,
        "tiles cover {} mm², film is {} mm²",
        union.unsigned_area(),
        w * h
    );
    assert_eq!(union.0.len(), 1, "tile union is not one piece");
    let bb = union.bounding_rect().unwrap();
    assert!(bb.min().x.abs() <= tol && bb.min().y.abs() <= tol);
    assert!((bb.max().x - w).abs() <= tol && (bb.max().y - h).abs() <= tol);
    let at = |row: u32, col: u32| {
        tiles
            .iter()
            .find(|t| t.row == row && t.col == col)
            .unwrap_or_else(|| panic!("tile ({row}, {col}) missing"))
            .source_rect
    };
    for t in tiles {
        let r = t.source_rect;
        assert!(
            r.width() <= pw + tol && r.height() <= ph + tol,
            "{t:?} too big"
        );
        // Right neighbour: overlaps by exactly the configured amount.
        if t.col + 1 < cols {
            let next = at(t.row, t.col + 1);
            assert!(
                (r.max_x - next.min_x - overlap).abs() <= 1e-9,
                "{t:?} / {next:?}"
            );
        } else {
            assert!(
                (r.max_x - w).abs() <= tol,
                "last column ends at the film edge"
            );
        }
        // Row below (rows count from the top of the film, y up).
        if t.row + 1 < rows {
            let below = at(t.row + 1, t.col);
            assert!(
                (below.max_y - r.min_y - overlap).abs() <= 1e-9,
                "{t:?} / {below:?}"
            );
        } else {
            assert!(r.min_y.abs() <= tol, "bottom row ends at the film edge");
        }
        if t.col == 0 {
            assert!(r.min_x.abs() <= tol);
        }
        if t.row == 0 {
            assert!((r.max_y - h).abs() <= tol, "row 0 is the top of the film");
        }
    }
}

#[test]
fn long_strip_on_a4_is_tiled_along_its_length() {
    // A real 970 × 20 mm board is in the test corpus (a pedal sensor strip).
    // Hand arithmetic, A4 (ISO 216: 210 × 297 mm) with 5 mm margins and 10 mm overlap:
    // - landscape printable area 287 × 200 mm. Pieces needed: n ≥ (970 − 10) / (287 − 10)
    //   = 3.47, so n = 4, each (970 + 3·10) / 4 = 250 mm long, starting every 240 mm:
    //   0–250, 240–490, 480–730, 720–970. Stacked: 4·20 + 3·5 = 95 ≤ 200 mm, one sheet.
    // - portrait printable area 200 × 287 mm: n ≥ 960 / 190 = 5.05, so 6 tiles of
    //   (970 + 5·10) / 6 = 170 mm, also one sheet (6·20 + 5·5 = 145 ≤ 287).
    // Both need one sheet; auto takes the one with fewer tiles: landscape, 4 tiles.
    let spec = SheetSpec::default();
    let result = layout(&[film(3, 970.0, 20.0, 1)], &spec).unwrap();
    assert_eq!(result.orientation, Orientation::Landscape);
    assert_eq!(result.sheets.len(), 1);
    let placements = &result.sheets[0].placements;
    assert_eq!(placements.len(), 4);
    let spans: Vec<(f64, f64)> = placements
        .iter()
        .map(|p| {
            let t = p.tile.expect("tiled");
            assert_eq!((t.rows, t.cols, t.row), (1, 4, 0));
            assert_eq!((p.width_mm, p.height_mm), (250.0, 20.0));
            (t.source_rect.min_x, t.source_rect.max_x)
        })
        .collect();
    assert_eq!(
        spans,
        vec![(0.0, 250.0), (240.0, 490.0), (480.0, 730.0), (720.0, 970.0)]
    );
    let tiles: Vec<Tile> = placements.iter().map(|p| p.tile.unwrap()).collect();
    check_tiles(&tiles, 970.0, 20.0, 10.0, 287.0, 200.0);

    // Forced portrait: 6 tiles of 170 mm, as computed above.
    let portrait = SheetSpec {
        orientation: Orientation::Portrait,
        ..SheetSpec::default()
    };
    let result = layout(&[film(3, 970.0, 20.0, 1)], &portrait).unwrap();
    assert_eq!(result.sheets.len(), 1);
    assert_eq!(result.tile_count(), 6);
    assert!(result.sheets[0]
        .placements
        .iter()
        .all(|p| (p.width_mm - 170.0).abs() < 1e-9));
}

/// The corpus folder, relative to the crate (rules: never an absolute path).
fn corpus() -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if dir.is_dir() {
        Some(dir)
    } else if std::env::var("CI").as_deref() == Ok("true") {
        panic!("the real-world corpus ../shared/realworld is missing");
    } else {
        eprintln!("skipped: ../shared/realworld is absent");
        None
    }
}

#[test]
fn long_strip_from_the_corpus_readme() {
    // The corpus board's own description states its size ("Dimension: 970mm x 20mm").
    let Some(dir) = corpus() else { return };
    let readme = std::fs::read_to_string(
        dir.join("03-organ-pedal-sensor-strip-970mm")
            .join("README.txt"),
    )
    .expect("README of the long board");
    let line = readme
        .lines()
        .find(|l| l.trim_start().starts_with("Dimension:"))
        .expect("a Dimension line");
    let numbers: Vec<f64> = line
        .split(|c: char| !(c.is_ascii_digit() || c == '.'))
        .filter_map(|t| t.parse().ok())
        .collect();
    let [w, h] = numbers[..] else {
        panic!("unexpected dimension line {line:?}")
    };
    let result = layout(&[film(1, w, h, 1)], &SheetSpec::default()).unwrap();
    // Same hand arithmetic as above: 4 tiles on one landscape A4 sheet.
    assert_eq!(result.tile_count(), 4);
    assert_eq!(result.sheets.len(), 1);
}

#[test]
fn big_film_tiles_in_both_directions() {
    // 500 × 400 mm on A4 portrait (printable 200 × 287 mm), overlap 10 mm:
    // cols: (500 − 10) / (200 − 10) = 2.58 → 3 of (500 + 20) / 3 = 173.33 mm;
    // rows: (400 − 10) / (287 − 10) = 1.41 → 2 of (400 + 10) / 2 = 205 mm.
    // No two tiles share a sheet (173.33·2 + 5 > 200, 205·2 + 5 > 287): 6 sheets.
    let spec = SheetSpec {
        orientation: Orientation::Portrait,
        ..SheetSpec::default()
    };
    let result = layout(&[film(1, 500.0, 400.0, 1)], &spec).unwrap();
    assert_eq!(result.sheets.len(), 6);
    let tiles: Vec<Tile> = result
        .sheets
        .iter()
        .flat_map(|s| s.placements.iter().map(|p| p.tile.unwrap()))
        .collect();
    assert_eq!((tiles[0].rows, tiles[0].cols), (2, 3));
    for t in &tiles {
        assert!((t.source_rect.width() - 520.0 / 3.0).abs() < 1e-9);
        assert!((t.source_rect.height() - 205.0).abs() < 1e-9);
    }
    // Reading order: the first sheet carries the top-left tile.
    assert_eq!((tiles[0].row, tiles[0].col), (0, 0));
    assert_eq!(tiles[0].source_rect.max_y, 400.0);
    check_tiles(&tiles, 500.0, 400.0, 10.0, 200.0, 287.0);
}

#[test]
fn zero_overlap_tiles_abut() {
    let tiles = split_into_tiles(300.0, 50.0, 3, 1, 0.0);
    check_tiles(&tiles, 300.0, 50.0, 0.0, 100.0, 50.0);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn tiles_cover_the_film_with_exact_overlaps(
        w in 1.0f64..1500.0,
        h in 1.0f64..1500.0,
        overlap in 0.0f64..40.0,
        copies in 1u32..3,
        landscape in any::<bool>(),
    ) {
        let spec = SheetSpec {
            orientation: if landscape { Orientation::Landscape } else { Orientation::Portrait },
            tile_overlap_mm: overlap,
            ..SheetSpec::default()
        };
        // A4 (ISO 216, 210 × 297 mm) less 5 mm margins.
        let (pw, ph) = if landscape { (287.0, 200.0) } else { (200.0, 287.0) };
        let result = layout(&[film(1, w, h, copies)], &spec).unwrap();
        for copy in 0..copies {
            let tiles: Vec<Tile> = result
                .sheets
                .iter()
                .flat_map(|s| &s.placements)
                .filter(|p| p.copy == copy)
                .map(|p| {
                    let t = p.tile.unwrap_or(Tile {
                        row: 0,
                        col: 0,
                        rows: 1,
                        cols: 1,
                        source_rect: umbra::image::Bounds {
                            min_x: 0.0,
                            min_y: 0.0,
                            max_x: p.width_mm,
                            max_y: p.height_mm,
                        },
                    });
                    // The placement has the size of the part of the film it shows.
                    assert!((p.width_mm - t.source_rect.width()).abs() < 1e-9);
                    assert!((p.height_mm - t.source_rect.height()).abs() < 1e-9);
                    t
                })
                .collect();
            // Whole films only when they fit; tiles only when they do not.
            let fits = w <= pw && h <= ph;
            prop_assert_eq!(tiles.len() == 1 && tiles[0].rows == 1, fits);
            check_tiles(&tiles, w, h, overlap, pw, ph);
            // As few tiles as the overlap allows: one fewer column (or row) would not fit.
            let cols = tiles[0].cols as f64;
            if cols > 1.0 {
                prop_assert!((w + (cols - 2.0) * overlap) / (cols - 1.0) > pw);
            }
            let rows = tiles[0].rows as f64;
            if rows > 1.0 {
                prop_assert!((h + (rows - 2.0) * overlap) / (rows - 1.0) > ph);
            }
        }
    }
}
