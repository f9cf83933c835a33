//! The synthetic bench board: deterministic, with the object counts its parameters promise.

use umbra::synth::bench::{self, bench_board};

fn count(text: &str, needle: &str) -> usize {
    text.matches(needle).count()
}

#[test]
fn the_same_seed_gives_the_same_bytes() {
    let a = bench_board(7);
    assert_eq!(a, bench_board(7));
    assert_ne!(
        a.files[0].1,
        bench_board(8).files[0].1,
        "another seed, another board"
    );
}

#[test]
fn object_counts_and_size() {
    let b = bench_board(1);
    // Per copper layer: flashes = SMD + macro + through pads + clear cut-outs; draws =
    // track segments + arcs + region contour segments (D01 per segment, Gerber spec §4.7).
    let flashes = bench::SMD_PADS
        + bench::MACRO_PADS
        + bench::THROUGH_PADS
        + bench::REGIONS * bench::CUTOUTS_PER_REGION;
    let draws = bench::TRACK_POLYLINES * bench::SEGMENTS_PER_POLYLINE
        + bench::ARCS
        + bench::REGIONS * bench::REGION_SEGMENTS;
    let mut objects = 0;
    for name in ["bench.top-copper.gbr", "bench.bottom-copper.gbr"] {
        let t = b.file(name).unwrap();
        assert_eq!(count(t, "D03*"), flashes, "{name}");
        assert_eq!(count(t, "D01*"), draws, "{name}");
        assert_eq!(count(t, "G36*"), bench::REGIONS, "{name}");
        // Each region: one D01 per contour segment, so objects = flashes + strokes + regions.
        objects += flashes + (draws - bench::REGIONS * bench::REGION_SEGMENTS) + bench::REGIONS;
    }
    for name in ["bench.top-mask.gbr", "bench.bottom-mask.gbr"] {
        let t = b.file(name).unwrap();
        let pads = bench::SMD_PADS + bench::MACRO_PADS + bench::THROUGH_PADS;
        assert_eq!(count(t, "D03*"), pads, "{name}");
        assert!(t.contains("%TF.FilePolarity,Negative*%"));
        objects += pads;
    }
    let drill = b.file("bench.drill.xln").unwrap();
    let holes = drill.lines().filter(|l| l.starts_with('X')).count();
    assert_eq!(holes, bench::THROUGH_PADS);
    objects += holes;
    println!(
        "bench board: {objects} objects, {} bytes in {} files",
        b.total_bytes(),
        b.files.len()
    );
    for (n, t) in &b.files {
        println!("  {n}: {} bytes", t.len());
    }
    assert!(
        (45_000..60_000).contains(&objects),
        "about 50,000 objects: {objects}"
    );
}

#[test]
fn every_coordinate_is_on_the_board() {
    let b = bench_board(3);
    for (name, text) in &b.files {
        if !name.ends_with(".gbr") {
            continue;
        }
        for line in text.lines().filter(|l| l.starts_with('X')) {
            let y_at = line.find('Y').unwrap();
            let end = line[y_at..]
                .find(|c: char| c.is_ascii_alphabetic() && c != 'Y')
                .unwrap()
                + y_at;
            let x: i64 = line[1..y_at].parse().unwrap();
            let y: i64 = line[y_at + 1..end].parse().unwrap();
            // 4.6 format: millionths of a millimetre (Gerber spec §4.2.2).
            assert!(
                (0..=100_000_000).contains(&x) && (0..=160_000_000).contains(&y),
                "{name}: {line}"
            );
        }
    }
}
