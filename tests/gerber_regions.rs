//! Regions G36/G37 (Gerber spec 2024.05 §4.10) and polarity (§4.9.2), checked with the
//! shoelace formula (Contour::signed_area, exact for arcs) and analytic areas.

mod gerber_util;
use gerber_types::{Command, ExtendedCode, FunctionCode, GCode, Polarity as GtPolarity, Unit};
use gerber_util::*;
use std::f64::consts::PI;
use umbra::image::{Polarity, Shape};

fn region(on: bool) -> Command {
    FunctionCode::GCode(GCode::RegionMode(on)).into()
}

fn square(x0: f64, y0: f64, s: f64) -> Vec<Command> {
    vec![
        region(true),
        move_to(x0, y0),
        line_to(x0 + s, y0),
        line_to(x0 + s, y0 + s),
        line_to(x0, y0 + s),
        line_to(x0, y0),
        region(false),
    ]
}

#[test]
fn square_region_area() {
    let mut cmds = header(Unit::Millimeters);
    cmds.push(
        FunctionCode::GCode(GCode::InterpolationMode(
            gerber_types::InterpolationMode::Linear,
        ))
        .into(),
    );
    cmds.extend(square(1.0, 1.0, 10.0));
    cmds.push(end());
    let g = read_ok(&write(&cmds));
    assert_eq!(g.image.objects.len(), 1);
    assert_eq!(g.image.stats.regions, 1);
    assert!(close(area(&g.image.objects[0].shape), 100.0)); // s²
    assert_bounds(g.image.bounds(), 1.0, 1.0, 11.0, 11.0);
}

#[test]
fn region_with_an_arc_edge() {
    // A 2×1 rectangle topped by a half disc of radius 1: area = 2 + π/2 (analytic).
    let g = read_ok(&format!(
        "{MM}G75*G36*X-1000000Y0D02*G01X1000000Y0D01*Y1000000D01*G03X-1000000Y1000000I-1000000J0D01*G01Y0D01*G37*M02*"
    ));
    assert!(close(area(&g.image.objects[0].shape), 2.0 + PI / 2.0));
    assert_bounds(g.image.bounds(), -1.0, 0.0, 1.0, 2.0);
}

#[test]
fn d02_inside_a_region_starts_a_new_contour() {
    // Spec §4.10.3: each contour is its own region object.
    let g = read_ok(&format!(
        "{MM}G01*G36*X0Y0D02*X1000000D01*Y1000000D01*X0D01*Y0D01*X5000000Y0D02*X6000000D01*Y2000000D01*X5000000D01*Y0D01*G37*M02*"
    ));
    assert_eq!(g.image.objects.len(), 2);
    assert_eq!(g.image.stats.regions, 2);
    assert!(close(area(&g.image.objects[1].shape), 2.0));
}

#[test]
fn unclosed_contour_is_closed_with_a_warning() {
    // Some writers leave the last edge implied; it is closed with a straight line.
    let g = read_ok(&format!(
        "{MM}G01*G36*X0Y0D02*X2000000D01*Y2000000D01*X0D01*G37*M02*"
    ));
    assert!(close(area(&g.image.objects[0].shape), 4.0));
    assert!(warned(&g, "closed with a straight line"));
}

#[test]
fn flash_inside_a_region_is_an_error() {
    let e = read_err(&format!("{MM}%ADD10C,1*%D10*G36*\nX0Y0D03*\nG37*M02*"));
    assert!(e.starts_with("test.gbr:4:1:") && e.contains("D03"), "{e}");
}

#[test]
fn clear_polarity_regions_and_objects() {
    let mut cmds = header(Unit::Millimeters);
    cmds.push(
        FunctionCode::GCode(GCode::InterpolationMode(
            gerber_types::InterpolationMode::Linear,
        ))
        .into(),
    );
    cmds.extend(square(0.0, 0.0, 10.0));
    cmds.push(ExtendedCode::LoadPolarity(GtPolarity::Clear).into());
    cmds.extend(square(2.0, 2.0, 2.0));
    cmds.push(end());
    let g = read_ok(&write(&cmds));
    assert_eq!(g.image.objects[0].polarity, Polarity::Dark);
    assert_eq!(g.image.objects[1].polarity, Polarity::Clear);
    assert_eq!(g.image.stats.clear_objects, 1);
    // The image bounds count dark objects only.
    assert_bounds(g.image.bounds(), 0.0, 0.0, 10.0, 10.0);
}

#[test]
fn load_transforms_do_not_move_region_coordinates() {
    // Spec §4.9: LM/LR/LS act on apertures; a region has none, so it is unchanged.
    let plain = read_ok(&format!(
        "{MM}G01*G36*X0Y0D02*X3000000D01*Y1000000D01*X0D01*Y0D01*G37*M02*"
    ));
    let loaded = read_ok(&format!(
        "{MM}%LMXY*%%LR45*%%LS2*%G01*G36*X0Y0D02*X3000000D01*Y1000000D01*X0D01*Y0D01*G37*M02*"
    ));
    assert_eq!(plain.image.dump(), loaded.image.dump());
}

#[test]
fn region_open_at_end_of_file_is_closed_with_a_warning() {
    let g = read_ok(&format!(
        "{MM}G01*G36*X0Y0D02*X1000000D01*Y1000000D01*X0Y0D01*M02*"
    ));
    assert_eq!(g.image.objects.len(), 1);
    assert!(warned(&g, "G36 without G37"));
    assert!(matches!(g.image.objects[0].shape, Shape::Polygon(_)));
}
