//! Shared by the tests that check our PDFs with poppler (Debian's poppler-utils, installed by
//! `.ci/run`): finding the tools, and reading the binary PBM pages `pdftoppm -mono` writes.
#![allow(dead_code)]

use std::process::Command;

/// Whether a poppler tool runs. Missing tools skip the test, except under CI=true.
pub fn poppler_tool(name: &str) -> bool {
    let found = Command::new(name).arg("-v").output().is_ok();
    if !found && std::env::var("CI").as_deref() == Ok("true") {
        panic!("{name} (poppler-utils) is required when CI=true");
    }
    if !found {
        eprintln!("skipped: {name} is not installed (poppler-utils)");
    }
    found
}

/// The header of a binary Netpbm image: `n` whitespace-separated fields (`#` comments allowed
/// between them) and the offset of the first sample byte, after one whitespace byte.
fn netpbm_header(bytes: &[u8], n: usize) -> (Vec<String>, usize) {
    let mut fields = Vec::new();
    let mut i = 0;
    while fields.len() < n {
        while bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        if bytes[i] == b'#' {
            while bytes[i] != b'\n' {
                i += 1;
            }
            continue;
        }
        let start = i;
        while !bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        fields.push(String::from_utf8_lossy(&bytes[start..i]).to_string());
    }
    (fields, i + 1)
}

/// A binary PBM (P4, Netpbm format): "P4", width, height, then rows packed MSB-first and
/// padded to whole bytes, 1 = black. Returns (width, height, black per pixel, row-major).
pub fn read_pbm(bytes: &[u8]) -> (usize, usize, Vec<bool>) {
    let (fields, i) = netpbm_header(bytes, 3);
    assert_eq!(fields[0], "P4");
    let w: usize = fields[1].parse().unwrap();
    let h: usize = fields[2].parse().unwrap();
    let stride = w.div_ceil(8);
    let mut black = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            let byte = bytes[i + y * stride + x / 8];
            black.push((byte >> (7 - x % 8)) & 1 == 1);
        }
    }
    (w, h, black)
}

/// A binary PGM (P5, Netpbm format) with 8-bit samples: "P5", width, height, maxval 255,
/// then one byte per pixel. Returns (width, height, samples, row-major).
pub fn read_pgm(bytes: &[u8]) -> (usize, usize, Vec<u8>) {
    let (fields, i) = netpbm_header(bytes, 4);
    assert_eq!(fields[0], "P5");
    assert_eq!(fields[3], "255");
    (
        fields[1].parse().unwrap(),
        fields[2].parse().unwrap(),
        bytes[i..].to_vec(),
    )
}
