//! Shared helpers of the device tests: a hand-written test board, running the binary, and
//! decoding PNG and TIFF files with general-purpose crates (png, tiff).
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Output;

/// A top copper layer written by hand after the Gerber spec (rev 2024.05: §4.1 FS, §4.2 MO,
/// §4.10 regions G36/G37, §5.6.3 .FileFunction): a 10 mm square at (0, 0)–(10, 10) and a
/// 2 mm square at (12, 7)–(14, 9), to the right of and above the big one's centre.
pub const TEST_COPPER: &str = "G04 Larkspur device test board*
%TF.FileFunction,Copper,L1,Top*%
%TF.FilePolarity,Positive*%
%FSLAX46Y46*%
%MOMM*%
%LPD*%
G01*
G36*
X0Y0D02*
X10000000Y0D01*
X10000000Y10000000D01*
X0Y10000000D01*
X0Y0D01*
G37*
G36*
X12000000Y7000000D02*
X14000000Y7000000D01*
X14000000Y9000000D01*
X12000000Y9000000D01*
X12000000Y7000000D01*
G37*
M02*
";

/// Writes the test board into `dir/board/` and returns that folder.
pub fn write_board(dir: &Path) -> PathBuf {
    let b = dir.join("board");
    std::fs::create_dir_all(&b).unwrap();
    std::fs::write(b.join("devtest.top-copper.gbr"), TEST_COPPER).unwrap();
    b
}

/// Runs `umbra` with `args` in `dir`.
pub fn umbra(dir: &Path, args: &[&str]) -> Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_umbra"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("umbra runs")
}

/// A decoded 1-bit image: `black[y * width + x]`.
pub struct Pixels {
    pub width: usize,
    pub height: usize,
    pub black: Vec<bool>,
}

impl Pixels {
    pub fn get(&self, x: usize, y: usize) -> bool {
        self.black[y * self.width + x]
    }
}

/// Unpacks MSB-first rows of `stride` bytes where a 0 bit is black.
fn unpack(data: &[u8], width: usize, height: usize, stride: usize) -> Pixels {
    let mut black = Vec::with_capacity(width * height);
    for y in 0..height {
        let row = &data[y * stride..(y + 1) * stride];
        for x in 0..width {
            black.push((row[x / 8] >> (7 - x % 8)) & 1 == 0);
        }
    }
    Pixels {
        width,
        height,
        black,
    }
}

/// Decodes a 1-bit greyscale PNG with the `png` crate (greyscale 0 = black, PNG spec §11.2.2).
pub fn read_png(path: &Path) -> Pixels {
    let dec = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()));
    let mut reader = dec.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.color_type, png::ColorType::Grayscale);
    assert_eq!(info.bit_depth, png::BitDepth::One);
    unpack(
        &buf,
        info.width as usize,
        info.height as usize,
        info.line_size,
    )
}

/// Decodes a 1-bit TIFF with the `tiff` crate, which normalizes WhiteIsZero so that 0 is
/// black in its output.
pub fn read_tiff(path: &Path) -> Pixels {
    let mut d =
        tiff::decoder::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()))
            .unwrap();
    let (w, h) = d.dimensions().unwrap();
    assert_eq!(d.colortype().unwrap(), tiff::ColorType::Gray(1));
    let tiff::decoder::DecodingResult::U8(data) = d.read_image().unwrap() else {
        panic!("1-bit TIFF did not decode to bytes");
    };
    let stride = (w as usize).div_ceil(8);
    unpack(&data, w as usize, h as usize, stride)
}

/// Bounding box (x0, y0, x1, y1 inclusive) and pixel count of one 4-connected blob.
#[derive(Debug, Clone, Copy)]
pub struct Blob {
    pub x0: usize,
    pub y0: usize,
    pub x1: usize,
    pub y1: usize,
    pub area: usize,
}

impl Blob {
    pub fn width(&self) -> usize {
        self.x1 - self.x0 + 1
    }
    pub fn height(&self) -> usize {
        self.y1 - self.y0 + 1
    }
    pub fn centre(&self) -> (f64, f64) {
        (
            (self.x0 + self.x1) as f64 / 2.0,
            (self.y0 + self.y1) as f64 / 2.0,
        )
    }
}

/// The 4-connected blobs of pixels equal to `value`, largest first.
pub fn blobs(p: &Pixels, value: bool) -> Vec<Blob> {
    let mut seen = vec![false; p.black.len()];
    let mut out = Vec::new();
    let mut stack = Vec::new();
    for start in 0..p.black.len() {
        if seen[start] || p.black[start] != value {
            continue;
        }
        let (mut b, mut area) = (
            Blob {
                x0: usize::MAX,
                y0: usize::MAX,
                x1: 0,
                y1: 0,
                area: 0,
            },
            0,
        );
        seen[start] = true;
        stack.push(start);
        while let Some(i) = stack.pop() {
            let (x, y) = (i % p.width, i / p.width);
            area += 1;
            b.x0 = b.x0.min(x);
            b.x1 = b.x1.max(x);
            b.y0 = b.y0.min(y);
            b.y1 = b.y1.max(y);
            let mut push = |j: usize| {
                if !seen[j] && p.black[j] == value {
                    seen[j] = true;
                    stack.push(j);
                }
            };
            if x > 0 {
                push(i - 1);
            }
            if x + 1 < p.width {
                push(i + 1);
            }
            if y > 0 {
                push(i - p.width);
            }
            if y + 1 < p.height {
                push(i + p.width);
            }
        }
        b.area = area;
        out.push(b);
    }
    out.sort_by_key(|b| std::cmp::Reverse(b.area));
    out
}
