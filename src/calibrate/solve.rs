//! From the user's readings of a printed calibration sheet to profile values, with the
//! arithmetic spelled out. The formulas are derived in `docs/calibration.md`.
//!
//! - **Scale**: `new = old × nominal ÷ measured` per axis. The sheet was drawn with the old
//!   factor, so the printer turned `nominal × old` into `measured`; its own stretch is
//!   `p = measured ÷ (nominal × old)`, and the factor that cancels it is `1/p`
//!   (TRADE.md, "Scale": factor = nominal length ÷ measured length, for a first print).
//! - **Toner spread** from the gap ladder: a gap of g dots (dot pitch d) prints
//!   `g·d − 2·spread` wide, so it is still open when `g·d > 2·spread`. If the narrowest open
//!   gap is g, then `(g − 1)·d ≤ 2·spread < g·d`; the estimate is the middle of that range,
//!   `spread = (g − ½)·d / 2`, uncertain by ±d/4.
//! - **Finest solid line** from the line ladder (t dots): reported, not stored; with the spread
//!   it tells the narrowest track the films can carry after compensation, `t·d + 2·spread`.
//! - **Exposure**: the best segment's total time on the strip.

use super::sheet::{self, Ruler};
use super::{format_time, CalibrateError};
use crate::process::Profile;
use serde::Serialize;

/// A ladder reading for both axes, or one per axis (`"3"` or `"3,4"` on the command line).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct DotsReading {
    pub x: u32,
    pub y: u32,
}

impl std::str::FromStr for DotsReading {
    type Err = String;
    fn from_str(s: &str) -> Result<DotsReading, String> {
        let parse = |t: &str| -> Result<u32, String> {
            t.trim()
                .parse::<u32>()
                .ok()
                .filter(|&v| v >= 1)
                .ok_or_else(|| {
                    format!("\"{}\" is not a whole number of dots (1 or more)", t.trim())
                })
        };
        match s.split_once(',') {
            Some((a, b)) => Ok(DotsReading {
                x: parse(a)?,
                y: parse(b)?,
            }),
            None => {
                let v = parse(s)?;
                Ok(DotsReading { x: v, y: v })
            }
        }
    }
}

/// What the user read off the printed (and exposed) sheet.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Readings {
    /// Measured length of the X ruler from 0 to its last number, mm.
    pub ruler_x_mm: Option<f64>,
    pub ruler_y_mm: Option<f64>,
    /// The nominal ruler lengths, when not those of the profile's sheet.
    pub nominal_x_mm: Option<f64>,
    pub nominal_y_mm: Option<f64>,
    /// The narrowest gap still open along its whole length, dots.
    pub open_gap: Option<DotsReading>,
    /// The narrowest line printed solid (whole, unbroken), dots.
    pub true_line: Option<DotsReading>,
    /// The exposure strip segment that came out best.
    pub best_segment: Option<u32>,
}

/// The solved values and how they were found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Solution {
    pub scale_x: Option<f64>,
    pub scale_y: Option<f64>,
    pub toner_spread_um: Option<f64>,
    pub exposure_time_s: Option<f64>,
    /// Narrowest solid line, µm as drawn, per axis.
    pub finest_line_um: Option<[f64; 2]>,
    /// One line per step of arithmetic, for the terminal.
    pub derivation: Vec<String>,
    pub warnings: Vec<String>,
}

impl Solution {
    /// The profile keys to write: (section, key, value).
    pub fn edits(&self) -> Vec<(&'static str, &'static str, f64)> {
        let mut e = Vec::new();
        if let Some(v) = self.scale_x {
            e.push(("printer", "scale_x", v));
        }
        if let Some(v) = self.scale_y {
            e.push(("printer", "scale_y", v));
        }
        if let Some(v) = self.toner_spread_um {
            e.push(("printer", "toner_spread_um", v));
        }
        if let Some(v) = self.exposure_time_s {
            e.push(("exposure", "time_s", v));
        }
        e
    }
}

/// A printer stretches or shrinks a page by 0.5–3 % (TRADE.md); a reading further than this
/// from nominal is a misreading (another tick, inches), and guessing would spoil every film.
pub const MAX_SCALE_ERROR: f64 = 0.05;

/// Scale factors are stored to 6 decimals: 1 ppm, 0.3 µm over a 300 mm film.
fn round6(v: f64) -> f64 {
    (v * 1e6).round() / 1e6
}

fn round1(v: f64) -> f64 {
    (v * 10.0).round() / 10.0
}

/// The new scale factor of one axis: `old × nominal ÷ measured`.
pub fn scale_factor(old: f64, nominal_mm: f64, measured_mm: f64) -> f64 {
    old * nominal_mm / measured_mm
}

/// Toner spread per edge (µm) from the narrowest open gap of `gap_dots` at `dpi`: the middle
/// of `[(g − 1)·d/2, g·d/2)`.
pub fn spread_from_open_gap(gap_dots: u32, dpi: f64) -> f64 {
    let d = super::dot_um(dpi);
    (gap_dots as f64 - 0.5) * d / 2.0
}

fn solve_scale(
    axis: &str,
    old: f64,
    ruler: &Ruler,
    nominal: Option<f64>,
    measured: f64,
    out: &mut Solution,
) -> Result<f64, CalibrateError> {
    let nominal = nominal.unwrap_or(ruler.length_mm);
    if !(nominal.is_finite() && nominal > 0.0) {
        return Err(CalibrateError(format!(
            "the nominal {axis} length {nominal} mm is not a length"
        )));
    }
    if !(measured.is_finite() && measured > 0.0) {
        return Err(CalibrateError(format!(
            "--ruler-{} {measured}: give the measured length in millimetres",
            axis.to_ascii_lowercase()
        )));
    }
    let error = measured / nominal - 1.0;
    if error.abs() > MAX_SCALE_ERROR {
        return Err(CalibrateError(format!(
            "the {axis} ruler measured {measured} mm against {nominal} mm nominal, {:+.1} %; printers are off by a few percent at most. Measure from the 0 tick to the {nominal:.0} mm tick, in millimetres, and check the print was made at 100 % (no fit to page)",
            100.0 * error
        )));
    }
    let new = round6(scale_factor(old, nominal, measured));
    out.derivation.push(format!(
        "scale {axis}: {nominal} mm nominal ÷ {measured} mm measured = {:.6}; × {old:.6} (the factor already in the print) = {new:.6}",
        nominal / measured
    ));
    if !(0.8..=1.25).contains(&new) {
        return Err(CalibrateError(format!(
            "the new {axis} scale factor {new:.6} is outside 0.8 to 1.25; check the reading"
        )));
    }
    if (new - old).abs() < 1e-6 {
        out.derivation
            .push(format!("  the {axis} ruler printed true: no change"));
    }
    Ok(new)
}

/// Solves what the readings allow; readings left out leave their profile values alone.
pub fn solve(profile: &Profile, r: &Readings) -> Result<Solution, CalibrateError> {
    let (rx, ry) = sheet::rulers(profile)?;
    let mut out = Solution {
        scale_x: None,
        scale_y: None,
        toner_spread_um: None,
        exposure_time_s: None,
        finest_line_um: None,
        derivation: Vec::new(),
        warnings: Vec::new(),
    };
    let pr = &profile.printer;
    if let Some(m) = r.ruler_x_mm {
        out.scale_x = Some(solve_scale(
            "X",
            pr.scale_x,
            &rx,
            r.nominal_x_mm,
            m,
            &mut out,
        )?);
    }
    if let Some(m) = r.ruler_y_mm {
        out.scale_y = Some(solve_scale(
            "Y",
            pr.scale_y,
            &ry,
            r.nominal_y_mm,
            m,
            &mut out,
        )?);
    }

    let (dpi_x, dpi_y) = (profile.dpi_x(), profile.dpi_y());
    let check_rung = |what: &str, v: u32, dpi: f64| -> Result<(), CalibrateError> {
        let n = sheet::rung_count(dpi);
        if v > n {
            return Err(CalibrateError(format!(
                "{what} {v}: the ladders at {dpi} dpi go from 1 to {n} dots"
            )));
        }
        Ok(())
    };
    if let Some(g) = r.open_gap {
        check_rung("--open-gap", g.x, dpi_x)?;
        check_rung("--open-gap", g.y, dpi_y)?;
        let mut estimates = Vec::new();
        for (axis, gap, dpi) in [("X", g.x, dpi_x), ("Y", g.y, dpi_y)] {
            let d = super::dot_um(dpi);
            let s = spread_from_open_gap(gap, dpi);
            out.derivation.push(format!(
                "toner spread {axis}: narrowest open gap {gap} dots × {d:.2} µm; the {} dot gap closed, so 2 × spread lies in [{:.1}, {:.1}) µm; spread ≈ ({gap} − ½) × {d:.2} / 2 = {s:.1} µm per edge (± {:.1})",
                gap - 1,
                (gap - 1) as f64 * d,
                gap as f64 * d,
                d / 4.0
            ));
            estimates.push(s);
        }
        let s = round1((estimates[0] + estimates[1]) / 2.0);
        if g.x != g.y || dpi_x != dpi_y {
            out.derivation.push(format!(
                "toner spread: mean of X and Y = {s:.1} µm per edge"
            ));
        }
        if g.x == 1 || g.y == 1 {
            out.warnings.push(
                "the 1-dot gap stayed open: the spread is less than half a dot and umbra's films cannot compensate it at this resolution anyway".into(),
            );
        }
        out.toner_spread_um = Some(s);
    }
    if let Some(t) = r.true_line {
        check_rung("--true-line", t.x, dpi_x)?;
        check_rung("--true-line", t.y, dpi_y)?;
        let wx = t.x as f64 * super::dot_um(dpi_x);
        let wy = t.y as f64 * super::dot_um(dpi_y);
        out.finest_line_um = Some([wx, wy]);
        let spread = out.toner_spread_um.unwrap_or(pr.toner_spread_um);
        let finest = wx.max(wy);
        out.derivation.push(format!(
            "finest solid line: X {} dots = {wx:.0} µm, Y {} dots = {wy:.0} µm as drawn (not stored in the profile)",
            t.x, t.y
        ));
        out.derivation.push(format!(
            "  films shrink black by the spread, so the narrowest track that still prints solid is about {finest:.0} + 2 × {spread:.1} = {:.0} µm",
            finest + 2.0 * spread
        ));
    }
    if let Some(k) = r.best_segment {
        let e = &profile.exposure;
        let times = e.segment_times().map_err(CalibrateError)?;
        if k == 0 || k as usize > times.len() {
            return Err(CalibrateError(format!(
                "--best-segment {k}: the strip has segments 1 to {}",
                times.len()
            )));
        }
        let t = times[k as usize - 1];
        let ratio = (e.max_s / e.min_s).powf(1.0 / (times.len() - 1) as f64);
        out.derivation.push(format!(
            "exposure: segment {k} of {} ({} to {}, × {ratio:.3} per segment) had {} in total → {t} s",
            times.len(),
            format_time(e.min_s),
            format_time(e.max_s),
            format_time(t)
        ));
        if k == 1 || k as usize == times.len() {
            out.warnings.push(format!(
                "the best segment is at the {} end of the strip, so the right time may lie beyond it: set [exposure] {} and expose another strip",
                if k == 1 { "short" } else { "long" },
                if k == 1 {
                    format!("min_s = {}", round1(e.min_s / 2.0))
                } else {
                    format!("max_s = {}", round1((e.max_s * 2.0).min(super::MAX_EXPOSURE_S)))
                }
            ));
        }
        out.exposure_time_s = Some(t);
    }
    if out.edits().is_empty() && out.finest_line_um.is_none() {
        return Err(CalibrateError(
            "nothing to solve: give at least one reading (--ruler-x, --ruler-y, --open-gap, --true-line, --best-segment)".into(),
        ));
    }
    Ok(out)
}
