//! Calibration of the printer and the process: a test sheet (`umbra calibrate sheet`) and a
//! solver that turns the user's readings of it into profile values (`umbra calibrate solve`).
//!
//! - [`sheet`]: the calibration film: long rulers (scale), line and gap ladders in whole
//!   device dots (toner spread), fine features (resolution after etching), an exposure strip
//!   with its schedule, and a label with the settings and instructions.
//! - [`solve`]: readings → scale factors, toner spread, exposure time, each with its
//!   derivation; see `docs/calibration.md` for the formulas.
//! - [`edit`]: writes solved values into the user's TOML profile in place, keeping comments
//!   and every other key, with a backup of the previous file.
//!
//! This module also owns the profile's `[exposure]` section ([`ExposureSection`]).

pub mod cli;
mod draw;
pub mod edit;
mod features;
pub mod sheet;
pub mod solve;

use serde::{Deserialize, Serialize};

/// Why a calibration step could not be done, in words for the user.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{0}")]
pub struct CalibrateError(pub String);

/// The profile's `[exposure]` section: the range the calibration sheet's exposure strip
/// spans, and the exposure time the user found with it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ExposureSection {
    /// Total exposure of the strip's first (shortest) segment, seconds.
    pub min_s: f64,
    /// Total exposure of the strip's last (longest) segment, seconds.
    pub max_s: f64,
    /// Number of segments on the strip (2 to 12).
    pub segments: u32,
    /// The exposure time found with the strip, seconds (written by `calibrate solve`).
    pub time_s: Option<f64>,
}

impl Default for ExposureSection {
    /// 30 s to 240 s in 7 segments: each segment gets √2 times the exposure of the one before
    /// (240/30 = 8 = √2⁶), the step of a photographic step tablet (TRADE.md: "a 21-step
    /// tablet changes exposure by about √2 per step").
    fn default() -> Self {
        ExposureSection {
            min_s: 30.0,
            max_s: 240.0,
            segments: 7,
            time_s: None,
        }
    }
}

/// One device dot in µm: 25 400 µm per inch (the inch is 25.4 mm exactly).
pub fn dot_um(dpi: f64) -> f64 {
    25_400.0 / dpi
}

/// Most segments a strip may have: more would make each too narrow to cover by hand.
pub const MAX_SEGMENTS: u32 = 12;
/// Longest exposure the strip may span, seconds (one hour).
pub const MAX_EXPOSURE_S: f64 = 3600.0;

/// One step of the exposure schedule printed beside the strip.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ScheduleStep {
    /// 1-based step number.
    pub step: u32,
    /// The segment uncovered at the start of this step (the first step uncovers the last
    /// segment, which so receives every step's light).
    pub uncover: u32,
    /// How long to expose in this step, seconds.
    pub expose_s: f64,
    /// Total exposure time so far (the lamp's running time), seconds.
    pub elapsed_s: f64,
}

/// Rounds an exposure time the way it is printed: whole seconds from 10 s up, tenths below
/// (a kitchen timer resolves a second; short exposures need finer steps).
pub fn round_time(t: f64) -> f64 {
    if t >= 10.0 {
        t.round()
    } else {
        (t * 10.0).round() / 10.0
    }
}

/// A time for people: "85 s", "7.5 s", "2 min 40 s".
pub fn format_time(t: f64) -> String {
    let t = round_time(t);
    if t >= 120.0 {
        let m = (t / 60.0).floor();
        let s = t - 60.0 * m;
        if s == 0.0 {
            format!("{m:.0} min")
        } else {
            format!("{m:.0} min {s:.0} s")
        }
    } else if t >= 10.0 {
        format!("{t:.0} s")
    } else {
        format!("{t:.1} s")
    }
}

impl ExposureSection {
    /// Checks the ranges (the profile loader leaves this section to the calibration code).
    pub fn validate(&self) -> Result<(), String> {
        let ok = |v: f64| v.is_finite() && v > 0.0 && v <= MAX_EXPOSURE_S;
        if !ok(self.min_s) || !ok(self.max_s) {
            return Err(format!(
                "exposure.min_s = {} and exposure.max_s = {} must be between 0 and {MAX_EXPOSURE_S} seconds",
                self.min_s, self.max_s
            ));
        }
        if self.max_s <= self.min_s {
            return Err(format!(
                "exposure.max_s = {} must be longer than exposure.min_s = {}",
                self.max_s, self.min_s
            ));
        }
        if !(2..=MAX_SEGMENTS).contains(&self.segments) {
            return Err(format!(
                "exposure.segments = {} must be between 2 and {MAX_SEGMENTS}",
                self.segments
            ));
        }
        if let Some(t) = self.time_s {
            if !ok(t) {
                return Err(format!(
                    "exposure.time_s = {t} must be between 0 and {MAX_EXPOSURE_S} seconds"
                ));
            }
        }
        Ok(())
    }

    /// The total exposure of each segment, seconds, segment 1 first: a geometric series from
    /// `min_s` to `max_s` (equal ratios, as a step tablet), rounded as printed
    /// ([`round_time`]). The strip and the solver both use these printed values.
    pub fn segment_times(&self) -> Result<Vec<f64>, String> {
        self.validate()?;
        let n = self.segments as usize;
        let ratio = self.max_s / self.min_s;
        let times: Vec<f64> = (0..n)
            .map(|k| round_time(self.min_s * ratio.powf(k as f64 / (n - 1) as f64)))
            .collect();
        if times.windows(2).any(|w| w[1] <= w[0]) {
            return Err(format!(
                "the exposure range {} to {} s is too narrow for {} segments: two segments would get the same time; widen the range or use fewer segments",
                self.min_s, self.max_s, self.segments
            ));
        }
        Ok(times)
    }

    /// The steps that give every segment its total time: all segments covered but the last,
    /// expose; uncover the next lower one, expose; … The first step lasts
    /// `t_n − t_(n−1)`, the last (uncovering segment 1) lasts `t_1`, so segment k is lit
    /// from its uncovering to the end: `t_k` in total.
    pub fn schedule(&self) -> Result<Vec<ScheduleStep>, String> {
        let times = self.segment_times()?;
        let n = times.len();
        let mut elapsed = 0.0;
        let mut steps = Vec::with_capacity(n);
        for i in 0..n {
            // Step i+1 uncovers segment n−i (1-based), i.e. times[n−1−i].
            let k = n - 1 - i;
            let below = if k == 0 { 0.0 } else { times[k - 1] };
            let expose = times[k] - below;
            elapsed += expose;
            steps.push(ScheduleStep {
                step: i as u32 + 1,
                uncover: k as u32 + 1,
                expose_s: round_time_exact(expose),
                elapsed_s: round_time_exact(elapsed),
            });
        }
        Ok(steps)
    }
}

/// Removes floating-point noise from a difference of printed times (both have at most one
/// decimal), without changing its value.
fn round_time_exact(t: f64) -> f64 {
    (t * 10.0).round() / 10.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn default_strip_steps_by_root_two() {
        // 30·√2^k for k = 0..6: 30, 42.43, 60, 84.85, 120, 169.7, 240 (hand arithmetic),
        // rounded to whole seconds.
        let t = ExposureSection::default().segment_times().unwrap();
        assert_eq!(t, vec![30.0, 42.0, 60.0, 85.0, 120.0, 170.0, 240.0]);
    }

    #[test]
    fn schedule_gives_every_segment_its_total() {
        let e = ExposureSection::default();
        let times = e.segment_times().unwrap();
        let steps = e.schedule().unwrap();
        // Segment k is lit in every step from the one that uncovers it to the end.
        for (k, want) in times.iter().enumerate() {
            let seg = k as u32 + 1;
            let first = steps.iter().position(|s| s.uncover == seg).unwrap();
            let total: f64 = steps[first..].iter().map(|s| s.expose_s).sum();
            assert!(
                (total - want).abs() < 1e-9,
                "segment {seg}: {total} vs {want}"
            );
        }
        assert_eq!(steps[0].uncover, 7);
        assert_eq!(steps[0].expose_s, 70.0); // 240 − 170
        assert_eq!(steps.last().unwrap().elapsed_s, 240.0);
    }

    #[test]
    fn narrow_ranges_and_bad_values_are_refused() {
        let e = ExposureSection {
            min_s: 10.0,
            max_s: 11.0,
            segments: 12,
            time_s: None,
        };
        assert!(e.segment_times().unwrap_err().contains("too narrow"));
        for bad in [
            ExposureSection {
                min_s: 0.0,
                ..Default::default()
            },
            ExposureSection {
                max_s: 20.0,
                ..Default::default()
            },
            ExposureSection {
                segments: 1,
                ..Default::default()
            },
            ExposureSection {
                time_s: Some(f64::NAN),
                ..Default::default()
            },
        ] {
            assert!(bad.validate().is_err(), "{bad:?}");
        }
    }

    #[test]
    fn times_read_as_people_write_them() {
        assert_eq!(format_time(85.0), "85 s");
        assert_eq!(format_time(7.46), "7.5 s");
        assert_eq!(format_time(160.0), "2 min 40 s");
        assert_eq!(format_time(240.0), "4 min");
    }
}
