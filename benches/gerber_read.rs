//! Gerber reading throughput (parse + interpret) on a deterministic synthetic board.
//!
//! Target: at least 100 MB/s of Gerber text on one core. Run with
//! `cargo bench --bench gerber_read`; the board size can be set with
//! `UMBRA_BENCH_MB` (default 40).

use std::fmt::Write as _;
use std::time::Instant;
use umbra::limits::Limits;

/// A deterministic board: pads (flashes of round, rectangular and obround apertures),
/// tracks (strokes), arcs and copper pours (regions with clear cut-outs), in the mix a
/// typical copper layer has. Format 4.6 mm, leading zero omission.
fn synthetic_board(target_bytes: usize) -> String {
    let mut s = String::with_capacity(target_bytes + 4096);
    s.push_str("G04 Larkspur Community Workshop synthetic benchmark board*\n");
    s.push_str("%TF.FileFunction,Copper,L1,Top*%\n%FSLAX46Y46*%\n%MOMM*%\n%LPD*%\nG75*\n");
    s.push_str("%ADD10C,0.250000*%\n%ADD11C,1.600000*%\n%ADD12R,1.500000X0.800000*%\n%ADD13O,1.200000X2.000000*%\n");
    let mut seed: u64 = 0x2545_F491_4F6C_DD1D;
    let mut rnd = |n: i64| {
        // xorshift64*: deterministic, no dependency
        seed ^= seed >> 12;
        seed ^= seed << 25;
        seed ^= seed >> 27;
        (seed.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 33) as i64 % n
    };
    let mut block = 0;
    while s.len() < target_bytes {
        block += 1;
        // Tracks.
        s.push_str("D10*\nG01*\n");
        let (mut x, mut y) = (rnd(100_000_000), rnd(80_000_000));
        let _ = writeln!(s, "X{x}Y{y}D02*");
        for _ in 0..40 {
            x += rnd(2_000_000) - 1_000_000;
            y += rnd(2_000_000) - 1_000_000;
            let _ = writeln!(s, "X{x}Y{y}D01*");
        }
        // Arcs.
        for _ in 0..10 {
            let (cx, cy, r) = (rnd(100_000_000), rnd(80_000_000), 500_000 + rnd(2_000_000));
            let _ = writeln!(s, "X{}Y{cy}D02*\nG03X{cx}Y{}I-{r}J0D01*", cx + r, cy + r);
        }
        // Pads.
        for ap in 11..=13 {
            let _ = writeln!(s, "D{ap}*");
            for _ in 0..30 {
                let _ = writeln!(s, "X{}Y{}D03*", rnd(100_000_000), rnd(80_000_000));
            }
        }
        // A pour with a clear cut-out every few blocks.
        if block % 4 == 0 {
            let (x0, y0) = (rnd(90_000_000), rnd(70_000_000));
            s.push_str("G01*\nG36*\n");
            let _ = writeln!(s, "X{x0}Y{y0}D02*");
            for (dx, dy) in [
                (10_000_000, 0),
                (10_000_000, 8_000_000),
                (0, 8_000_000),
                (0, 0),
            ] {
                let _ = writeln!(s, "X{}Y{}D01*", x0 + dx, y0 + dy);
            }
            s.push_str("G37*\n%LPC*%\nG36*\n");
            let _ = writeln!(s, "X{}Y{}D02*", x0 + 1_000_000, y0 + 1_000_000);
            for (dx, dy) in [
                (3_000_000, 1_000_000),
                (3_000_000, 3_000_000),
                (1_000_000, 3_000_000),
                (1_000_000, 1_000_000),
            ] {
                let _ = writeln!(s, "X{}Y{}D01*", x0 + dx, y0 + dy);
            }
            s.push_str("G37*\n%LPD*%\n");
        }
    }
    s.push_str("M02*\n");
    s
}

fn main() {
    let mb: usize = std::env::var("UMBRA_BENCH_MB")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(40);
    let text = synthetic_board(mb * 1_000_000);
    let limits = Limits::default();
    let mut best = f64::INFINITY;
    let mut objects = 0;
    for _ in 0..3 {
        let t = Instant::now();
        let g =
            umbra::gerber::read(&text, "synthetic.gbr", &limits).expect("synthetic board reads");
        best = best.min(t.elapsed().as_secs_f64());
        objects = g.image.objects.len();
    }
    let rate = text.len() as f64 / best / 1e6;
    println!(
        "gerber_read: {:.1} MB, {objects} objects, best of 3 {:.3} s = {rate:.0} MB/s (target >= 100 MB/s)",
        text.len() as f64 / 1e6,
        best
    );
}
