//! The calibration solver: worked examples checked by hand arithmetic, a print → measure →
//! solve → re-print round trip through a simulated printer, and the in-place profile edit.

use umbra::calibrate::sheet::{self, SheetOptions};
use umbra::calibrate::solve::{self, DotsReading, Readings};
use umbra::process::{Profile, DEFAULT_PROFILE_TOML};

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

#[test]
fn scale_worked_examples() {
    // First print (old factor 1): 200 mm nominal measured as 199.4 mm.
    // 200 / 199.4 = 1 + 0.6/199.4 = 1 + 0.0030090270… = 1.0030090270…
    let f = solve::scale_factor(1.0, 200.0, 199.4);
    assert!(close(f, 1.003_009_027_08, 1e-10), "{f}");
    // Second print, made with 1.003009 already applied, measured 190.2 mm over 190 mm:
    // 190/190.2 = 0.998948475…; × 1.003009 = 1.003009 − 1.003009 × 0.001051525 = 1.001954…
    let g = solve::scale_factor(1.003009, 190.0, 190.2);
    assert!(close(g, 1.001_954_3, 1e-6), "{g}");
    // A print that measured true leaves the factor alone.
    assert!(close(
        solve::scale_factor(0.9975, 270.0, 270.0),
        0.9975,
        1e-15
    ));
}

#[test]
fn spread_worked_examples() {
    // 1200 dpi: one dot is 25400/1200 = 21.1667 µm. The 3-dot gap is the narrowest still
    // open, so the 2-dot gap closed: 2 × spread in [42.33, 63.5) µm; middle:
    // (3 − ½) × 21.1667 / 2 = 26.458 µm per edge.
    assert!(close(solve::spread_from_open_gap(3, 1200.0), 26.458, 1e-3));
    // 600 dpi (42.333 µm per dot), narrowest open gap 2: (2 − ½) × 42.333 / 2 = 31.75 µm.
    assert!(close(solve::spread_from_open_gap(2, 600.0), 31.75, 1e-9));
    // TRADE.md: a 1200 dpi laser spreads toner 1–1.5 dots per edge (21–32 µm); gaps of 3 to
    // 4 dots are then the narrowest open ones, and the estimates land in that band.
    for g in [3, 4] {
        let s = solve::spread_from_open_gap(g, 1200.0);
        assert!((21.0..=37.1).contains(&s), "{g}: {s}");
    }
}

#[test]
fn solve_reports_every_value_with_its_derivation() {
    let mut p = Profile::default();
    p.sheet.size = "Letter".parse().unwrap(); // X ruler 200 mm (see calibrate_sheet.rs)
    let r = Readings {
        ruler_x_mm: Some(199.4),
        ruler_y_mm: Some(250.5),
        open_gap: Some("3".parse().unwrap()),
        true_line: Some("2,3".parse().unwrap()),
        best_segment: Some(4),
        ..Default::default()
    };
    let s = solve::solve(&p, &r).unwrap();
    // 200/199.4 rounded to 6 decimals; 250/250.5 = 0.998003992… → 0.998004.
    assert_eq!(s.scale_x, Some(1.003009));
    assert_eq!(s.scale_y, Some(0.998004));
    // 26.458 µm rounded to 0.1 µm.
    assert_eq!(s.toner_spread_um, Some(26.5));
    // Default strip: 30 s × √2^(4−1) = 84.85 s, printed and stored as 85 s.
    assert_eq!(s.exposure_time_s, Some(85.0));
    // True line 2 dots (X) and 3 dots (Y) at 1200 dpi: 42.33 and 63.5 µm.
    let [wx, wy] = s.finest_line_um.unwrap();
    assert!(close(wx, 42.333, 1e-3) && close(wy, 63.5, 1e-9));
    let text = s.derivation.join("\n");
    for needle in [
        "200 mm nominal ÷ 199.4 mm measured",
        "1.003009",
        "26.5",
        "segment 4",
    ] {
        assert!(text.contains(needle), "{needle} missing in\n{text}");
    }
    assert!(s.warnings.is_empty(), "{:?}", s.warnings);
}

#[test]
fn misreadings_are_refused_not_guessed() {
    let p = Profile::default();
    let with = |r: Readings| solve::solve(&p, &r).unwrap_err().to_string();
    // 7.5 inches typed as mm, or the wrong tick: far beyond a printer's few percent.
    assert!(with(Readings {
        ruler_x_mm: Some(7.5),
        ..Default::default()
    })
    .contains("few percent"));
    // The 1200 dpi ladders go to 10 dots.
    assert!(with(Readings {
        open_gap: Some(DotsReading { x: 11, y: 11 }),
        ..Default::default()
    })
    .contains("1 to 10"));
    assert!(with(Readings {
        best_segment: Some(8),
        ..Default::default()
    })
    .contains("1 to 7"));
    assert!(with(Readings::default()).contains("nothing to solve"));
    assert!("0".parse::<DotsReading>().is_err());
    assert!("2,x".parse::<DotsReading>().is_err());
    // A best segment at the end of the strip is used, with a warning to widen the range.
    let s = solve::solve(
        &p,
        &Readings {
            best_segment: Some(7),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(s.exposure_time_s, Some(240.0));
    assert!(s.warnings[0].contains("max_s = 480"), "{:?}", s.warnings);
}

/// Positions (film pixels) of the X ruler's 0 and last ticks, and of the Y ruler's, found in
/// the rendered sheet as the centres of the dark runs crossing a line 1 mm off the baseline.
fn tick_ends(p: &Profile) -> ((f64, f64), (f64, f64)) {
    let pl = sheet::plan(
        p,
        &SheetOptions {
            date: "2026-12-02".into(),
        },
    )
    .unwrap();
    let m = pl.map;
    let centres = |line: Vec<bool>| -> Vec<f64> {
        let mut out = Vec::new();
        let mut start = None;
        for (i, v) in line.iter().chain(std::iter::once(&false)).enumerate() {
            match (v, start) {
                (true, None) => start = Some(i),
                (false, Some(s)) => {
                    out.push((s + i) as f64 / 2.0);
                    start = None;
                }
                _ => {}
            }
        }
        out
    };
    let at = |x: f64, y: f64| m.to_px(umbra::image::Point::new(x, y));
    // Lines 1 mm off each baseline, from 1 mm before the 0 tick to 1 mm past the last: only
    // the ruler's ticks cross them (checked in calibrate_sheet.rs).
    let rx = pl.ruler_x;
    let (a, py) = at(rx.zero_mm.x - 1.0, rx.zero_mm.y + 1.0);
    let (b, _) = at(rx.zero_mm.x + rx.length_mm + 1.0, 0.0);
    let row = pl.render_window(a as usize, py as usize, b as usize, py as usize + 1);
    let xs: Vec<f64> = centres((0..row.width()).map(|x| row.get(x, 0)).collect())
        .into_iter()
        .map(|c| c + (a as usize) as f64)
        .collect();
    let ry = pl.ruler_y;
    let (px, bot) = at(ry.zero_mm.x - 1.0, ry.zero_mm.y - 1.0);
    let (_, top) = at(0.0, ry.zero_mm.y + ry.length_mm + 1.0);
    let col = pl.render_window(px as usize, top as usize, px as usize + 1, bot as usize);
    let ys: Vec<f64> = centres((0..col.height()).map(|y| col.get(0, y)).collect())
        .into_iter()
        .map(|c| c + (top as usize) as f64)
        .collect();
    assert_eq!(xs.len() as f64, rx.length_mm + 1.0);
    assert_eq!(ys.len() as f64, ry.length_mm + 1.0);
    (
        (xs[0], *xs.last().unwrap()),
        (*ys.last().unwrap(), ys[0]), // rows run down: tick 0 is the bottom one
    )
}

/// A printer that stretches the page by `p` along an axis: a film pixel at position u
/// (pixels) lands on paper at u × p × 25.4 / dpi mm (nearest-neighbour, no blur).
fn printed_mm(u0: f64, u1: f64, stretch: f64, dpi: f64) -> f64 {
    (u1 - u0).abs() * stretch * 25.4 / dpi
}

#[test]
fn round_trip_through_a_stretching_printer_comes_out_at_nominal_size() {
    // The printer shrinks X by 0.3 % (200 → 199.4, the worked example) and stretches Y by
    // 0.4 %; the profile starts with no correction.
    let (px, py) = (199.4 / 200.0, 1.004);
    for dpi in [600.0, 1200.0] {
        let mut p = Profile::default();
        p.printer.dpi = dpi;
        let pixel_mm = 25.4 / dpi;
        let (rx, ry) = sheet::rulers(&p).unwrap();
        // Print 1: measure the rulers on the "paper".
        let ((x0, x1), (y0, y1)) = tick_ends(&p);
        let mx = printed_mm(x0, x1, px, dpi);
        let my = printed_mm(y0, y1, py, dpi);
        assert!(close(mx, rx.length_mm * px, pixel_mm), "{mx}");
        let s = solve::solve(
            &p,
            &Readings {
                ruler_x_mm: Some(mx),
                ruler_y_mm: Some(my),
                ..Default::default()
            },
        )
        .unwrap();
        p.printer.scale_x = s.scale_x.unwrap();
        p.printer.scale_y = s.scale_y.unwrap();
        // Print 2 with the solved factors: nominal size within one pixel.
        let ((x0, x1), (y0, y1)) = tick_ends(&p);
        let mx2 = printed_mm(x0, x1, px, dpi);
        let my2 = printed_mm(y0, y1, py, dpi);
        assert!(
            close(mx2, rx.length_mm, pixel_mm),
            "X {mx2} vs {} at {dpi} dpi",
            rx.length_mm
        );
        assert!(
            close(my2, ry.length_mm, pixel_mm),
            "Y {my2} vs {} at {dpi} dpi",
            ry.length_mm
        );
        // Print 3: solving again from the corrected print changes almost nothing.
        let s3 = solve::solve(
            &p,
            &Readings {
                ruler_x_mm: Some(mx2),
                ..Default::default()
            },
        )
        .unwrap();
        assert!(close(
            s3.scale_x.unwrap(),
            p.printer.scale_x,
            pixel_mm / 190.0
        ));
    }
}

fn bin() -> std::process::Command {
    std::process::Command::new(env!("CARGO_BIN_EXE_umbra"))
}

const USER_PROFILE: &str = r#"# Larkspur Community Workshop, laser printer in room 2
[printer]
dpi = 1200
# measured in spring
scale_x = 1.0   # across the feed
scale_y = 1.0
toner_spread_um = 0.0

[films]
copies = 2   # two stacked films: our toner is thin

[sheet]
size = "Letter"
"#;

#[test]
fn solving_edits_the_profile_in_place_and_keeps_a_backup() {
    let dir = tempfile::tempdir().unwrap();
    let prof = dir.path().join("workshop.toml");
    std::fs::write(&prof, USER_PROFILE).unwrap();
    let solve_run = |extra: &[&str]| {
        let o = bin()
            .current_dir(dir.path())
            .args(["calibrate", "solve", "--profile", "workshop.toml"])
            .args(extra)
            .output()
            .unwrap();
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        String::from_utf8_lossy(&o.stdout).to_string()
    };
    let out = solve_run(&[
        "--ruler-x",
        "199.4",
        "--ruler-y",
        "250",
        "--open-gap",
        "3",
        "--best-segment",
        "4",
    ]);
    assert!(out.contains("1.003009"), "{out}");
    let text = std::fs::read_to_string(&prof).unwrap();
    // Every comment survives, including the one after the edited value.
    for line in USER_PROFILE.lines().filter(|l| l.contains('#')) {
        let comment = &line[line.find('#').unwrap()..];
        assert!(text.contains(comment), "lost {comment:?} in\n{text}");
    }
    assert!(
        text.contains("scale_x = 1.003009   # across the feed"),
        "{text}"
    );
    let p = Profile::from_toml(&text, "workshop.toml").unwrap();
    assert_eq!(p.printer.scale_x, 1.003009);
    assert_eq!(p.printer.scale_y, 1.0); // 250 measured as 250: no change
    assert_eq!(p.printer.toner_spread_um, 26.5);
    assert_eq!(p.exposure.time_s, Some(85.0));
    // Unrelated keys are untouched.
    assert_eq!(p.films.copies, 2);
    assert_eq!(p.sheet.size.name, "Letter");
    assert_eq!(p.printer.dpi, 1200.0);
    // The previous profile is kept byte for byte.
    let bak = dir.path().join("workshop.toml.bak");
    assert_eq!(std::fs::read_to_string(&bak).unwrap(), USER_PROFILE);
    // A second solve multiplies into the new factor and keeps another backup.
    solve_run(&["--ruler-x", "200.2"]);
    let p2 = Profile::from_toml(&std::fs::read_to_string(&prof).unwrap(), "w").unwrap();
    // 1.003009 × 200/200.2 = 1.003009 × 0.999000999 = 1.002007 (to 6 decimals).
    assert_eq!(p2.printer.scale_x, 1.002007);
    assert_eq!(
        std::fs::read_to_string(dir.path().join("workshop.toml.bak.1")).unwrap(),
        text
    );
    // --dry-run changes nothing.
    let before = std::fs::read_to_string(&prof).unwrap();
    solve_run(&["--ruler-x", "199", "--dry-run"]);
    assert_eq!(std::fs::read_to_string(&prof).unwrap(), before);
}

#[test]
fn a_profile_with_a_syntax_error_is_reported_and_left_untouched() {
    let dir = tempfile::tempdir().unwrap();
    let prof = dir.path().join("broken.toml");
    // Line 3, column 11 holds the second '='.
    let broken = "[printer]\ndpi = 600\nscale_x = = 1.0\n";
    std::fs::write(&prof, broken).unwrap();
    let o = bin()
        .current_dir(dir.path())
        .args([
            "calibrate",
            "solve",
            "--profile",
            "broken.toml",
            "--ruler-x",
            "190.5",
        ])
        .output()
        .unwrap();
    assert!(!o.status.success());
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("broken.toml:3:11"), "{err}");
    assert!(err.contains("left as it is"), "{err}");
    assert_eq!(std::fs::read_to_string(&prof).unwrap(), broken);
    assert!(!dir.path().join("broken.toml.bak").exists());
    // The editing layer reports the same position on its own.
    let e = umbra::calibrate::edit::set_values(broken, "broken.toml", &[]).unwrap_err();
    assert!(e.to_string().starts_with("broken.toml:3:11"), "{e}");
}

#[test]
fn without_a_profile_the_defaults_are_written_out_with_the_results() {
    let dir = tempfile::tempdir().unwrap();
    let o = bin()
        .current_dir(dir.path())
        .args(["calibrate", "solve", "--best-segment", "3"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(dir.path().join("umbra-profile.toml")).unwrap();
    // The whole commented default profile, plus the solved time (60 s: 30 × √2²).
    assert!(text.starts_with(&DEFAULT_PROFILE_TOML[..200]));
    let p = Profile::from_toml(&text, "umbra-profile.toml").unwrap();
    assert_eq!(p.exposure.time_s, Some(60.0));
    assert_eq!(
        Profile {
            exposure: Default::default(),
            ..p
        },
        Profile::default()
    );
}

#[test]
fn default_profile_text_is_the_default_profile() {
    let p = Profile::from_toml(DEFAULT_PROFILE_TOML, "default").unwrap();
    assert_eq!(p, Profile::default());
    assert!(DEFAULT_PROFILE_TOML.contains("[exposure]"));
    // Unknown keys in the new section are refused like everywhere else in the profile.
    let e = Profile::from_toml("[exposure]\ntime = 3\n", "p.toml").unwrap_err();
    assert!(e.to_string().contains("p.toml:2:1"), "{e}");
}
