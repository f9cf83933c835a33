//! `umbra films --vector` on the demo board: the vector files exist, the vector PDF has the
//! raster PDF's pages and page sizes, and poppler (`pdftoppm -mono`, poppler-utils) renders
//! both with the same black in the same places (placement, mirror, captions, labels).

use std::path::Path;
use std::process::Command;

fn media_boxes(pdf: &[u8]) -> Vec<String> {
    let text = String::from_utf8_lossy(pdf);
    text.match_indices("/MediaBox")
        .map(|(i, _)| text[i..].chars().take_while(|&c| c != ']').collect())
        .collect()
}

/// A P4 PBM (Netpbm) as (width, height, rows of bits, 1 = black).
fn pbm(path: &Path) -> (usize, usize, Vec<bool>) {
    let bytes = std::fs::read(path).expect("pbm");
    let mut parts = Vec::new();
    let mut i = 0;
    while parts.len() < 3 {
        while bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        let s = i;
        while !bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        parts.push(String::from_utf8_lossy(&bytes[s..i]).to_string());
    }
    i += 1;
    let (w, h): (usize, usize) = (parts[1].parse().unwrap(), parts[2].parse().unwrap());
    let stride = w.div_ceil(8);
    let bits = (0..w * h)
        .map(|k| {
            let (x, y) = (k % w, k / w);
            bytes[i + y * stride + x / 8] & (0x80 >> (x % 8)) != 0
        })
        .collect();
    (w, h, bits)
}

#[test]
fn films_with_vector_writes_matching_pdf_and_svgs() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let st = Command::new(env!("CARGO_BIN_EXE_umbra"))
        .args(["films", "-q", "--vector", "--date", "2026-01-01", "-o"])
        .arg(&out)
        .arg(&demo)
        .status()
        .unwrap();
    assert!(st.success());
    let raster = std::fs::read(out.join("films.pdf")).unwrap();
    let vector = std::fs::read(out.join("films-vector.pdf")).unwrap();
    // Same pages of the same sizes (ISO 32000-1 §7.7.3.3 MediaBox).
    assert_eq!(media_boxes(&raster), media_boxes(&vector));
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("manifest.json")).unwrap()).unwrap();
    // The manifest lists every vector file, and each listed file exists.
    let listed: Vec<&str> = manifest["vector_files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    assert!(listed.contains(&"films-vector.pdf"), "{listed:?}");
    for name in &listed {
        assert!(out.join(name).is_file(), "{name} listed but missing");
    }
    for f in manifest["films"].as_array().unwrap() {
        let svg_name = format!("{}.svg", f["key"].as_str().unwrap());
        assert!(listed.contains(&svg_name.as_str()), "{svg_name} not listed");
        let svg = std::fs::read_to_string(out.join(format!("{}.svg", f["key"].as_str().unwrap())))
            .unwrap();
        assert!(
            svg.starts_with("<?xml") && svg.contains("<path") && svg.trim_end().ends_with("</svg>")
        );
    }
    if Command::new("pdftoppm").arg("-v").output().is_err() {
        assert_ne!(
            std::env::var("CI").as_deref(),
            Ok("true"),
            "pdftoppm is required under CI"
        );
        return;
    }
    for (name, pdf) in [("r", "films.pdf"), ("v", "films-vector.pdf")] {
        let ok = Command::new("pdftoppm")
            .args(["-r", "150", "-mono", "-f", "1", "-l", "1", "-singlefile"])
            .arg(out.join(pdf))
            .arg(dir.path().join(name))
            .status()
            .unwrap();
        assert!(ok.success());
    }
    let (w, h, r) = pbm(&dir.path().join("r.pbm"));
    let (w2, h2, v) = pbm(&dir.path().join("v.pbm"));
    assert_eq!((w, h), (w2, h2));
    let black = r.iter().filter(|&&b| b).count();
    let differ = r.iter().zip(&v).filter(|(a, b)| a != b).count();
    eprintln!("page 1 at 150 dpi: {black} black pixels, {differ} differ");
    assert!(black > 10_000);
    // Misplaced or unmirrored films differ in most of their black; the two renderings'
    // sampling rules differ only along edges (measured 0.28 of the black here).
    assert!((differ as f64) < 0.35 * black as f64, "{differ} of {black}");
}
