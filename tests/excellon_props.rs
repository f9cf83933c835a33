//! Property tests: drill-like text built from random Excellon fragments never panics, and
//! every successful read keeps the `DrillFile` guarantees (valid tool indices, paths of two
//! or more points, finite numbers). The same checks run in fuzz/fuzz_targets/drill.rs.

use proptest::prelude::*;
use umbra::excellon;
use umbra::image::Point;
use umbra::limits::Limits;

fn fragment() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("M48".to_string()),
        Just("%".to_string()),
        Just("M30".to_string()),
        Just("M15".to_string()),
        Just("M16".to_string()),
        Just("G00".to_string()),
        Just("G01".to_string()),
        Just("G05".to_string()),
        Just("G90".to_string()),
        Just("G91".to_string()),
        prop_oneof![Just("METRIC"), Just("INCH"), Just("M71"), Just("M72")].prop_map(String::from),
        prop_oneof![Just(",LZ"), Just(",TZ"), Just(",000.000"), Just("")]
            .prop_map(|z| format!("METRIC{z}")),
        (0u32..120, 0.0f64..5.0).prop_map(|(t, c)| format!("T{t}C{c:.3}")),
        (0u32..120).prop_map(|t| format!("T{t}")),
        (-200i64..200_000, -200i64..200_000).prop_map(|(x, y)| format!("X{x}Y{y}")),
        (-50.0f64..50.0, -50.0f64..50.0).prop_map(|(x, y)| format!("X{x:.3}Y{y:.3}")),
        (-50.0f64..50.0).prop_map(|y| format!("Y{y:.2}")),
        (0u32..50, -5.0f64..5.0).prop_map(|(n, d)| format!("R{n}X{d:.2}")),
        (-20.0f64..20.0, -20.0f64..20.0, -20.0f64..20.0)
            .prop_map(|(x, y, a)| format!("G02X{x:.2}Y{y:.2}A{a:.2}")),
        (-20.0f64..20.0, -20.0f64..20.0, -5.0f64..5.0, -5.0f64..5.0)
            .prop_map(|(x, y, i, j)| format!("G03X{x:.2}Y{y:.2}I{i:.2}J{j:.2}")),
        (-20.0f64..20.0, -20.0f64..20.0).prop_map(|(x, y)| format!("X1.0Y1.0G85X{x:.2}Y{y:.2}")),
        Just("; #@! TA.AperFunction,Plated,PTH,ViaDrill".to_string()),
        Just(";FILE_FORMAT=2:4".to_string()),
        "[ -~]{0,12}",
    ]
}

fn check(text: &str) {
    let limits = Limits {
        max_objects: 50_000,
        max_step_repeat: 1_000,
        ..Limits::default()
    };
    if let Ok(d) = excellon::read(text, "p.drl", &limits) {
        let finite = |p: &Point| p.x.is_finite() && p.y.is_finite();
        assert!(d
            .tools
            .iter()
            .all(|t| t.diameter_mm.is_finite() && t.diameter_mm >= 0.0));
        assert!(d
            .holes
            .iter()
            .all(|h| h.tool < d.tools.len() && finite(&h.at)));
        assert!(d
            .slots
            .iter()
            .all(|s| s.tool < d.tools.len() && s.path.len() >= 2 && s.path.iter().all(finite)));
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn random_programs_never_panic(lines in prop::collection::vec(fragment(), 0..40)) {
        check(&lines.join("\n"));
    }

    #[test]
    fn programs_with_a_valid_header_never_panic(lines in prop::collection::vec(fragment(), 0..40)) {
        let text = format!("M48\nMETRIC,TZ,000.000\nT1C0.8\nT2C1.0\n%\nT1\n{}\nM30\n", lines.join("\n"));
        check(&text);
    }
}
