//! Helpers for the `umbra films` end-to-end tests: running the real binary in a fresh folder,
//! reading the manifest, decoding sheet PNGs with the png crate, reading PDF page boxes, and
//! measuring marks from pixels.

#![allow(dead_code)]

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

pub const MM_PER_INCH: f64 = 25.4;

/// The demo board's folder.
pub fn demo_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node")
}

/// The real-world corpus, or `None` (skip) when it is absent; absent under CI is a failure.
pub fn corpus() -> Option<PathBuf> {
    let p = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if p.is_dir() {
        Some(p)
    } else if std::env::var("CI").as_deref() == Ok("true") {
        panic!("the real-world corpus ../shared/realworld is missing under CI");
    } else {
        eprintln!("skipping: ../shared/realworld is absent");
        None
    }
}

/// Every board folder of the corpus, sorted.
pub fn corpus_boards(root: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(root)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_dir())
        .collect();
    v.sort();
    v
}

/// Runs `umbra` with `args` in `cwd`.
pub fn umbra(cwd: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_umbra"))
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("run umbra")
}

/// Runs `umbra films` and panics with its stderr when it fails.
pub fn films_ok(cwd: &Path, args: &[&str]) -> Output {
    let mut all = vec!["films", "-q", "--date", "2025-01-01"];
    all.extend_from_slice(args);
    let out = umbra(cwd, &all);
    assert!(
        out.status.success(),
        "umbra {all:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

/// Writes a profile file and returns its path.
pub fn write_profile(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

pub fn manifest(out: &Path) -> Value {
    let text = std::fs::read_to_string(out.join("manifest.json")).expect("manifest.json");
    serde_json::from_str(&text).expect("manifest is JSON")
}

/// The film entry with `key` ("copper-top").
pub fn film<'a>(m: &'a Value, key: &str) -> &'a Value {
    m["films"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["key"] == key)
        .unwrap_or_else(|| panic!("no film {key} in the manifest"))
}

pub fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// `px = a·x + b·y + c`, `py = d·x + e·y + f` (the manifest's affine record).
#[derive(Debug, Clone, Copy)]
pub struct Affine {
    pub a: f64,
    pub b: f64,
    pub c: f64,
    pub d: f64,
    pub e: f64,
    pub f: f64,
}

impl Affine {
    pub fn of(v: &Value) -> Affine {
        Affine {
            a: f(&v["a"]),
            b: f(&v["b"]),
            c: f(&v["c"]),
            d: f(&v["d"]),
            e: f(&v["e"]),
            f: f(&v["f"]),
        }
    }
    pub fn apply(&self, x: f64, y: f64) -> (f64, f64) {
        (
            self.a * x + self.b * y + self.c,
            self.d * x + self.e * y + self.f,
        )
    }
    pub fn invert(&self, px: f64, py: f64) -> (f64, f64) {
        let det = self.a * self.e - self.b * self.d;
        let (u, v) = (px - self.c, py - self.f);
        (
            (self.e * u - self.b * v) / det,
            (-self.d * u + self.a * v) / det,
        )
    }
}

/// A decoded 1-bit sheet PNG; black = greyscale 0 (the writer's convention, checked here:
/// the PNG must be 1-bit greyscale).
pub struct Sheet {
    pub width: usize,
    pub height: usize,
    stride: usize,
    data: Vec<u8>,
    /// From the pHYs chunk (PNG spec §11.3.5.3), pixels per metre.
    pub ppm: Option<(u32, u32)>,
}

impl Sheet {
    pub fn load(path: &Path) -> Sheet {
        let file = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        let decoder = png::Decoder::new(std::io::BufReader::new(file));
        let mut reader = decoder.read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut buf).unwrap();
        assert_eq!(info.color_type, png::ColorType::Grayscale);
        assert_eq!(info.bit_depth, png::BitDepth::One, "sheets are 1-bit PNGs");
        let ppm = reader.info().pixel_dims.map(|d| (d.xppu, d.yppu));
        Sheet {
            width: info.width as usize,
            height: info.height as usize,
            stride: info.line_size,
            data: buf,
            ppm,
        }
    }

    /// A sheet from 8-bit grey pixels, black below half grey (e.g. a page rasterized by
    /// another program).
    pub fn from_gray(width: usize, height: usize, gray: &[u8]) -> Sheet {
        let stride = width.div_ceil(8);
        let mut data = vec![0xffu8; stride * height];
        for y in 0..height {
            for x in 0..width {
                if gray[y * width + x] < 128 {
                    data[y * stride + x / 8] &= !(0x80 >> (x % 8));
                }
            }
        }
        Sheet {
            width,
            height,
            stride,
            data,
            ppm: None,
        }
    }

    /// Whether pixel (x, y) (y down) is black; outside the sheet is clear.
    pub fn black(&self, x: i64, y: i64) -> bool {
        if x < 0 || y < 0 || x as usize >= self.width || y as usize >= self.height {
            return false;
        }
        let (x, y) = (x as usize, y as usize);
        self.data[y * self.stride + x / 8] & (0x80 >> (x % 8)) == 0
    }

    /// The pixel whose area contains the point (px, py) in continuous pixel coordinates.
    pub fn black_at(&self, px: f64, py: f64) -> bool {
        self.black(px.floor() as i64, py.floor() as i64)
    }

    /// Black pixels in the half-open pixel rectangle [x0, x1) × [y0, y1).
    pub fn count_black(&self, x0: i64, y0: i64, x1: i64, y1: i64) -> u64 {
        let mut n = 0;
        for y in y0..y1 {
            for x in x0..x1 {
                n += u64::from(self.black(x, y));
            }
        }
        n
    }

    /// Calls `visit` with every black pixel (x, y), row by row; skips clear bytes quickly.
    pub fn for_each_black(&self, mut visit: impl FnMut(usize, usize)) {
        for y in 0..self.height {
            let row = &self.data[y * self.stride..(y + 1) * self.stride];
            for (i, &byte) in row.iter().enumerate() {
                if byte == 0xff {
                    continue;
                }
                for bit in 0..8 {
                    let x = i * 8 + bit;
                    if x < self.width && byte & (0x80 >> bit) == 0 {
                        visit(x, y);
                    }
                }
            }
        }
    }
}

/// The centre of a symmetric mark (a registration target) measured from pixels: the centroid
/// of the black pixel centres in a square window of half-size `half_px`, re-centred on the
/// centroid until it settles. A mark symmetric under the half-turn about its centre has its
/// centroid there; `start` only needs to be within a fraction of the window.
pub fn mark_centre(sheet: &Sheet, start: (f64, f64), half_px: f64) -> (f64, f64) {
    let mut c = start;
    for _ in 0..20 {
        let (x0, x1) = (
            (c.0 - half_px).round() as i64,
            (c.0 + half_px).round() as i64,
        );
        let (y0, y1) = (
            (c.1 - half_px).round() as i64,
            (c.1 + half_px).round() as i64,
        );
        let (mut sx, mut sy, mut n) = (0.0, 0.0, 0.0);
        for y in y0..y1 {
            for x in x0..x1 {
                if sheet.black(x, y) {
                    sx += x as f64 + 0.5;
                    sy += y as f64 + 0.5;
                    n += 1.0;
                }
            }
        }
        assert!(n > 0.0, "no black pixels near {c:?}");
        let next = (sx / n, sy / n);
        let moved = (next.0 - c.0).hypot(next.1 - c.1);
        c = next;
        if moved < 0.01 {
            break;
        }
    }
    c
}

/// The centroid of the clear pixel centres within `r_px` of `at`: the centre of a clear dot
/// surrounded by black.
pub fn clear_dot_centre(sheet: &Sheet, at: (f64, f64), r_px: f64) -> (f64, f64) {
    let (mut sx, mut sy, mut n) = (0.0, 0.0, 0.0);
    let r = r_px.ceil() as i64 + 1;
    let (ix, iy) = (at.0.floor() as i64, at.1.floor() as i64);
    for y in iy - r..=iy + r {
        for x in ix - r..=ix + r {
            let (cx, cy) = (x as f64 + 0.5, y as f64 + 0.5);
            if (cx - at.0).hypot(cy - at.1) <= r_px && !sheet.black(x, y) {
                sx += cx;
                sy += cy;
                n += 1.0;
            }
        }
    }
    assert!(n > 0.0, "no clear pixels near {at:?}");
    (sx / n, sy / n)
}

/// Every `/MediaBox [x0 y0 x1 y1]` in a PDF, in file order (pdf-writer writes page
/// dictionaries uncompressed; ISO 32000-1 §7.7.3.3).
pub fn media_boxes(pdf: &[u8]) -> Vec<[f64; 4]> {
    let text = String::from_utf8_lossy(pdf);
    let mut out = Vec::new();
    let mut rest: &str = &text;
    while let Some(i) = rest.find("/MediaBox") {
        rest = &rest[i + "/MediaBox".len()..];
        let open = rest.find('[').unwrap();
        let close = rest.find(']').unwrap();
        let nums: Vec<f64> = rest[open + 1..close]
            .split_whitespace()
            .map(|t| t.parse().unwrap())
            .collect();
        out.push([nums[0], nums[1], nums[2], nums[3]]);
        rest = &rest[close..];
    }
    out
}

/// Whether a Debian tool is on PATH. A missing tool skips the test, except under CI=true
/// (`.ci/run` installs poppler-utils and ghostscript, so there it is a failure).
pub fn have_tool(name: &str) -> bool {
    let found = Command::new(name)
        .arg("-v")
        .output()
        .map(|o| o.status.success() || !o.stderr.is_empty())
        .unwrap_or(false);
    if !found && std::env::var("CI").as_deref() == Ok("true") {
        panic!("{name} is required when CI=true (.ci/run installs it)");
    }
    if !found {
        eprintln!("skipped: {name} is not installed");
    }
    found
}

/// The files directly in `dir` whose names start with `prefix`.
pub fn names_starting(dir: &Path, prefix: &str) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .filter(|n| n.starts_with(prefix))
        .collect()
}

/// Pixels per mm of a manifest film (dpi / 25.4, times its scale correction).
pub fn px_per_mm(film: &Value) -> (f64, f64) {
    (
        f(&film["dpi"][0]) / MM_PER_INCH * f(&film["scale"][0]),
        f(&film["dpi"][1]) / MM_PER_INCH * f(&film["scale"][1]),
    )
}

/// A placement's film-frame top-left corner on its sheet, in pixels, from the placement rect
/// in mm (sheet origin lower-left, y up; docs/sheets.md) and the sheet's height.
pub fn placement_top_left_px(p: &Value, sheet_height_mm: f64, dpi: (f64, f64)) -> (f64, f64) {
    let left = f(&p["x_mm"]) / MM_PER_INCH * dpi.0;
    let top = (sheet_height_mm - f(&p["y_mm"]) - f(&p["height_mm"])) / MM_PER_INCH * dpi.1;
    (left, top)
}

/// How far the best fit of a transformed point set onto itself is off: the smallest RMS
/// residual over every pairing of the points, with the least-squares translation (the mean
/// difference) for each. The RMS residual at the least-squares translation is a lower bound
/// for the largest residual at any translation (max ≥ RMS, and the least-squares translation
/// minimises the RMS), so "≥ 1 mm" here means every pin of a wrongly laid film misses by at
/// least 1 mm somewhere.
pub fn self_fit_misfit(points: &[(f64, f64)], transform: impl Fn((f64, f64)) -> (f64, f64)) -> f64 {
    let moved: Vec<(f64, f64)> = points.iter().map(|&p| transform(p)).collect();
    let n = points.len();
    let mut best = f64::INFINITY;
    for perm in permutations(n) {
        let (mut tx, mut ty) = (0.0, 0.0);
        for i in 0..n {
            tx += points[perm[i]].0 - moved[i].0;
            ty += points[perm[i]].1 - moved[i].1;
        }
        let (tx, ty) = (tx / n as f64, ty / n as f64);
        let mut ss = 0.0;
        for i in 0..n {
            let dx = moved[i].0 + tx - points[perm[i]].0;
            let dy = moved[i].1 + ty - points[perm[i]].1;
            ss += dx * dx + dy * dy;
        }
        best = best.min((ss / n as f64).sqrt());
    }
    best
}

/// All permutations of 0..n.
pub fn permutations(n: usize) -> Vec<Vec<usize>> {
    if n == 0 {
        return vec![Vec::new()];
    }
    let mut out = Vec::new();
    for p in permutations(n - 1) {
        for at in 0..=p.len() {
            let mut q = p.clone();
            q.insert(at, n - 1);
            out.push(q);
        }
    }
    out
}

/// A map of the plane, mm to mm.
pub type PlaneMap = fn((f64, f64)) -> (f64, f64);

/// The three rigid mistakes a film can be laid with: mirrored left-right (x → −x), mirrored
/// top-bottom (y → −y) and turned half round; each is followed by the best translation in
/// [`self_fit_misfit`], so a mirror about *any* vertical (or horizontal) line and a half-turn
/// about *any* point are covered.
pub fn wrong_placements() -> Vec<(&'static str, PlaneMap)> {
    vec![
        ("mirror x -> -x", |(x, y)| (-x, y)),
        ("mirror y -> -y", |(x, y)| (x, -y)),
        ("half-turn", |(x, y)| (-x, -y)),
    ]
}

/// The target centres of a manifest.
pub fn manifest_targets(m: &Value) -> Vec<(f64, f64)> {
    m["targets_mm"]
        .as_array()
        .expect("targets_mm")
        .iter()
        .map(|p| (f(&p["x"]), f(&p["y"])))
        .collect()
}

/// Pixel differences between a sheet region and `shapes` (in sheet mm: origin at the sheet's
/// lower-left corner, y up, as docs/sheets.md) drawn by the library's rasterizer, allowing a
/// shift of up to `slack` pixels; and the drawn shapes' black pixel count. The region is the
/// pixel rectangle [i0, i1) × [j0, j1).
pub fn text_difference(
    sheet: &Sheet,
    dpi: f64,
    shapes: Vec<umbra::image::Shape>,
    region: (i64, i64, i64, i64),
    slack: i64,
) -> (u64, u64) {
    let (i0, j0, i1, j1) = region;
    let s = dpi / MM_PER_INCH;
    let (w, h) = ((i1 - i0) as usize, (j1 - j0) as usize);
    // Sheet pixel row j has its centre at y = (height − j − 0.5) / s mm.
    let map = umbra::raster::DeviceMap::new(
        umbra::image::Point::new(i0 as f64 / s, (sheet.height as f64 - j1 as f64) / s),
        w,
        h,
        dpi,
        dpi,
    );
    let objs: Vec<umbra::image::Object> = shapes
        .into_iter()
        .map(|shape| umbra::image::Object {
            polarity: umbra::image::Polarity::Dark,
            shape,
        })
        .collect();
    let drawn = umbra::raster::render(&objs, &map);
    let mut best = u64::MAX;
    for dy in -slack..=slack {
        for dx in -slack..=slack {
            let mut n = 0;
            for y in 0..h {
                for x in 0..w {
                    let on_sheet = sheet.black(i0 + x as i64 + dx, j0 + y as i64 + dy);
                    n += u64::from(on_sheet != drawn.get(x, y));
                }
            }
            best = best.min(n);
        }
    }
    (best, drawn.count_ones())
}

/// The printable rectangle of a sheet (mm, origin lower-left) for margins given with the sheet
/// held in portrait (docs/sheets.md "Printable area": in landscape, top and bottom take
/// max(left, right), left and right take max(top, bottom)).
pub fn printable_mm(size_mm: (f64, f64), top: f64, right: f64, bottom: f64, left: f64) -> [f64; 4] {
    let (w, h) = size_mm;
    if w > h {
        let tb = left.max(right);
        let lr = top.max(bottom);
        [lr, tb, w - lr, h - tb]
    } else {
        [left, bottom, w - right, h - top]
    }
}
