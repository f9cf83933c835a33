//! Edge offset by disc morphology: against brute force on random bitmaps, threading, the
//! textbook properties of opening and closing, and the Minkowski sum of discs.

use std::f64::consts::PI;
use umbra::image::{Object, Point, Polarity, Shape};
use umbra::raster::morphology::{
    closing, dilate, dilate_with, erode, erode_with, opening, realized_offset, rounds_to_zero,
    DiscKernel, Pitch,
};
use umbra::raster::{render, Bitmap, DeviceMap, RenderOptions};

/// A deterministic random bitmap (linear congruential generator, Numerical Recipes
/// constants); `density` of pixels set, in small clumps so edges are not all noise.
fn random_bitmap(w: usize, h: usize, density: f64, seed: u64) -> Bitmap {
    let mut s = seed;
    let mut next = move || {
        s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223) & 0xffff_ffff;
        s as f64 / 4_294_967_296.0
    };
    let mut b = Bitmap::new(w, h);
    for y in 0..h {
        for x in 0..w {
            if next() < density {
                b.set(x, y, true);
                if next() < 0.5 {
                    b.set(x + 1, y, true);
                    b.set(x, y + 1, true);
                }
            }
        }
    }
    b
}

/// The disc straight from its definition: (i·px)² + (j·py)² <= r².
fn in_disc(i: i64, j: i64, r: f64, p: Pitch) -> bool {
    let (a, b) = (i as f64 * p.x_um, j as f64 * p.y_um);
    a * a + b * b <= r * r
}

/// Brute-force dilation (outside the bitmap clear) or erosion (outside dark).
fn brute(b: &Bitmap, r: f64, p: Pitch, grow: bool) -> Bitmap {
    let (w, h) = (b.width() as i64, b.height() as i64);
    let k = (r / p.x_um.min(p.y_um)).ceil() as i64 + 1;
    let mut out = Bitmap::new(b.width(), b.height());
    for y in 0..h {
        for x in 0..w {
            let mut hit = !grow;
            for j in -k..=k {
                for i in -k..=k {
                    if !in_disc(i, j, r, p) {
                        continue;
                    }
                    let (xx, yy) = (x + i, y + j);
                    let inside = xx >= 0 && yy >= 0 && xx < w && yy < h;
                    let v = if inside {
                        b.get(xx as usize, yy as usize)
                    } else {
                        !grow
                    };
                    if grow && v {
                        hit = true;
                    }
                    if !grow && !v {
                        hit = false;
                    }
                }
            }
            out.set(x as usize, y as usize, hit);
        }
    }
    out
}

#[test]
fn dilate_and_erode_match_brute_force() {
    // Pitches exactly representable in binary so the disc boundary cases (e.g. r = 60 with
    // pitch 20: offset (3, 0) lies exactly on the circle) are decided the same way by both.
    let pitches = [
        Pitch {
            x_um: 20.0,
            y_um: 20.0,
        },
        Pitch {
            x_um: 20.0,
            y_um: 40.0,
        },
        Pitch {
            x_um: 32.0,
            y_um: 12.0,
        },
        Pitch::from_dpi(1200.0, 1200.0),
    ];
    let radii = [0.0, 10.0, 20.0, 28.3, 45.0, 60.0, 100.0, 150.0];
    for (pi, &p) in pitches.iter().enumerate() {
        for (ri, &r) in radii.iter().enumerate() {
            let seed = (pi * 31 + ri) as u64;
            let src = random_bitmap(64, 61, 0.02 + 0.01 * ri as f64, seed);
            let d = dilate(&src, r, p);
            assert_eq!(d, brute(&src, r, p, true), "dilate r {r} pitch {p:?}");
            let e = erode(&src, r, p);
            assert_eq!(e, brute(&src, r, p, false), "erode r {r} pitch {p:?}");
        }
    }
}

#[test]
fn a_single_pixel_dilates_into_the_disc_itself() {
    // r = 2 px, square pitch: the 13 offsets with i² + j² <= 4 (counted by hand).
    let p = Pitch {
        x_um: 10.0,
        y_um: 10.0,
    };
    let mut b = Bitmap::new(9, 9);
    b.set(4, 4, true);
    let d = dilate(&b, 20.0, p);
    assert_eq!(d.count_ones(), 13);
    assert!(d.get(2, 4) && d.get(6, 4) && d.get(4, 2) && d.get(4, 6) && d.get(3, 3));
    assert!(!d.get(2, 3), "(−2, −1): 4 + 1 > 4");
}

#[test]
fn parallel_bands_equal_serial() {
    let src = random_bitmap(300, 290, 0.01, 99);
    let p = Pitch::from_dpi(1200.0, 800.0);
    for r in [30.0, 130.0] {
        let par = RenderOptions {
            band_rows: 64,
            parallel: true,
        };
        let ser = RenderOptions {
            band_rows: 5,
            parallel: false,
        };
        assert_eq!(dilate_with(&src, r, p, &par), dilate_with(&src, r, p, &ser));
        assert_eq!(erode_with(&src, r, p, &par), erode_with(&src, r, p, &ser));
    }
}

fn is_subset(a: &Bitmap, b: &Bitmap) -> bool {
    a.words().iter().zip(b.words()).all(|(x, y)| x & !y == 0)
}

#[test]
fn opening_and_closing_have_their_textbook_properties() {
    // J. Serra, Image Analysis and Mathematical Morphology (1982): opening is
    // anti-extensive and idempotent, closing is extensive and idempotent.
    let p = Pitch {
        x_um: 20.0,
        y_um: 30.0,
    };
    let src = random_bitmap(80, 70, 0.05, 5);
    let o = opening(&src, 50.0, p);
    let c = closing(&src, 50.0, p);
    assert!(is_subset(&o, &src));
    assert!(is_subset(&src, &c));
    assert_eq!(opening(&o, 50.0, p), o);
    assert_eq!(closing(&c, 50.0, p), c);
    assert!(o.count_ones() < src.count_ones() && c.count_ones() > src.count_ones());
}

#[test]
fn growing_a_rendered_disc_adds_the_radius() {
    // Minkowski sum of discs of radii R and r is the disc of radius R + r (and erosion gives
    // R − r): areas π(R ± r)², within one pixel along the perimeter.
    let map = DeviceMap::new(Point::new(-1.5, -1.5), 142, 142, 1200.0, 1200.0);
    let objs = [Object {
        polarity: Polarity::Dark,
        shape: Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: 2.0,
        },
    }];
    let film = render(&objs, &map);
    let px_mm = 25.4 / 1200.0;
    let r_um = 5.0 * 25_400.0 / 1200.0; // 5 px exactly: realized in full
    for (grown, radius) in [
        (dilate(&film, r_um, map.pitch()), 1.0 + r_um / 1000.0),
        (erode(&film, r_um, map.pitch()), 1.0 - r_um / 1000.0),
    ] {
        let area = grown.count_ones() as f64 * px_mm * px_mm;
        let want = PI * radius * radius;
        let tol = 2.0 * PI * radius * px_mm;
        assert!((area - want).abs() <= tol, "{area} vs {want} ± {tol}");
    }
}

#[test]
fn realized_offset_is_whole_pixels_per_axis() {
    let p = Pitch::from_dpi(1200.0, 1200.0); // 21.1667 µm
                                             // Exactly two pixels realizes two pixels; just under realizes one (disc is r² <= …).
    assert_eq!(realized_offset(2.0 * 25_400.0 / 1200.0, p).x_px, 2);
    assert_eq!(realized_offset(42.3, p).x_px, 1);
    // TRADE.md worked example: +10 µm at 1200 dpi realizes 0 px.
    assert!(rounds_to_zero(10.0, p));
    assert_eq!(realized_offset(10.0, p).x_um, 0.0);
    // Non-square: 1200 × 600 dpi, 50 µm → 2 px (42.33 µm) across, 1 px (42.33 µm) down.
    let q = Pitch::from_dpi(1200.0, 600.0);
    let r = realized_offset(-50.0, q);
    assert_eq!((r.x_px, r.y_px), (-2, -1));
    assert!((r.y_um + 25_400.0 / 600.0).abs() < 1e-9);
    // The kernel agrees with the report.
    let k = DiscKernel::new(50.0, q, 1000, 1000);
    assert_eq!(k.half_widths, vec![2, 1]);
    // A request that rounds to zero changes nothing.
    let src = random_bitmap(40, 40, 0.1, 3);
    assert_eq!(dilate(&src, 10.0, p), src);
    assert_eq!(erode(&src, f64::NAN, p), src);
}
