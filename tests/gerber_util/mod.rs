//! Shared helpers for the Gerber reader tests: an independent writer (gerber-types 0.7) and
//! small readers with default limits.
#![allow(dead_code)]

use gerber_types::{
    Aperture, ApertureDefinition, Command, CoordinateFormat, CoordinateMode, Coordinates, DCode,
    ExtendedCode, FunctionCode, GerberCode, MCode, Operation, Unit, ZeroOmission,
};
use umbra::gerber::{self, GerberFile};
use umbra::image::{Bounds, Shape};
use umbra::limits::Limits;

/// Format 3.6 with leading zero omission, absolute (the spec's recommended form, §4.2.2).
pub fn fmt36() -> CoordinateFormat {
    CoordinateFormat::new(ZeroOmission::Leading, CoordinateMode::Absolute, 3, 6)
}

/// Serializes commands with gerber-types.
pub fn write(cmds: &[Command]) -> String {
    let mut buf = Vec::new();
    cmds.to_vec()
        .serialize(&mut buf)
        .expect("gerber-types writes");
    String::from_utf8(buf).expect("ASCII")
}

/// The usual header: FS 3.6 leading, units.
pub fn header(unit: Unit) -> Vec<Command> {
    vec![
        ExtendedCode::CoordinateFormat(fmt36()).into(),
        ExtendedCode::Unit(unit).into(),
    ]
}

pub fn define(code: i32, aperture: Aperture) -> Command {
    ExtendedCode::ApertureDefinition(ApertureDefinition::new(code, aperture)).into()
}

pub fn select(code: i32) -> Command {
    FunctionCode::DCode(DCode::SelectAperture(code)).into()
}

/// A gerber-types coordinate number (it stores millionths; rounding here avoids its
/// truncating f64 conversion).
pub fn num(v: f64) -> gerber_types::CoordinateNumber {
    gerber_types::CoordinateNumber::new((v * 1e6).round() as i64)
}

pub fn coords(x: f64, y: f64) -> Coordinates {
    Coordinates::new(num(x), num(y), fmt36())
}

pub fn flash(x: f64, y: f64) -> Command {
    FunctionCode::DCode(DCode::Operation(Operation::Flash(Some(coords(x, y))))).into()
}

pub fn move_to(x: f64, y: f64) -> Command {
    FunctionCode::DCode(DCode::Operation(Operation::Move(Some(coords(x, y))))).into()
}

pub fn line_to(x: f64, y: f64) -> Command {
    FunctionCode::DCode(DCode::Operation(Operation::Interpolate(
        Some(coords(x, y)),
        None,
    )))
    .into()
}

pub fn end() -> Command {
    FunctionCode::MCode(MCode::EndOfFile).into()
}

/// Reads text that must parse; returns the file.
pub fn read_ok(text: &str) -> GerberFile {
    gerber::read(text, "test.gbr", &Limits::default())
        .unwrap_or_else(|e| panic!("read failed: {e}\n--- text ---\n{text}"))
}

/// Reads text that must fail; returns the error text.
pub fn read_err(text: &str) -> String {
    match gerber::read(text, "test.gbr", &Limits::default()) {
        Ok(g) => panic!(
            "expected an error, got {} objects\n{}",
            g.image.objects.len(),
            g.image.dump()
        ),
        Err(e) => e.to_string(),
    }
}

/// Whether some warning contains `needle`.
pub fn warned(g: &GerberFile, needle: &str) -> bool {
    g.warnings.iter().any(|w| w.message.contains(needle))
}

pub fn close(a: f64, b: f64) -> bool {
    (a - b).abs() < 1e-9
}

pub fn assert_bounds(b: Bounds, min_x: f64, min_y: f64, max_x: f64, max_y: f64) {
    let ok = close(b.min_x, min_x)
        && close(b.min_y, min_y)
        && close(b.max_x, max_x)
        && close(b.max_y, max_y);
    assert!(
        ok,
        "bounds {b:?}, expected ({min_x}, {min_y}) – ({max_x}, {max_y})"
    );
}

/// Area of a shape made of polygons, discs, straight round-pen strokes and composites whose
/// subtracted parts lie inside the added ones and do not overlap each other (true for every
/// test that uses it). Formulas: shoelace/arc segments (Contour::signed_area), πr² for discs,
/// stadium = 2r·L + πr² for straight strokes.
pub fn area(s: &Shape) -> f64 {
    use std::f64::consts::PI;
    match s {
        Shape::Disc { diameter, .. } => PI * diameter * diameter / 4.0,
        Shape::Stroke {
            start,
            end,
            arc: None,
            width,
        } => width * start.dist(*end) + PI * width * width / 4.0,
        Shape::Stroke { .. } => panic!("area of an arc stroke is not needed"),
        Shape::Polygon(c) => c.signed_area().abs(),
        Shape::Composite(parts) => parts
            .iter()
            .map(|(add, p)| if *add { area(p) } else { -area(p) })
            .sum(),
    }
}

/// The header text used by hand-written tests: mm, 3.6 leading.
pub const MM: &str = "%FSLAX36Y36*%\n%MOMM*%\n";
