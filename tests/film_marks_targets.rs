//! Registration targets, their shapes, and the tooling drill file.

use umbra::film::marks::{
    min_side_difference, registration_targets, stack_target_shapes, target_shapes,
    tooling_drill_file, DEFAULT_TOOLING_HOLE_MM,
};
use umbra::image::{Bounds, Point, Shape};

/// A small deterministic generator (xorshift64, Marsaglia 2003) so the boards are the same on
/// every run without a dependency.
struct XorShift(u64);
impl XorShift {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
}

/// Boards from 2 mm to 300 mm on a side, anywhere, with various margins and target sizes,
/// plus the square and the isosceles-prone aspect ratios on purpose.
fn boards() -> Vec<(Bounds, f64, f64)> {
    let mut rng = XorShift(0x5eed_1a4c_5b0a_7d01);
    let mut v = Vec::new();
    for _ in 0..400 {
        let (x, y) = (rng.range(-200.0, 200.0), rng.range(-200.0, 200.0));
        let (w, h) = (rng.range(2.0, 300.0), rng.range(2.0, 300.0));
        v.push((
            Bounds {
                min_x: x,
                min_y: y,
                max_x: x + w,
                max_y: y + h,
            },
            rng.range(0.0, 10.0),
            rng.range(2.0, 10.0),
        ));
    }
    for (w, h) in [
        (50.0, 50.0),
        (100.0, 10.0),
        (10.0, 100.0),
        (60.0, 30.0),
        (100.0, 75.0),
        (2.0, 2.0),
    ] {
        v.push((
            Bounds {
                min_x: 0.0,
                min_y: 0.0,
                max_x: w,
                max_y: h,
            },
            5.0,
            6.0,
        ));
    }
    v
}

/// Distance from `p` to the rectangle `b` (0 inside).
fn distance_to_box(p: Point, b: &Bounds) -> f64 {
    let dx = (b.min_x - p.x).max(p.x - b.max_x).max(0.0);
    let dy = (b.min_y - p.y).max(p.y - b.max_y).max(0.0);
    dx.hypot(dy)
}

const PERMUTATIONS: [[usize; 3]; 6] = [
    [0, 1, 2],
    [0, 2, 1],
    [1, 0, 2],
    [1, 2, 0],
    [2, 0, 1],
    [2, 1, 0],
];

/// How far the set `q` (a transformed copy) stays from `p` at best, over all pairings and the
/// translation that fits each pairing best (least squares: the mean of the differences).
/// Zero means some translation lays `q` exactly onto `p`.
fn best_fit_residual(p: &[Point; 3], q: &[Point; 3]) -> f64 {
    PERMUTATIONS
        .iter()
        .map(|perm| {
            let tx = (0..3).map(|i| p[i].x - q[perm[i]].x).sum::<f64>() / 3.0;
            let ty = (0..3).map(|i| p[i].y - q[perm[i]].y).sum::<f64>() / 3.0;
            (0..3)
                .map(|i| p[i].dist(Point::new(q[perm[i]].x + tx, q[perm[i]].y + ty)))
                .fold(0.0, f64::max)
        })
        .fold(f64::INFINITY, f64::min)
}

fn map(p: &[Point; 3], f: impl Fn(Point) -> Point) -> [Point; 3] {
    [f(p[0]), f(p[1]), f(p[2])]
}

#[test]
fn targets_lie_outside_the_board_by_the_margin() {
    for (board, margin, size) in boards() {
        let t = registration_targets(board, margin, size);
        for p in t {
            // The whole target (radius size/2) clears the board by the margin (TRADE.md,
            // "Registration": targets outside the board outline).
            assert!(
                distance_to_box(p, &board) >= margin + size / 2.0 - 1e-9,
                "{board:?} {p:?}"
            );
        }
        // Targets don't overlap each other.
        for i in 0..3 {
            assert!(t[i].dist(t[(i + 1) % 3]) >= size, "{board:?}");
        }
    }
}

#[test]
fn no_flip_or_half_turn_lays_the_targets_onto_themselves() {
    // TRADE.md: "Three targets, placed asymmetrically (no mirror or half-turn maps the set onto
    // itself)". Checked directly: mirror x → −x, mirror y → −y and the half-turn, each with
    // every pairing of points and the best translation, must leave a visible misfit (1 mm:
    // common practice, a pin through rings 1 mm off-centre is plainly wrong).
    let mut worst = f64::INFINITY;
    for (board, margin, size) in boards() {
        let t = registration_targets(board, margin, size);
        let flips: [(&str, [Point; 3]); 3] = [
            ("mirror x", map(&t, |p| Point::new(-p.x, p.y))),
            ("mirror y", map(&t, |p| Point::new(p.x, -p.y))),
            ("half-turn", map(&t, |p| Point::new(-p.x, -p.y))),
        ];
        for (name, q) in flips {
            let r = best_fit_residual(&t, &q);
            worst = worst.min(r);
            assert!(r >= 1.0, "{name} nearly fits ({r} mm) for {board:?}");
        }
        // A flipped film may also be turned by any angle before it is laid down: a reflection
        // about any axis. Sampled every degree.
        for deg in 0..180 {
            let (s, c) = (2.0 * (deg as f64).to_radians()).sin_cos();
            // Reflection across the line at angle deg: (x, y) → (x cos 2θ + y sin 2θ, x sin 2θ − y cos 2θ).
            let q = map(&t, |p| Point::new(p.x * c + p.y * s, p.x * s - p.y * c));
            assert!(
                best_fit_residual(&t, &q) >= 1.0,
                "reflection at {deg}° nearly fits for {board:?}"
            );
        }
        // Scalene: all three side lengths differ, by at least 10 % of the longest side (the
        // module's documented promise). A triangle with two equal sides has a mirror symmetry
        // (Euclid I.5), one with three has 120° turns as well.
        let longest = (0..3)
            .map(|i| t[i].dist(t[(i + 1) % 3]))
            .fold(0.0, f64::max);
        assert!(min_side_difference(&t) >= 0.1 * longest, "{board:?}: {t:?}");
    }
    assert!(worst.is_finite());
}

#[test]
fn the_residual_check_can_tell_a_symmetric_set_from_an_asymmetric_one() {
    // Control for the check above: an isosceles set is laid onto itself by its mirror
    // (residual 0), and every set is laid onto itself by the identity.
    let iso = [
        Point::new(-3.0, 0.0),
        Point::new(3.0, 0.0),
        Point::new(0.0, 7.0),
    ];
    assert!(best_fit_residual(&iso, &map(&iso, |p| Point::new(-p.x, p.y))) < 1e-12);
    let t = registration_targets(
        Bounds {
            min_x: 0.0,
            min_y: 0.0,
            max_x: 50.0,
            max_y: 50.0,
        },
        5.0,
        6.0,
    );
    assert!(best_fit_residual(&t, &t) < 1e-12);
    assert!(min_side_difference(&iso) < 1e-12);
}

#[test]
fn targets_are_the_same_for_every_film_of_a_board_and_survive_bad_input() {
    let b = Bounds {
        min_x: 10.0,
        min_y: 20.0,
        max_x: 70.0,
        max_y: 60.0,
    };
    assert_eq!(
        registration_targets(b, 5.0, 6.0),
        registration_targets(b, 5.0, 6.0)
    );
    for bad in [
        Bounds::EMPTY,
        Bounds {
            min_x: f64::NAN,
            min_y: 0.0,
            max_x: 1.0,
            max_y: 1.0,
        },
    ] {
        let t = registration_targets(bad, f64::NAN, -3.0);
        assert!(t.iter().all(|p| p.x.is_finite() && p.y.is_finite()));
    }
}

#[test]
fn target_shapes_have_rings_and_a_crosshair_with_a_clear_centre() {
    let c = Point::new(12.0, -4.0);
    let shapes = target_shapes(c, 8.0, 0.2);
    let rings: Vec<f64> = shapes
        .iter()
        .filter_map(|s| match s {
            Shape::Stroke {
                start,
                end,
                arc: Some((centre, _)),
                ..
            } if start == end => {
                assert_eq!(*centre, c);
                Some(centre.dist(*start))
            }
            _ => None,
        })
        .collect();
    assert_eq!(rings.len(), 2);
    assert!(rings.iter().all(|&r| r < 4.0));
    let mut extent = Bounds::EMPTY;
    for s in &shapes {
        extent.union(&s.bounds());
        if let Shape::Stroke {
            start,
            end,
            arc: None,
            width,
        } = s
        {
            // Arms are horizontal or vertical and stay off the centre (clear spot for a pin).
            assert!(start.x == end.x || start.y == end.y);
            let closest = start.dist(c).min(end.dist(c));
            assert!(closest > width / 2.0, "arm reaches the centre");
        }
    }
    // Overall size = size + pen width (arms run to ±size/2 with round caps).
    assert!((extent.width() - 8.2).abs() < 1e-9 && (extent.height() - 8.2).abs() < 1e-9);
    assert!(target_shapes(c, 0.0, 0.2).is_empty() && target_shapes(c, 5.0, f64::NAN).is_empty());
    // The stack target adds two filled quarters inside the inner ring (area π r²/4 each,
    // from the circle area formula).
    let stack = stack_target_shapes(c, 8.0, 0.2);
    let quarters: Vec<f64> = stack
        .iter()
        .filter_map(|s| match s {
            Shape::Polygon(contour) => Some(contour.signed_area()),
            _ => None,
        })
        .collect();
    assert_eq!(quarters.len(), 2);
    for a in quarters {
        assert!(
            (a - std::f64::consts::PI * 1.6 * 1.6 / 4.0).abs() < 1e-9,
            "{a}"
        );
    }
}

#[test]
fn tooling_drill_file_reads_back_by_hand() {
    let b = Bounds {
        min_x: -12.5,
        min_y: 3.0,
        max_x: 47.25,
        max_y: 41.0,
    };
    let pts = registration_targets(b, 4.0, 6.0);
    let text = tooling_drill_file(&pts, 3.175);
    let lines: Vec<&str> = text.lines().collect();
    // Excellon structure (IPC-NC-349 / Excellon format description): header opens with M48 and
    // ends with %, METRIC selects millimetres, TnCd defines tool n of diameter d, the program
    // ends with M30.
    assert_eq!(lines.first(), Some(&"M48"));
    assert_eq!(lines.last(), Some(&"M30"));
    let header_end = lines.iter().position(|l| *l == "%").expect("header end %");
    assert!(lines[..header_end].contains(&"METRIC"));
    let tool: Vec<f64> = lines[..header_end]
        .iter()
        .filter_map(|l| l.strip_prefix("T1C"))
        .map(|d| d.parse().unwrap())
        .collect();
    assert_eq!(tool, vec![3.175]);
    assert!(
        lines[header_end..].contains(&"T1"),
        "tool 1 selected before the holes"
    );
    let holes: Vec<Point> = lines[header_end..]
        .iter()
        .filter_map(|l| l.strip_prefix('X'))
        .map(|l| {
            let (x, y) = l.split_once('Y').expect("X…Y…");
            Point::new(x.parse().unwrap(), y.parse().unwrap())
        })
        .collect();
    assert_eq!(holes.len(), 3);
    for (h, p) in holes.iter().zip(&pts) {
        assert!(h.dist(*p) <= 0.0005 * 2f64.sqrt(), "{h:?} vs {p:?}"); // 3 decimals: ±0.5 µm per axis
    }
    // Every line is a comment or plain ASCII Excellon.
    assert!(lines.iter().all(|l| l.starts_with(';') || l.is_ascii()));
    // An unusable diameter falls back to the documented default.
    assert!(
        tooling_drill_file(&pts, f64::NAN).contains(&format!("T1C{DEFAULT_TOOLING_HOLE_MM:.3}"))
    );
}
