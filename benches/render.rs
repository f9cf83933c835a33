//! Render benchmark on a deterministic synthetic board: ~50,000 objects (tracks, arcs, pads,
//! pads with holes, pours with clear cut-outs) over 100 × 160 mm.
//!
//! Run with `cargo bench --bench render`. Prints render time at 1200 and 2400 dpi, PNG
//! writing at 1200 dpi and a 2-pixel edge offset at 1200 dpi, each the best of a few runs.

use std::time::Instant;
use umbra::image::{Contour, LayerImage, Object, Point, Polarity, Shape, Turn};
use umbra::output::png::write_png;
use umbra::raster::morphology::{offset, Pitch};
use umbra::raster::{render, render_with, DeviceMap, RenderOptions};

/// Linear congruential generator (Numerical Recipes constants): deterministic across runs.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_mul(1_664_525).wrapping_add(1_013_904_223) & 0xffff_ffff;
        self.0 as f64 / 4_294_967_296.0
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
}

fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Shape {
    Shape::Polygon(Contour::from_points(&[
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ]))
}

fn synthetic_board(n: usize) -> LayerImage {
    let (w, h) = (100.0, 160.0);
    let mut g = Lcg(12345);
    let mut img = LayerImage::default();
    // Four ground pours, each a 60-vertex polygon, with clear cut-outs around some pads.
    for k in 0..4 {
        let (cx, cy) = (25.0 + 50.0 * (k % 2) as f64, 40.0 + 80.0 * (k / 2) as f64);
        let pts: Vec<Point> = (0..60)
            .map(|i| {
                let a = i as f64 / 60.0 * std::f64::consts::TAU;
                let r = 20.0 + 3.0 * (5.0 * a).sin();
                Point::new(cx + r * a.cos(), cy + 1.6 * r * a.sin())
            })
            .collect();
        img.push(Polarity::Dark, Shape::Polygon(Contour::from_points(&pts)));
    }
    while img.objects.len() < n {
        let (x, y) = (g.range(2.0, w - 2.0), g.range(2.0, h - 2.0));
        let kind = g.next();
        let shape = if kind < 0.55 {
            // Track: mostly horizontal/vertical/45°, 1–8 mm long.
            let len = g.range(1.0, 8.0);
            let dir = (g.next() * 8.0).floor() * std::f64::consts::FRAC_PI_4;
            Shape::Stroke {
                start: Point::new(x, y),
                end: Point::new(x + len * dir.cos(), y + len * dir.sin()),
                arc: None,
                width: [0.15, 0.2, 0.25, 0.4, 0.6][(g.next() * 5.0) as usize],
            }
        } else if kind < 0.62 {
            let r = g.range(0.5, 4.0);
            let a0 = g.range(0.0, std::f64::consts::TAU);
            let a1 = a0 + g.range(0.3, 3.0);
            Shape::Stroke {
                start: Point::new(x + r * a0.cos(), y + r * a0.sin()),
                end: Point::new(x + r * a1.cos(), y + r * a1.sin()),
                arc: Some((Point::new(x, y), Turn::CounterClockwise)),
                width: g.range(0.15, 0.5),
            }
        } else if kind < 0.80 {
            Shape::Disc {
                center: Point::new(x, y),
                diameter: g.range(0.4, 2.0),
            }
        } else if kind < 0.93 {
            let (a, b) = (g.range(0.3, 1.5), g.range(0.3, 1.5));
            rect(x - a / 2.0, y - b / 2.0, x + a / 2.0, y + b / 2.0)
        } else if kind < 0.98 {
            Shape::Composite(vec![
                (
                    true,
                    Shape::Disc {
                        center: Point::new(x, y),
                        diameter: 1.8,
                    },
                ),
                (
                    false,
                    Shape::Disc {
                        center: Point::new(x, y),
                        diameter: 0.8,
                    },
                ),
            ])
        } else {
            // A clearance cut-out in a pour.
            img.objects.push(Object {
                polarity: Polarity::Clear,
                shape: Shape::Disc {
                    center: Point::new(x, y),
                    diameter: 2.4,
                },
            });
            Shape::Disc {
                center: Point::new(x, y),
                diameter: 1.6,
            }
        };
        img.push(Polarity::Dark, shape);
    }
    img
}

fn best_ms<T>(runs: usize, mut f: impl FnMut() -> T) -> (f64, T) {
    let mut best = f64::INFINITY;
    let mut last = None;
    for _ in 0..runs {
        let t = Instant::now();
        let v = f();
        best = best.min(t.elapsed().as_secs_f64() * 1000.0);
        last = Some(v);
    }
    (best, last.expect("at least one run"))
}

fn main() {
    let img = synthetic_board(50_000);
    let board = umbra::image::Bounds {
        min_x: 0.0,
        min_y: 0.0,
        max_x: 100.0,
        max_y: 160.0,
    };
    println!(
        "synthetic board: {} objects, 100 x 160 mm, {} rayon threads",
        img.objects.len(),
        rayon::current_num_threads()
    );
    let dir = std::env::temp_dir().join(format!("umbra-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp folder");

    let map1200 = DeviceMap::covering(&board, 0.0, 1200.0, 1200.0);
    let (ms, film) = best_ms(5, || render(&img.objects, &map1200));
    println!(
        "render 1200 dpi ({} x {} px, {:.1}% dark): {ms:.1} ms",
        film.width(),
        film.height(),
        100.0 * film.count_ones() as f64 / (film.width() * film.height()) as f64
    );
    let (ms_serial, _) = best_ms(3, || {
        render_with(&img.objects, &map1200, &RenderOptions::serial())
    });
    println!("render 1200 dpi, one thread: {ms_serial:.1} ms");
    let png = dir.join("bench.png");
    let (ms_png, _) = best_ms(3, || {
        write_png(&png, &film, 1200.0, 1200.0, true).expect("png")
    });
    println!(
        "PNG write 1200 dpi: {ms_png:.1} ms ({} KiB)",
        std::fs::metadata(&png).map(|m| m.len() / 1024).unwrap_or(0)
    );
    println!("render + PNG 1200 dpi: {:.1} ms", ms + ms_png);
    let pitch = Pitch::from_dpi(1200.0, 1200.0);
    let (ms_off, _) = best_ms(3, || offset(&film, 2.0 * pitch.x_um, pitch));
    println!("offset +2 px at 1200 dpi: {ms_off:.1} ms");
    let (ms_shrink, _) = best_ms(3, || offset(&film, -2.0 * pitch.x_um, pitch));
    println!("offset -2 px at 1200 dpi: {ms_shrink:.1} ms");
    drop(film);

    let map2400 = DeviceMap::covering(&board, 0.0, 2400.0, 2400.0);
    let (ms2400, film) = best_ms(3, || render(&img.objects, &map2400));
    println!(
        "render 2400 dpi ({} x {} px): {ms2400:.1} ms ({:.2}x the 1200 dpi time)",
        film.width(),
        film.height(),
        ms2400 / ms
    );
    let _ = std::fs::remove_dir_all(&dir);
}
