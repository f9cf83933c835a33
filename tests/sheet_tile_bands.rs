//! Tiles packed together with the bands that hold their alignment marks
//! (`sheet::layout_with_mark_bands`, docs/sheets.md "Tile alignment marks").

use geo::{unary_union, Area, Polygon, Rect};
use umbra::image::Bounds;
use umbra::sheet::{
    layout, layout_with_mark_bands, FilmRequest, Layout, Orientation, Placement, SheetSpec,
};

const BAND: f64 = 3.0;

fn film(id: usize, w: f64, h: f64) -> FilmRequest {
    FilmRequest {
        id,
        width_mm: w,
        height_mm: h,
        copies: 1,
        group: None,
    }
}

/// ISO 216 A4 portrait (210 × 297 mm) with the default 5 mm margins: printable 200 × 287 mm.
fn a4_portrait() -> SheetSpec {
    SheetSpec {
        orientation: Orientation::Portrait,
        ..SheetSpec::default()
    }
}

fn inside(r: &Bounds, area: &Bounds) -> bool {
    let tol = 1e-6;
    r.min_x >= area.min_x - tol
        && r.min_y >= area.min_y - tol
        && r.max_x <= area.max_x + tol
        && r.max_y <= area.max_y + tol
}

/// Everything docs/sheets.md promises for a banded layout of one film `w` × `h`.
fn check(l: &Layout, spec: &SheetSpec, w: f64, h: f64) -> Vec<Placement> {
    let mut all = Vec::new();
    for sheet in &l.sheets {
        for (i, a) in sheet.placements.iter().enumerate() {
            // Tile and bands fit the printable area.
            assert!(inside(&a.reserved_rect(BAND), &sheet.printable), "{a:?}");
            // Any two pieces with their bands are gap_mm apart along x or y.
            for b in &sheet.placements[i + 1..] {
                let (ra, rb) = (a.reserved_rect(BAND), b.reserved_rect(BAND));
                let dx = (rb.min_x - ra.max_x).max(ra.min_x - rb.max_x);
                let dy = (rb.min_y - ra.max_y).max(ra.min_y - rb.max_y);
                assert!(dx >= spec.gap_mm - 1e-6 || dy >= spec.gap_mm - 1e-6);
            }
            all.push(a.clone());
        }
    }
    // The tiles' film rects cover the film (area of the union by geo, an implementation
    // independent of ours) and neighbours overlap by exactly the configured overlap.
    let polygons: Vec<Polygon<f64>> = all
        .iter()
        .map(|p| {
            let r = p.tile.unwrap().source_rect;
            Rect::new((r.min_x, r.min_y), (r.max_x, r.max_y)).to_polygon()
        })
        .collect();
    let union = unary_union(&polygons);
    assert!((union.unsigned_area() - w * h).abs() <= 1e-6 * w * h);
    for a in &all {
        for b in &all {
            let (ta, tb) = (a.tile.unwrap(), b.tile.unwrap());
            if ta.row == tb.row && tb.col == ta.col + 1 {
                let ov = ta.source_rect.max_x - tb.source_rect.min_x;
                assert!((ov - spec.tile_overlap_mm).abs() < 1e-9, "overlap {ov}");
            }
            if ta.col == tb.col && tb.row == ta.row + 1 {
                let ov = tb.source_rect.max_y - ta.source_rect.min_y;
                assert!((ov - spec.tile_overlap_mm).abs() < 1e-9, "overlap {ov}");
            }
        }
    }
    all
}

#[test]
fn a_strip_gets_bands_above_and_below_and_shorter_tiles_only_where_needed() {
    let spec = a4_portrait();
    let l = layout_with_mark_bands(&[film(0, 970.0, 20.0)], &spec, BAND).unwrap();
    let tiles = check(&l, &spec, 970.0, 20.0);
    // One row: bands on top and bottom only, so the tile length is limited by the full
    // printable width: n ≥ (970 − 10) / (200 − 10) = 5.05 → 6 tiles of (970 + 5·10)/6 = 170 mm
    // (docs/sheets.md "Tiling", hand arithmetic).
    assert_eq!(tiles.len(), 6);
    assert!((tiles[0].width_mm - 170.0).abs() < 1e-9);
    let b = tiles[0].bands(BAND);
    assert_eq!((b.left, b.right, b.top, b.bottom), (0.0, 0.0, BAND, BAND));
}

#[test]
fn a_grid_reserves_bands_on_all_edges_and_sizes_tiles_for_them() {
    let spec = a4_portrait();
    let l = layout_with_mark_bands(&[film(0, 300.0, 400.0)], &spec, BAND).unwrap();
    let tiles = check(&l, &spec, 300.0, 400.0);
    // Room for a tile: 200 − 6 = 194 by 287 − 6 = 281 mm. Columns: (300 − 10)/(194 − 10) =
    // 1.58 → 2 of 155 mm; rows: (400 − 10)/(281 − 10) = 1.44 → 2 of 205 mm.
    assert_eq!(tiles.len(), 4);
    assert!((tiles[0].width_mm - 155.0).abs() < 1e-9);
    assert!((tiles[0].height_mm - 205.0).abs() < 1e-9);
}

#[test]
fn bands_on_one_axis_can_make_the_other_need_tiles() {
    let spec = a4_portrait();
    // 196 mm fits the 200 mm printable width, but 400 mm needs two rows, whose left and right
    // bands leave 194 mm: so two columns too, (196 + 10)/2 = 103 mm each.
    let l = layout_with_mark_bands(&[film(0, 196.0, 400.0)], &spec, BAND).unwrap();
    let tiles = check(&l, &spec, 196.0, 400.0);
    assert_eq!(tiles.len(), 4);
    assert!((tiles[0].width_mm - 103.0).abs() < 1e-9);
    // Without bands the width needs no cut.
    let plain = layout(&[film(0, 196.0, 400.0)], &spec).unwrap();
    assert_eq!(plain.tile_count(), 2);
}

#[test]
fn zero_bands_are_the_plain_layout_and_whole_films_get_none() {
    let spec = SheetSpec::default();
    let films = [
        film(0, 970.0, 20.0),
        film(1, 50.0, 40.0),
        film(2, 300.0, 400.0),
    ];
    assert_eq!(
        layout_with_mark_bands(&films, &spec, 0.0).unwrap(),
        layout(&films, &spec).unwrap()
    );
    let l = layout_with_mark_bands(&[film(1, 50.0, 40.0)], &spec, BAND).unwrap();
    let p = &l.sheets[0].placements[0];
    assert!(p.tile.is_none());
    assert_eq!(p.reserved_rect(BAND), p.rect());
    assert!(layout_with_mark_bands(&films, &spec, -1.0).is_err());
    assert!(layout_with_mark_bands(&films, &spec, f64::NAN).is_err());
}
