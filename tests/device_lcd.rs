//! `umbra films --device lcd`: one PNG per film at a masked LCD screen's exact pixel grid.
//!
//! The screen of these tests is invented: 1200 × 1000 pixels of 50 × 47.25 µm (non-square;
//! a pitch of that order is typical of resin-printer screens, from memory). Expected sizes are
//! analytic: a length L covers L / pitch pixels.

mod device_support;
use device_support::{blobs, read_png, umbra, write_board};

const PITCH_X_UM: f64 = 50.0;
const PITCH_Y_UM: f64 = 47.25;
const SCREEN: (usize, usize) = (1200, 1000);

/// A profile for the test screen; `extra` goes into [device.lcd]; targets and label are off
/// so that the only black is the board's copper.
fn profile(extra: &str) -> String {
    format!(
        "[artwork]\nregistration = false\nlabel = false\n\n[device]\nkind = \"lcd\"\n\n\
         [device.lcd]\nname = \"test screen\"\npixels_x = {}\npixels_y = {}\n\
         pitch_x_um = {PITCH_X_UM}\npitch_y_um = {PITCH_Y_UM}\n{extra}\n",
        SCREEN.0, SCREEN.1
    )
}

/// Runs the films job for the test board with `profile_text`; returns the temp dir.
fn run(profile_text: &str, extra_args: &[&str]) -> (tempfile::TempDir, std::process::Output) {
    let dir = tempfile::tempdir().unwrap();
    write_board(dir.path());
    std::fs::write(dir.path().join("p.toml"), profile_text).unwrap();
    let mut args = vec!["films", "board", "--profile", "p.toml", "-o", "out", "-q"];
    args.extend_from_slice(extra_args);
    let out = umbra(dir.path(), &args);
    (dir, out)
}

fn run_ok(profile_text: &str) -> (tempfile::TempDir, device_support::Pixels) {
    let (dir, out) = run(profile_text, &[]);
    assert!(
        out.status.success(),
        "umbra failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let png = read_png(&dir.path().join("out/copper-top.png"));
    (dir, png)
}

#[test]
fn ten_mm_square_measures_its_length_over_the_pitch_on_each_axis() {
    let (dir, png) = run_ok(&profile(""));
    // The image is the screen's exact pixel grid.
    assert_eq!((png.width, png.height), SCREEN);
    let b = blobs(&png, true);
    assert_eq!(b.len(), 2, "the two copper squares and nothing else: {b:?}");
    // Analytic: 10 mm / 50 µm = 200 px; 10 mm / 47.25 µm = 211.64 px (±1 px for sampling).
    let big = b[0];
    assert!(
        (big.width() as f64 - 10_000.0 / PITCH_X_UM).abs() <= 1.0,
        "width {}",
        big.width()
    );
    assert!(
        (big.height() as f64 - 10_000.0 / PITCH_Y_UM).abs() <= 1.0,
        "height {}",
        big.height()
    );
    // 2 mm: 40 × 42.3 px.
    let small = b[1];
    assert!((small.width() as f64 - 2_000.0 / PITCH_X_UM).abs() <= 1.0);
    assert!((small.height() as f64 - 2_000.0 / PITCH_Y_UM).abs() <= 1.0);

    // Centred: the board extents (both squares, 14 × 10 mm) sit in the screen's middle.
    let (x0, x1) = (big.x0.min(small.x0), big.x1.max(small.x1));
    let (y0, y1) = (big.y0.min(small.y0), big.y1.max(small.y1));
    let cx = (x0 + x1 + 1) as f64 / 2.0;
    let cy = (y0 + y1 + 1) as f64 / 2.0;
    assert!((cx - SCREEN.0 as f64 / 2.0).abs() <= 1.0, "centre x {cx}");
    assert!((cy - SCREEN.1 as f64 / 2.0).abs() <= 1.0, "centre y {cy}");

    // The manifest's board → image map agrees with the pixels: board (0, 10), the big
    // square's top corner on the board's left, is the blob's top-right corner when mirrored.
    let m: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.path().join("out/manifest.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(m["device"], "lcd");
    let a = &m["images"][0]["board_to_image_px"];
    let f = |k: &str| a[k].as_f64().unwrap();
    let px = |x: f64, y: f64| {
        (
            f("a") * x + f("b") * y + f("c"),
            f("d") * x + f("e") * y + f("f"),
        )
    };
    let (ax, ay) = px(0.0, 10.0);
    assert!(
        (ax - (big.x1 + 1) as f64).abs() <= 1.0,
        "{ax} vs {}",
        big.x1 + 1
    );
    assert!((ay - big.y0 as f64).abs() <= 1.0, "{ay} vs {}", big.y0);
}

/// Where the small square lies relative to the big one in the image: (right?, above?).
fn small_square_side(png: &device_support::Pixels) -> (bool, bool) {
    let b = blobs(png, true);
    assert_eq!(b.len(), 2, "{b:?}");
    let (bx, by) = b[0].centre();
    let (sx, sy) = b[1].centre();
    (sx > bx, sy < by)
}

#[test]
fn mirror_follows_the_film_rules_the_screen_and_its_origin_corner() {
    // On the board the small square is right of and above the big one. A top layer seen by a
    // screen whose front faces the board is mirrored (docs/film-rules.md, Mirroring: printed
    // side toward the board); `mirrored_by_screen` undoes that; the origin corner then flips
    // the image file so the screen shows the planned picture.
    let cases = [
        ("", (false, true)),
        ("mirrored_by_screen = true", (true, true)),
        ("origin = \"top-right\"", (true, true)),
        ("origin = \"bottom-left\"", (false, false)),
        ("origin = \"bottom-right\"", (true, false)),
        (
            "origin = \"top-right\"\nmirrored_by_screen = true",
            (false, true),
        ),
    ];
    for (extra, want) in cases {
        let (_dir, png) = run_ok(&profile(extra));
        assert_eq!(small_square_side(&png), want, "profile lines: {extra}");
    }
}

#[test]
fn a_screen_passing_light_where_black_gets_the_inverse() {
    let (_d, normal) = run_ok(&profile(""));
    let (_d2, inverse) = run_ok(&profile("transmits_where = \"black\""));
    // Screen centre: inside the big square (copper: opaque for positive resist).
    let (cx, cy) = (SCREEN.0 / 2 - 60, SCREEN.1 / 2);
    assert!(
        normal.get(cx, cy),
        "opaque film shown black on a white-passing screen"
    );
    assert!(
        !inverse.get(cx, cy),
        "opaque film shown white on a black-passing screen"
    );
    let same = normal
        .black
        .iter()
        .zip(&inverse.black)
        .filter(|(a, b)| a == b)
        .count();
    assert_eq!(same, 0, "every pixel is inverted");
}

#[test]
fn offset_placement_puts_the_film_corner_where_asked() {
    // Film top-left corner 5 mm right and 3 mm down from the screen's top-left; the film is
    // the board grown by the 2 mm border, so the board's left edge (x = 0, unmirrored with
    // mirrored_by_screen) is 7 mm = 140 px in and its top (y = 10) 5 mm = 105.8 px down.
    let (_d, png) = run_ok(&profile(
        "mirrored_by_screen = true\nplacement = \"offset\"\noffset_mm = [5.0, 3.0]",
    ));
    let big = blobs(&png, true)[0];
    assert!(
        (big.x0 as f64 - 7_000.0 / PITCH_X_UM).abs() <= 1.0,
        "x0 {}",
        big.x0
    );
    assert!(
        (big.y0 as f64 - 5_000.0 / PITCH_Y_UM).abs() <= 1.0,
        "y0 {}",
        big.y0
    );

    // Mirrored (the usual top layer): the film's left edge is now the board's right side, so
    // the small square's edge x = 14 is the one 7 mm in; its top y = 9 is 3 + 2 + 1 mm down.
    let (_d, png) = run_ok(&profile("placement = \"offset\"\noffset_mm = [5.0, 3.0]"));
    let small = blobs(&png, true)[1];
    assert!(
        (small.x0 as f64 - 7_000.0 / PITCH_X_UM).abs() <= 1.0,
        "x0 {}",
        small.x0
    );
    assert!(
        (small.y0 as f64 - 6_000.0 / PITCH_Y_UM).abs() <= 1.0,
        "y0 {}",
        small.y0
    );
}

#[test]
fn a_film_larger_than_the_screen_is_refused_with_both_sizes() {
    // 300 × 200 pixels of 50 × 47.25 µm: 15.0 × 9.45 mm, lower than the 10 mm board.
    let text = profile("")
        .replace("pixels_x = 1200", "pixels_x = 300")
        .replace("pixels_y = 1000", "pixels_y = 200");
    let (dir, out) = run(&text, &[]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("does not fit"), "{err}");
    assert!(
        err.contains("15.0 × 9.4 mm") || err.contains("15.0 × 9.5 mm"),
        "{err}"
    );
    assert!(err.contains("300 × 200 pixels of 50 × 47.25 µm"), "{err}");
    assert!(err.contains("14.0 × 10.0 mm"), "the board's size: {err}");
    assert!(!dir.path().join("out").exists(), "nothing written");

    // The board fits but not with its targets and label: the message says what to turn off.
    let text = format!(
        "[device]\nkind = \"lcd\"\n[device.lcd]\npixels_x = 400\npixels_y = 300\npitch_x_um = {PITCH_X_UM}\npitch_y_um = {PITCH_Y_UM}\n"
    );
    let (_dir, out) = run(&text, &[]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("the board alone would fit"), "{err}");
    assert!(err.contains("label = false"), "{err}");
}

#[test]
fn device_flag_overrides_the_profile_and_needs_a_screen() {
    // A printer profile made to run on the LCD from the command line.
    let text = profile("").replace("kind = \"lcd\"", "kind = \"printer\"");
    let (dir, out) = run(&text, &["--device", "lcd"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(dir.path().join("out/copper-top.png").exists());
    assert!(!dir.path().join("out/films.pdf").exists());

    // No screen described: a clear error naming the section.
    let (_dir, out) = run("", &["--device", "lcd"]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("[device.lcd]"), "{err}");

    // Vector sheets are for printers: asking for them with a screen is an error, not a
    // silently missing file, and nothing is written (brief: nothing half-written).
    let (dir, out) = run(&text, &["--device", "lcd", "--vector"]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--vector") && err.contains("lcd"), "{err}");
    assert!(!dir.path().join("out").exists());
}
