//! The `[device]` section of the profile: defaults, the documented example, the demo profile.

use umbra::device::{Corner, DeviceKind, Placement, Transmits};
use umbra::process::{Profile, DEFAULT_PROFILE_TOML};

#[test]
fn default_profile_file_is_the_default_profile() {
    let p = Profile::from_toml(DEFAULT_PROFILE_TOML, "default-profile.toml").unwrap();
    assert_eq!(p, Profile::default());
    assert_eq!(p.device.kind, DeviceKind::Printer);
    assert!(p.device.lcd.is_none());
}

#[test]
fn the_commented_lcd_example_of_the_default_file_parses() {
    // Uncomment the [device.lcd] block as a user would: every documented key must exist.
    let mut text = String::new();
    let mut in_lcd = false;
    for line in DEFAULT_PROFILE_TOML.lines() {
        if line.starts_with("# [device.lcd]") {
            in_lcd = true;
        } else if line.starts_with('[') {
            in_lcd = false;
        }
        let is_setting = line.starts_with("# ") && line[2..].contains(" = ");
        if in_lcd && (is_setting || line.starts_with("# [")) {
            text.push_str(&line[2..]);
        } else {
            text.push_str(line);
        }
        text.push('\n');
    }
    let text = text.replace("kind = \"printer\"", "kind = \"lcd\"");
    let p = Profile::from_toml(&text, "uncommented").unwrap();
    let s = p.device.lcd.expect("the [device.lcd] example");
    assert_eq!((s.pixels_x, s.pixels_y), (2560, 1620));
    assert_eq!(s.origin, Corner::TopLeft);
    assert_eq!(s.transmits_where, Transmits::White);
    assert_eq!(s.placement, Placement::Centre);
}

#[test]
fn demo_lcd_profile_describes_a_non_square_screen() {
    let path =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/larkspur-lcd-profile.toml");
    let text = std::fs::read_to_string(path).unwrap();
    let p = Profile::from_toml(&text, "larkspur-lcd-profile.toml").unwrap();
    assert_eq!(p.device.kind, DeviceKind::Lcd);
    let s = p.device.lcd.unwrap();
    assert_ne!(s.pitch_x_um, s.pitch_y_um);
    // 25,400 µm per inch: resolution = 25400 / pitch.
    assert!((s.dpi_x() - 25_400.0 / s.pitch_x_um).abs() < 1e-9);
}

#[test]
fn bad_device_settings_are_refused_with_the_key_named() {
    let cases = [
        ("[device]\nkind = \"lcd\"\n", "[device.lcd]"),
        (
            "[device.lcd]\npixels_x = 100\npixels_y = 100\npitch_x_um = 0.5\npitch_y_um = 50\n",
            "pitch_x_um",
        ),
        (
            "[device.lcd]\npixels_x = 100\npixels_y = 100\npitch_x_um = 50\npitch_y_um = 50\nplacement = \"offset\"\n",
            "offset_mm",
        ),
        ("[device.film_service]\ndpi = 40000\n", "film_service.dpi"),
        ("[device]\nkind = \"plotter\"\n", "plotter"),
        ("[device.lcd]\npixels_x = 100\n", "pixels_y"),
    ];
    for (text, needle) in cases {
        let e = Profile::from_toml(text, "p.toml").unwrap_err().to_string();
        assert!(e.contains(needle), "{text:?}: {e}");
    }
}
