//! Property test: random sequences of flashes and strokes written by an independent writer
//! (gerber-types 0.7), in mm or inch, leading or trailing zero omission, read back — the
//! objects and their coordinates must be exactly what was written (to 1e-9 mm).

mod gerber_util;
use gerber_types::{
    Aperture, Circle, Command, CoordinateFormat, CoordinateMode, Coordinates, DCode, ExtendedCode,
    FunctionCode, GCode, InterpolationMode, Operation, Rectangular, Unit, ZeroOmission,
};
use gerber_util::*;
use proptest::prelude::*;
use umbra::image::{Point, Shape};

#[derive(Debug, Clone, Copy)]
enum Op {
    Flash {
        aperture: usize,
        x: i64,
        y: i64,
    },
    Line {
        aperture: usize,
        from: (i64, i64),
        to: (i64, i64),
    },
}

fn op() -> impl Strategy<Value = Op> {
    // Coordinates in micro-units, within ±999 units (format 3.6).
    let c = -999_000_000i64..999_000_000;
    prop_oneof![
        (0usize..2, c.clone(), c.clone()).prop_map(|(aperture, x, y)| Op::Flash { aperture, x, y }),
        (0usize..2, (c.clone(), c.clone()), (c.clone(), c))
            .prop_map(|(aperture, from, to)| Op::Line { aperture, from, to }),
    ]
}

fn coords(f: CoordinateFormat, (x, y): (i64, i64)) -> Coordinates {
    Coordinates::new(
        gerber_types::CoordinateNumber::new(x),
        gerber_types::CoordinateNumber::new(y),
        f,
    )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn written_objects_read_back_exactly(ops in prop::collection::vec(op(), 1..40), inch in any::<bool>(), trailing in any::<bool>()) {
        let zero = if trailing { ZeroOmission::Trailing } else { ZeroOmission::Leading };
        let f = CoordinateFormat::new(zero, CoordinateMode::Absolute, 3, 6);
        let unit = if inch { Unit::Inches } else { Unit::Millimeters };
        let k = if inch { 25.4 } else { 1.0 };
        let mut cmds: Vec<Command> = vec![
            ExtendedCode::CoordinateFormat(f).into(),
            ExtendedCode::Unit(unit).into(),
            define(10, Aperture::Circle(Circle::new(0.125))),
            define(11, Aperture::Rectangle(Rectangular::new(0.5, 0.25))),
            FunctionCode::GCode(GCode::InterpolationMode(InterpolationMode::Linear)).into(),
        ];
        for o in &ops {
            match *o {
                Op::Flash { aperture, x, y } => {
                    cmds.push(select(10 + aperture as i32));
                    cmds.push(FunctionCode::DCode(DCode::Operation(Operation::Flash(Some(coords(f, (x, y)))))).into());
                }
                Op::Line { aperture, from, to } => {
                    cmds.push(select(10 + aperture as i32));
                    cmds.push(FunctionCode::DCode(DCode::Operation(Operation::Move(Some(coords(f, from))))).into());
                    cmds.push(FunctionCode::DCode(DCode::Operation(Operation::Interpolate(Some(coords(f, to)), None))).into());
                }
            }
        }
        cmds.push(end());
        let text = write(&cmds);
        let g = read_ok(&text);
        prop_assert_eq!(g.image.objects.len(), ops.len());
        prop_assert!(g.warnings.is_empty(), "{:?}", g.warnings);
        let mm = |v: i64| v as f64 / 1e6 * k;
        let near = |p: Point, x: i64, y: i64| (p.x - mm(x)).abs() < 1e-9 && (p.y - mm(y)).abs() < 1e-9;
        for (o, obj) in ops.iter().zip(&g.image.objects) {
            match (*o, &obj.shape) {
                (Op::Flash { aperture: 0, x, y }, Shape::Disc { center, diameter }) => {
                    prop_assert!(near(*center, x, y), "{:?} {:?}", o, obj);
                    prop_assert!((diameter - 0.125 * k).abs() < 1e-12);
                }
                (Op::Flash { aperture: 1, x, y }, s @ Shape::Polygon(_)) => {
                    let b = s.bounds();
                    let c = Point::new((b.min_x + b.max_x) / 2.0, (b.min_y + b.max_y) / 2.0);
                    prop_assert!(near(c, x, y), "{:?} {:?}", o, obj);
                    prop_assert!((b.width() - 0.5 * k).abs() < 1e-9 && (b.height() - 0.25 * k).abs() < 1e-9);
                }
                (Op::Line { aperture: 0, from, to }, Shape::Stroke { start, end, arc: None, .. }) => {
                    prop_assert!(near(*start, from.0, from.1) && near(*end, to.0, to.1), "{:?} {:?}", o, obj);
                }
                (Op::Line { aperture: 0, from, .. }, Shape::Disc { center, .. }) => {
                    prop_assert!(near(*center, from.0, from.1)); // zero-length draw
                }
                (Op::Line { aperture: 1, from, to }, s @ Shape::Polygon(_)) => {
                    // The sweep's bounds: the segment's box grown by the half rectangle.
                    let b = s.bounds();
                    let (w, h) = (0.25 * k, 0.125 * k);
                    prop_assert!((b.min_x - (mm(from.0.min(to.0)) - w)).abs() < 1e-9, "{:?} {:?}", o, b);
                    prop_assert!((b.max_y - (mm(from.1.max(to.1)) + h)).abs() < 1e-9, "{:?} {:?}", o, b);
                }
                _ => prop_assert!(false, "unexpected {:?} for {:?}", obj, o),
            }
        }
    }
}
