//! Registration of the demo board's two copper films, checked on the printed sheet's pixels.
//!
//! TRADE.md "Registration for two-sided boards": every film carries the same targets at the
//! same *board* coordinates, so after undoing the top film's mirror the targets, the drill
//! centres and the board corners of the two copper films coincide. The films are made by the
//! real binary with the default profile (1200 dpi); positions come from the manifest's
//! affines and are then *measured* on the decoded sheet PNG (png crate).

mod films_support;

use films_support::*;
use std::path::Path;

/// Default target size (profile [artwork] target_size_mm, src/default-profile.toml).
const TARGET_MM: f64 = 5.0;
/// Default pilot dot diameter: 0.4 mm (TRADE.md "Drill-centre marks", common practice).
const PILOT_MM: f64 = 0.4;

/// Plated holes of the demo drill program, read here with a few lines of our own (Excellon:
/// `T<n>` selects a tool, `X…Y…` is a hit in the header's METRIC units; IPC-NC-349), so the
/// expected drill positions do not come from the code under test. Slots (G85) are left out.
fn demo_plated_holes() -> Vec<(f64, f64)> {
    let text = std::fs::read_to_string(demo_dir().join("wren-node.drill.xln")).unwrap();
    assert!(text.contains("METRIC"), "the demo drill file is metric");
    let mut tool = 0;
    let mut body = false;
    let mut holes = Vec::new();
    for line in text.lines() {
        let line = line.trim();
        if line == "%" {
            body = true;
            continue;
        }
        if !body {
            continue;
        }
        if let Some(t) = line.strip_prefix('T') {
            tool = t.parse().unwrap_or(0);
            continue;
        }
        // Tools 1 and 2 are plated (the file's own comment); tool 3 is the mounting holes.
        if line.starts_with('X') && !line.contains("G85") && (tool == 1 || tool == 2) {
            let y = line.find('Y').unwrap();
            let x: f64 = line[1..y].parse().unwrap();
            let yv: f64 = line[y + 1..].parse().unwrap();
            holes.push((x, yv));
        }
    }
    holes
}

struct CopperPair {
    m: serde_json::Value,
    sheet: Sheet,
}

fn make_demo(dir: &Path) -> CopperPair {
    films_ok(dir, &[demo_dir().to_str().unwrap(), "-o", "out"]);
    let m = manifest(&dir.join("out"));
    let top = film(&m, "copper-top");
    let bottom = film(&m, "copper-bottom");
    // docs/sheets.md: films of one group (both coppers) share a sheet.
    assert_eq!(
        top["placements"][0]["sheet"],
        bottom["placements"][0]["sheet"]
    );
    let n = top["placements"][0]["sheet"].as_u64().unwrap() as usize;
    let png = m["sheets"][n - 1]["png"].as_str().unwrap().to_string();
    let sheet = Sheet::load(&dir.join("out").join(png));
    CopperPair { m, sheet }
}

fn sheet_affine(m: &serde_json::Value, key: &str) -> Affine {
    Affine::of(&film(m, key)["placements"][0]["board_to_sheet_px"])
}

#[test]
fn copper_films_register_on_the_sheet_pixels() {
    let dir = tempfile::tempdir().unwrap();
    let CopperPair { m, sheet } = make_demo(dir.path());
    let top = film(&m, "copper-top");
    let bottom = film(&m, "copper-bottom");
    // docs/film-rules.md / docs/marks-and-labels.md table: with the printed side toward the
    // board (the default) the top film is mirrored, the bottom one is not.
    assert_eq!(top["mirrored"], true);
    assert_eq!(bottom["mirrored"], false);
    let (st, sb) = (
        sheet_affine(&m, "copper-top"),
        sheet_affine(&m, "copper-bottom"),
    );
    // The mirror is in the affine: x runs backwards on the top film only.
    assert!(st.a < 0.0 && sb.a > 0.0, "{st:?} {sb:?}");
    let ppmm = px_per_mm(top).0;
    let half_px_mm = 0.5 / ppmm;

    let targets = manifest_targets(&m);
    assert_eq!(targets.len(), 3, "TRADE.md: three targets");
    for &(tx, ty) in &targets {
        let mut board_seen = Vec::new();
        for (name, s) in [("top", st), ("bottom", sb)] {
            let predicted = s.apply(tx, ty);
            let measured = mark_centre(&sheet, predicted, 0.55 * TARGET_MM * ppmm);
            assert!(
                (measured.0 - predicted.0).abs() <= 0.5 && (measured.1 - predicted.1).abs() <= 0.5,
                "{name} copper: target ({tx}, {ty}) measured at {measured:?}, manifest says {predicted:?}"
            );
            // The target's shape (docs/marks-and-labels.md "Registration targets": rings of
            // diameter 0.5 and 0.9 of the size, a crosshair that stops short of a clear
            // centre). On a positive copper film the target is black (material).
            let (cx, cy) = predicted;
            assert!(
                !sheet.black_at(cx, cy),
                "{name}: target centre must be clear"
            );
            let diag = |r_mm: f64, sx: f64, sy: f64| {
                let d = r_mm * ppmm / std::f64::consts::SQRT_2;
                sheet.black_at(cx + sx * d, cy + sy * d)
            };
            for (sx, sy) in [(1.0, 1.0), (-1.0, 1.0), (1.0, -1.0), (-1.0, -1.0)] {
                assert!(diag(0.25 * TARGET_MM, sx, sy), "{name}: inner ring missing");
                assert!(diag(0.45 * TARGET_MM, sx, sy), "{name}: outer ring missing");
                assert!(
                    !diag(0.35 * TARGET_MM, sx, sy),
                    "{name}: between the rings is clear"
                );
            }
            // Arms along the axes, outside the outer ring.
            let arm = 0.48 * TARGET_MM * ppmm;
            for (dx, dy) in [(arm, 0.0), (-arm, 0.0), (0.0, arm), (0.0, -arm)] {
                assert!(
                    sheet.black_at(cx + dx, cy + dy),
                    "{name}: crosshair arm missing"
                );
            }
            board_seen.push(s.invert(measured.0, measured.1));
        }
        // Undo each film's own map (the top film's includes the mirror): the measured centres
        // are the same board point on both films, within half a pixel.
        let (a, b) = (board_seen[0], board_seen[1]);
        assert!(
            (a.0 - b.0).abs() <= half_px_mm && (a.1 - b.1).abs() <= half_px_mm,
            "target ({tx}, {ty}): top film at {a:?}, bottom film at {b:?} (board mm)"
        );
    }
}

#[test]
fn drill_dots_coincide_inside_pads_on_both_copper_films() {
    let dir = tempfile::tempdir().unwrap();
    let CopperPair { m, sheet } = make_demo(dir.path());
    let (st, sb) = (
        sheet_affine(&m, "copper-top"),
        sheet_affine(&m, "copper-bottom"),
    );
    let ppmm = px_per_mm(film(&m, "copper-top")).0;
    let holes = demo_plated_holes();
    assert_eq!(
        holes.len(),
        12,
        "the demo drill file has 7 vias and 5 round component holes"
    );
    let dot_r = PILOT_MM / 2.0 * ppmm;
    for &(hx, hy) in &holes {
        let mut board_seen = Vec::new();
        for (name, s) in [("top", st), ("bottom", sb)] {
            let (cx, cy) = s.apply(hx, hy);
            assert!(
                !sheet.black_at(cx, cy),
                "{name}: drill dot at ({hx}, {hy}) is not clear"
            );
            // Just outside the dot, the plated hole's pad is copper (black): the dot is a clear
            // spot *inside* a pad, as TRADE.md describes.
            let ring = dot_r + 0.08 * ppmm;
            for k in 0..8 {
                let t = k as f64 * std::f64::consts::FRAC_PI_4;
                assert!(
                    sheet.black_at(cx + ring * t.cos(), cy + ring * t.sin()),
                    "{name}: no pad copper around the drill dot at ({hx}, {hy})"
                );
            }
            let measured = clear_dot_centre(&sheet, (cx, cy), dot_r + 0.06 * ppmm);
            assert!(
                (measured.0 - cx).abs() <= 0.5 && (measured.1 - cy).abs() <= 0.5,
                "{name}: drill dot ({hx}, {hy}) measured at {measured:?}, expected ({cx}, {cy})"
            );
            board_seen.push(s.invert(measured.0, measured.1));
        }
        let (a, b) = (board_seen[0], board_seen[1]);
        let tol = 0.5 / ppmm;
        assert!(
            (a.0 - b.0).abs() <= tol && (a.1 - b.1).abs() <= tol,
            "hole ({hx}, {hy}): top film at {a:?}, bottom film at {b:?}"
        );
    }
}

#[test]
fn board_corners_coincide_after_undoing_the_mirror() {
    let dir = tempfile::tempdir().unwrap();
    let CopperPair { m, sheet } = make_demo(dir.path());
    let top = film(&m, "copper-top");
    let bottom = film(&m, "copper-bottom");
    let (ft, fb) = (
        Affine::of(&top["board_to_film_px"]),
        Affine::of(&bottom["board_to_film_px"]),
    );
    let w = f(&top["size_px"][0]);
    assert_eq!(
        top["size_px"], bottom["size_px"],
        "both copper films share one frame"
    );
    let e = &m["board_extents_mm"];
    let (x0, y0, x1, y1) = (
        f(&e["min_x"]),
        f(&e["min_y"]),
        f(&e["max_x"]),
        f(&e["max_y"]),
    );
    // The demo board is 50 × 40 mm (its job file, size_mm); the outline is drawn with a pen,
    // so the extents are a little larger.
    assert!((x1 - x0 - 50.0).abs() < 0.5 && (y1 - y0 - 40.0).abs() < 0.5);
    for (x, y) in [(x0, y0), (x1, y0), (x1, y1), (x0, y1)] {
        let (ut, vt) = ft.apply(x, y);
        let (ub, vb) = fb.apply(x, y);
        // Flipping the top film over (u → W − u, about its own vertical centre line) lays it on
        // the bottom film (TRADE.md: the mirroring carries the marks along).
        assert!(
            (w - ut - ub).abs() <= 0.5 && (vt - vb).abs() <= 0.5,
            "corner ({x}, {y}): top film flipped at ({}, {vt}), bottom at ({ub}, {vb})",
            w - ut
        );
    }
    // From the pixels: the bottom copper pour lies inside the board corners as mapped by the
    // manifest (compose clips layer artwork at the board extents + 0.5 mm), and reaches within
    // 1.5 mm of every board edge (the demo's pour fills the board up to its clearance).
    let sb = sheet_affine(&m, "copper-bottom");
    let ppmm = px_per_mm(bottom).0;
    let (px0, py1) = sb.apply(x0, y0);
    let (px1, py0) = sb.apply(x1, y1);
    let slack = 1.0 * ppmm; // look a little beyond the clip limit
    let (mut bx0, mut by0, mut bx1, mut by1) = (f64::MAX, f64::MAX, f64::MIN, f64::MIN);
    for y in (py0 - slack) as i64..(py1 + slack) as i64 {
        for x in (px0 - slack) as i64..(px1 + slack) as i64 {
            if sheet.black(x, y) {
                bx0 = bx0.min(x as f64);
                by0 = by0.min(y as f64);
                bx1 = bx1.max(x as f64 + 1.0);
                by1 = by1.max(y as f64 + 1.0);
            }
        }
    }
    let clip = 0.5 * ppmm + 1.0;
    assert!(
        bx0 >= px0 - clip && by0 >= py0 - clip && bx1 <= px1 + clip && by1 <= py1 + clip,
        "bottom copper pour ({bx0}, {by0})–({bx1}, {by1}) spills beyond the board ({px0}, {py0})–({px1}, {py1})"
    );
    let reach = 1.5 * ppmm;
    assert!(
        bx0 <= px0 + reach && by0 <= py0 + reach && bx1 >= px1 - reach && by1 >= py1 - reach,
        "bottom copper pour ({bx0}, {by0})–({bx1}, {by1}) does not fill the board ({px0}, {py0})–({px1}, {py1})"
    );
}

#[test]
fn demo_targets_fit_no_mirrored_or_turned_copy() {
    // TRADE.md: "Three targets, placed asymmetrically (no mirror or half-turn maps the set
    // onto itself)". Misfit measure: see self_fit_misfit.
    let dir = tempfile::tempdir().unwrap();
    films_ok(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "-o", "out", "--profile", {
            write_profile(dir.path(), "p.toml", "[printer]\ndpi = 300\n");
            "p.toml"
        }],
    );
    let m = manifest(&dir.path().join("out"));
    let t = manifest_targets(&m);
    // Control: the identity fits perfectly, and an isosceles set fits its mirror, so the
    // misfit measure can detect a symmetric set.
    assert!(self_fit_misfit(&t, |p| p) < 1e-9);
    let iso = [(0.0, 0.0), (40.0, 0.0), (20.0, 30.0)];
    assert!(self_fit_misfit(&iso, |(x, y)| (-x, y)) < 1e-9);
    for (what, tf) in wrong_placements() {
        let misfit = self_fit_misfit(&t, tf);
        assert!(
            misfit >= 1.0,
            "demo targets {t:?}: {what} fits with only {misfit:.3} mm misfit"
        );
    }
}
