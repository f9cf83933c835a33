//! Aperture transforms LM/LR/LS (Gerber spec 2024.05 §4.9.3–§4.9.5), step-and-repeat
//! (§4.11.1), block apertures (§4.11.2), the deprecated image commands MI/SF/OF/IR/AS/IP
//! (§8.1) and the limits that keep hostile files in check.

mod gerber_util;
use gerber_types::{
    Aperture, ApertureBlock, Circle, ExtendedCode, Mirroring, Polarity as GtPolarity, Rectangular,
    Rotation, Scaling, StepAndRepeat, Unit,
};
use gerber_util::*;
use umbra::image::{Point, Polarity, Shape};
use umbra::limits::Limits;

#[test]
fn rotation_turns_a_rectangle_flash() {
    let mut cmds = header(Unit::Millimeters);
    cmds.extend([
        define(10, Aperture::Rectangle(Rectangular::new(2.0, 1.0))),
        select(10),
        ExtendedCode::LoadRotation(Rotation { rotation: 90.0 }).into(),
        flash(0.0, 0.0),
        end(),
    ]);
    let g = read_ok(&write(&cmds));
    // 2×1 turned 90° counter-clockwise is 1×2 (spec §4.9.4).
    assert_bounds(g.image.bounds(), -0.5, -1.0, 0.5, 1.0);
}

#[test]
fn mirroring_flips_the_aperture_not_the_coordinates() {
    // A triangle aperture with its first vertex at +x (spec §4.4.5, rotation 0). LMX
    // mirrors x (from memory of §4.9.3: "X" negates x), so the vertex points to −x; the
    // flash point itself stays at (5, 0).
    let mut cmds = header(Unit::Millimeters);
    cmds.extend([
        define(10, Aperture::Polygon(gerber_types::Polygon::new(2.0, 3))),
        select(10),
        ExtendedCode::LoadMirroring(Mirroring::X).into(),
        flash(5.0, 0.0),
        end(),
    ]);
    let g = read_ok(&write(&cmds));
    let b = g.image.bounds();
    assert!(close(b.min_x, 4.0), "{b:?}"); // vertex at 5 − r
    assert!(close(b.max_x, 5.0 + 0.5), "{b:?}"); // the other two at 5 + r·cos 60°
}

#[test]
fn scaling_applies_to_flashes_and_stroke_widths() {
    let mut cmds = header(Unit::Millimeters);
    cmds.extend([
        define(10, Aperture::Circle(Circle::new(1.0))),
        select(10),
        ExtendedCode::LoadScaling(Scaling { scale: 2.5 }).into(),
        flash(0.0, 0.0),
        move_to(0.0, 0.0),
        line_to(4.0, 0.0),
        end(),
    ]);
    let g = read_ok(&write(&cmds));
    assert!(
        matches!(g.image.objects[0].shape, Shape::Disc { diameter, .. } if close(diameter, 2.5))
    );
    assert!(matches!(g.image.objects[1].shape, Shape::Stroke { width, .. } if close(width, 2.5)));
}

#[test]
fn step_and_repeat_replicates_in_order() {
    let mut cmds = header(Unit::Millimeters);
    cmds.extend([
        define(10, Aperture::Circle(Circle::new(1.0))),
        select(10),
        ExtendedCode::StepAndRepeat(StepAndRepeat::Open {
            repeat_x: 3,
            repeat_y: 2,
            distance_x: 5.0,
            distance_y: 4.0,
        })
        .into(),
        flash(0.0, 0.0),
        ExtendedCode::LoadPolarity(GtPolarity::Clear).into(),
        flash(0.0, 0.0),
        ExtendedCode::StepAndRepeat(StepAndRepeat::Close).into(),
        end(),
    ]);
    let g = read_ok(&write(&cmds));
    assert_eq!(g.image.objects.len(), 12); // 3 × 2 copies of 2 objects
                                           // Each copy keeps its objects in order (dark then clear), so a later copy's clear
                                           // object can clear an earlier copy (spec §4.11.1).
    for (k, pair) in g.image.objects.chunks(2).enumerate() {
        assert_eq!(pair[0].polarity, Polarity::Dark, "copy {k}");
        assert_eq!(pair[1].polarity, Polarity::Clear, "copy {k}");
    }
    // Copy order: X fastest (from memory), so copy 1 is at (5, 0) and copy 3 at (0, 4).
    assert!(
        matches!(g.image.objects[2].shape, Shape::Disc { center, .. } if center == Point::new(5.0, 0.0))
    );
    assert!(
        matches!(g.image.objects[6].shape, Shape::Disc { center, .. } if center == Point::new(0.0, 4.0))
    );
    assert_eq!(g.image.stats.flashes, 2); // commands executed, not copies
}

#[test]
fn block_aperture_flash_with_polarity_toggle() {
    // A block: dark disc d=2 with a clear disc d=1 in it. Flashed dark at (10, 0) and
    // under LPC at (20, 0): then every polarity toggles (spec §4.11.2).
    let mut cmds = header(Unit::Millimeters);
    cmds.extend([
        define(10, Aperture::Circle(Circle::new(2.0))),
        define(11, Aperture::Circle(Circle::new(1.0))),
        ExtendedCode::ApertureBlock(ApertureBlock::Open { code: 20 }).into(),
        select(10),
        flash(0.0, 0.0),
        ExtendedCode::LoadPolarity(GtPolarity::Clear).into(),
        select(11),
        flash(0.0, 0.0),
        ExtendedCode::ApertureBlock(ApertureBlock::Close).into(),
        ExtendedCode::LoadPolarity(GtPolarity::Dark).into(),
        select(20),
        flash(10.0, 0.0),
        ExtendedCode::LoadPolarity(GtPolarity::Clear).into(),
        flash(20.0, 0.0),
        end(),
    ]);
    let g = read_ok(&write(&cmds));
    // gerber-types 0.7 writes `%AB20*%` without the D the spec requires; read with a warning.
    assert!(warned(&g, "needs a D"));
    let got: Vec<(Polarity, f64)> = g
        .image
        .objects
        .iter()
        .map(|o| match o.shape {
            Shape::Disc { center, .. } => (o.polarity, center.x),
            _ => panic!(),
        })
        .collect();
    assert_eq!(
        got,
        vec![
            (Polarity::Dark, 10.0),
            (Polarity::Clear, 10.0),
            (Polarity::Clear, 20.0),
            (Polarity::Dark, 20.0)
        ]
    );
}

#[test]
fn nested_block_with_rotation_and_scale() {
    // Inner block: rectangle 2×1 at (1, 0). Outer block: the inner flashed at (0, 0).
    // The outer flashed at (10, 10) with LR90 and LS2: the rectangle centre goes to
    // (10, 10) + 2·rot90(1, 0) = (10, 12), size 2·(1×2).
    let text = format!(
        "{MM}%ADD10R,2X1*%%ABD20*%D10*X1000000Y0D03*%AB*%%ABD21*%D20*X0Y0D03*%AB*%%LR90*%%LS2*%D21*X10000000Y10000000D03*M02*"
    );
    let g = read_ok(&text);
    assert_eq!(g.image.objects.len(), 1);
    assert_bounds(g.image.bounds(), 9.0, 10.0, 11.0, 14.0);
}

#[test]
fn step_repeat_and_block_limits() {
    let e = read_err(&format!("{MM}%SRX100000Y100000I1J1*%\nM02*"));
    assert!(
        e.starts_with("test.gbr:3:2:") && e.contains("max_step_repeat"),
        "{e}"
    );
    let mut deep = String::from(MM);
    for k in 0..40 {
        deep.push_str(&format!("%ABD{}*%\n", 10 + k));
    }
    let e = read_err(&deep);
    assert!(e.contains("max_block_depth"), "{e}");
    // Object cap: a 20×20 repeat of 3 flashes with max_objects 1000.
    let limits = Limits {
        max_objects: 1000,
        ..Limits::default()
    };
    let text = format!("{MM}%ADD10C,1*%D10*%SRX20Y20I2J2*%X0Y0D03*D03*D03*%SR*%M02*");
    let e = umbra::gerber::read(&text, "t.gbr", &limits).unwrap_err();
    assert!(e.message.contains("max_objects"), "{e}");
}

#[test]
fn block_explosion_is_stopped_by_the_object_limit() {
    // Each block flashes the previous one ten times: 10^8 objects at depth 8.
    let mut t = format!("{MM}%ADD10C,1*%%ABD100*%D10*X0Y0D03*%AB*%");
    for level in 1..=8 {
        t.push_str(&format!("%ABD{}*%D{}*", 100 + level, 100 + level - 1));
        for k in 0..10 {
            t.push_str(&format!("X{}Y0D03*", k * 1000));
        }
        t.push_str("%AB*%");
    }
    let limits = Limits {
        max_objects: 200_000,
        ..Limits::default()
    };
    let start = std::time::Instant::now();
    let e = umbra::gerber::read(&t, "t.gbr", &limits).unwrap_err();
    assert!(e.message.contains("max_objects"), "{e}");
    assert!(start.elapsed().as_secs() < 5);
}

#[test]
fn deprecated_image_commands_transform_coordinates() {
    // MI mirrors coordinates, not apertures (spec §8.1): the triangle keeps pointing to +x.
    let g = read_ok(&format!("{MM}%MIA1B0*%%ADD10P,2X3*%D10*X5000000Y0D03*M02*"));
    let b = g.image.bounds();
    assert!(
        close(b.max_x, -5.0 + 1.0) && close(b.min_x, -5.0 - 0.5),
        "{b:?}"
    );
    // SF scales coordinates (not aperture sizes), OF offsets, IR turns the image, AS swaps.
    let g = read_ok(&format!(
        "{MM}%SFA2B3*%%OFA1B0*%%ADD10C,1*%D10*X1000000Y1000000D03*M02*"
    ));
    assert!(
        matches!(g.image.objects[0].shape, Shape::Disc { center, diameter } if center == Point::new(3.0, 3.0) && diameter == 1.0)
    );
    let g = read_ok(&format!("{MM}%IR90*%%ADD10R,2X1*%D10*X1000000Y0D03*M02*"));
    assert_bounds(g.image.bounds(), -0.5, 0.0, 0.5, 2.0);
    let g = read_ok(&format!(
        "{MM}%ASAYBX*%%ADD10C,1*%D10*X1000000Y2000000D03*M02*"
    ));
    assert!(
        matches!(g.image.objects[0].shape, Shape::Disc { center, .. } if center == Point::new(2.0, 1.0))
    );
    assert!(warned(&g, "MI, SF, OF, IR, AS"));
}

#[test]
fn negative_image_is_recorded() {
    let g = read_ok(&format!("%IPNEG*%{MM}%ADD10C,1*%D10*X0Y0D03*M02*"));
    assert!(g.image_negative);
    assert!(warned(&g, "IPNEG"));
    assert_eq!(g.image.objects[0].polarity, Polarity::Dark); // objects as written
    let g = read_ok(&format!("%IPPOS*%{MM}M02*"));
    assert!(!g.image_negative);
}
