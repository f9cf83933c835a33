//! Gaps that close entirely, thin stubs and thin loops: boards written here as Gerber text,
//! read by umbra's reader, rendered through the real film composition and checked.
//!
//! Sources of the expected values:
//! - The Gerber text follows the Gerber Layer Format Specification rev 2024.05: `%FSLAX46Y46*%`
//!   and `%MOMM*%` (§4.1, §4.2: millimetres, 6 decimals), `%ADD…C,d*%` a circle of diameter d
//!   and `%ADD…R,w X h*%` a rectangle (§4.4.2, §4.4.3), `D03` flashes, `D02`/`D01` move and
//!   draw a line with the round pen (§4.7, §4.8).
//! - The gap between two discs of diameter `d` whose centres are `s` apart is `s − d`, and the
//!   point where they come closest is the middle of the centre line (elementary geometry).
//! - A film pixel is 25.4 mm / dpi (the inch is exactly 25.4 mm); "within one pixel" is the
//!   tolerance the brief asks for.

mod check_support;

use check_support::*;
use umbra::check::{FindingKind, ProcessLimits};
use umbra::image::LayerImage;
use umbra::process::DrillMarkStyle;

const DPIS: [f64; 2] = [600.0, 1200.0];

/// Gerber coordinates with 6 decimals (FSLAX46Y46, §4.2).
fn c(v: f64) -> i64 {
    (v * 1e6).round() as i64
}

/// A Gerber file: header, apertures, then the body's operations.
fn gerber(apertures: &str, body: &str) -> LayerImage {
    let text = format!("%FSLAX46Y46*%\n%MOMM*%\n{apertures}{body}M02*\n");
    umbra::gerber::read(&text, "test.gbr", &umbra::limits::Limits::default())
        .unwrap()
        .image
}

fn flash(x: f64, y: f64) -> String {
    format!("X{}Y{}D03*\n", c(x), c(y))
}

fn line(a: (f64, f64), b: (f64, f64)) -> String {
    format!("X{}Y{}D02*\nX{}Y{}D01*\n", c(a.0), c(a.1), c(b.0), c(b.1))
}

/// `img` checked as a copper film over a `width` × 20 mm board at `dpi` with default limits
/// and no drill marks; `growth_um` is the edge offset (growth of the copper).
fn check_at(img: &LayerImage, width: f64, dpi: f64, mirror: bool, growth_um: f64) -> Checked {
    check_copper(
        img,
        None,
        board(width, 20.0),
        &recipe(dpi, DrillMarkStyle::None, mirror, growth_um),
        &ProcessLimits::default(),
    )
}

/// Two round pads 1.5 mm across at y = 10, the second `gap` beyond the first's edge.
fn two_pads(gap: f64) -> (LayerImage, f64) {
    pads_at(4.0, gap)
}

/// The same with the first pad's centre at `x1`.
fn pads_at(x1: f64, gap: f64) -> (LayerImage, f64) {
    let x2 = x1 + 1.5 + gap;
    let img = gerber(
        "%ADD10C,1.5*%\n",
        &format!("D10*\n{}{}", flash(x1, 10.0), flash(x2, 10.0)),
    );
    (img, x1 + 0.75 + gap / 2.0)
}

#[test]
fn a_gap_narrower_than_a_pixel_is_found_where_the_pads_come_closest() {
    // 15 µm: narrower than a pixel at 600 (42.3 µm) and 1200 dpi (21.2 µm).
    // The gap is centred on a pixel boundary of the film, so that no pixel centre falls in it
    // (pixel centres lie half a pixel from every boundary, more than half the gap).
    let gap = 0.015;
    for dpi in DPIS {
        for mirror in [false, true] {
            let probe = check_at(&two_pads(1.0).0, 12.0, dpi, mirror, 0.0);
            let map = probe.film.map;
            let edge = map
                .to_mm(
                    map.to_px(umbra::image::Point::new(4.76, 10.0)).0.round(),
                    0.0,
                )
                .x;
            let (img, x_mid) = pads_at(edge - 0.75 - gap / 2.0, gap);
            let k = check_at(&img, 12.0, dpi, mirror, 0.0);
            let joined = of_kind(&k.findings, FindingKind::CopperJoined);
            assert_eq!(
                joined.len(),
                1,
                "{dpi} dpi mirror {mirror}: {:#?}",
                k.findings
            );
            let f = joined[0];
            let px = pixel_mm(dpi);
            assert!(
                (f.at_mm.x - x_mid).abs() <= px && (f.at_mm.y - 10.0).abs() <= px,
                "{dpi} dpi mirror {mirror}: at {:?}",
                f.at_mm
            );
            // The exact design gap (outlines within 0.1 µm of the circles).
            assert!((f.width_mm - gap).abs() < 1e-3, "{dpi} dpi: {}", f.width_mm);
            assert_eq!(f.drawn_mm, Some(f.width_mm));
        }
    }
}

#[test]
fn a_gap_that_the_edge_growth_fills_is_found_with_the_design_gap() {
    // 0.1 mm between the pads; +80 µm growth on each side closes it (2 × 80 > 100; realized as
    // 2 px = 84.7 µm at 600 dpi, 4 px = 84.7 µm at 1200 dpi, both more than half the gap).
    let gap = 0.1;
    let (img, x_mid) = two_pads(gap);
    for dpi in DPIS {
        let k = check_at(&img, 12.0, dpi, true, 80.0);
        let joined = of_kind(&k.findings, FindingKind::CopperJoined);
        assert_eq!(joined.len(), 1, "{dpi} dpi: {:#?}", k.findings);
        let f = joined[0];
        let px = pixel_mm(dpi);
        assert!(
            (f.at_mm.x - x_mid).abs() <= px && (f.at_mm.y - 10.0).abs() <= px,
            "{dpi} dpi: at {:?}",
            f.at_mm
        );
        assert!((f.width_mm - gap).abs() < 1e-3, "{dpi} dpi: {}", f.width_mm);
        // Without the growth the same pads keep their gap open: no join.
        let k0 = check_at(&img, 12.0, dpi, true, 0.0);
        assert!(of_kind(&k0.findings, FindingKind::CopperJoined).is_empty());
    }
}

#[test]
fn copper_joined_on_purpose_is_not_a_finding() {
    // Overlapping pads, a track from one pad into another, and a pad touching a track end:
    // one piece of copper in the design, grown by 80 µm.
    let body = format!(
        "D10*\n{}{}D11*\n{}{}",
        flash(4.0, 10.0),
        flash(5.2, 10.0),
        line((5.2, 10.0), (9.0, 10.0)),
        line((9.0, 10.0), (9.0, 14.0)),
    );
    let img = gerber("%ADD10C,1.5*%\n%ADD11C,0.3*%\n", &body);
    for dpi in DPIS {
        let k = check_at(&img, 14.0, dpi, false, 80.0);
        assert!(k.findings.is_empty(), "{dpi} dpi: {:#?}", k.findings);
    }
}

#[test]
fn a_dangling_thin_stub_is_found() {
    // A 0.08 mm spur, 1 mm long, leaving a 1.5 mm square pad at (4, 10) and ending in nothing.
    let body = format!(
        "D10*\n{}D11*\n{}",
        flash(4.0, 10.0),
        line((4.0, 10.0), (5.75, 10.0))
    );
    let img = gerber("%ADD10R,1.5X1.5*%\n%ADD11C,0.08*%\n", &body);
    for dpi in DPIS {
        let k = check_at(&img, 12.0, dpi, false, 0.0);
        let thin = of_kind(&k.findings, FindingKind::ThinCopper);
        assert_eq!(thin.len(), 1, "{dpi} dpi: {:#?}", k.findings);
        let f = thin[0];
        let px = pixel_mm(dpi);
        // On the spur (x 4.75 … 5.79, y 10 ± 0.04), with the spur's width.
        assert!(
            f.at_mm.x > 4.75 - px && f.at_mm.x < 5.79 + px && (f.at_mm.y - 10.0).abs() <= px,
            "{dpi} dpi: at {:?}",
            f.at_mm
        );
        assert!((f.width_mm - 0.08).abs() <= px, "{dpi} dpi: {}", f.width_mm);
    }
}

#[test]
fn a_thin_loop_back_to_the_same_pad_is_found() {
    // A 0.1 mm track leaves a 2 mm square pad (x 4 … 6), runs 2 mm out, and comes back.
    let body = format!(
        "D10*\n{}D11*\n{}{}{}",
        flash(5.0, 10.0),
        line((5.5, 10.5), (8.0, 10.5)),
        line((8.0, 10.5), (8.0, 9.5)),
        line((8.0, 9.5), (5.5, 9.5)),
    );
    let img = gerber("%ADD10R,2X2*%\n%ADD11C,0.1*%\n", &body);
    for dpi in DPIS {
        let k = check_at(&img, 12.0, dpi, false, 0.0);
        let thin = of_kind(&k.findings, FindingKind::ThinCopper);
        assert!(!thin.is_empty(), "{dpi} dpi: {:#?}", k.findings);
        let px = pixel_mm(dpi);
        for f in thin {
            assert!(f.at_mm.x > 6.0 - px, "{dpi} dpi: at {:?}", f.at_mm);
            assert!((f.width_mm - 0.1).abs() <= px, "{dpi} dpi: {}", f.width_mm);
        }
    }
}

#[test]
fn sharp_convex_corners_of_a_wide_pour_are_not_thin_copper() {
    // Pours with a 31° tip (atan(6/10)), 45° tips and right-angled corners: its opening
    // rounds every corner, but nothing in it is a thin feature.
    let pour = |pts: &[(f64, f64)]| {
        let mut s = format!("G36*\nX{}Y{}D02*\n", c(pts[0].0), c(pts[0].1));
        for p in &pts[1..] {
            s.push_str(&format!("X{}Y{}D01*\n", c(p.0), c(p.1)));
        }
        s.push_str(&format!("X{}Y{}D01*\nG37*\n", c(pts[0].0), c(pts[0].1)));
        s
    };
    let body = format!(
        "G01*\n{}{}",
        pour(&[(2.0, 2.0), (12.0, 2.0), (12.0, 8.0)]),
        pour(&[(2.0, 12.0), (8.0, 12.0), (8.0, 18.0)]),
    );
    let img = gerber("", &body);
    for dpi in DPIS {
        let k = check_at(&img, 14.0, dpi, false, 0.0);
        assert!(k.findings.is_empty(), "{dpi} dpi: {:#?}", k.findings);
    }
}

#[test]
fn a_stub_drawn_at_the_limit_is_not_thin_copper_at_any_angle() {
    // 0.2 mm spurs (the default limit, §4.4.2 circle aperture as the pen) leave 1.5 mm square
    // pads and end in nothing: along x, and at 45°, where the width measurement is accurate
    // within a pixel (docs/check.md) and reads up to a pixel low. Drawn at the limit, they are
    // not defects; a 0.12 mm spur at 45° beside them is.
    let body = format!(
        "D10*\n{}{}{}D11*\n{}{}D12*\n{}",
        flash(3.0, 5.0),
        flash(3.0, 10.0),
        flash(3.0, 15.0),
        line((3.0, 5.0), (6.0, 5.0)),
        line((3.0, 10.0), (5.5, 12.5)),
        line((3.0, 15.0), (5.5, 17.5)),
    );
    let img = gerber("%ADD10R,1.5X1.5*%\n%ADD11C,0.2*%\n%ADD12C,0.12*%\n", &body);
    for dpi in DPIS {
        let k = check_at(&img, 12.0, dpi, false, 0.0);
        let thin = of_kind(&k.findings, FindingKind::ThinCopper);
        assert_eq!(thin.len(), 1, "{dpi} dpi: {:#?}", k.findings);
        // The 0.12 mm spur runs from (3.75, 15.75) to (5.5, 17.5) beyond its pad.
        assert!(thin[0].at_mm.y > 15.5, "{dpi} dpi: at {:?}", thin[0].at_mm);
    }
}
