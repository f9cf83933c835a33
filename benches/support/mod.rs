//! Timing helpers shared by the benchmarks (wall and CPU time, load average).

use std::time::Instant;

/// Wall time of the fastest of `runs` runs, and the process CPU time (all threads) of that
/// run, in seconds.
pub fn best_s<T>(runs: usize, mut f: impl FnMut() -> T) -> (f64, f64, T) {
    let mut best = (f64::INFINITY, f64::NAN);
    let mut last = None;
    for _ in 0..runs {
        let (t, c) = (Instant::now(), cpu_s());
        let v = f();
        let wall = t.elapsed().as_secs_f64();
        if wall < best.0 {
            best = (wall, cpu_s() - c);
        }
        last = Some(v);
    }
    (best.0, best.1, last.expect("at least one run"))
}

/// [`best_s`] of two jobs run in turn, `rounds` times each (f, g, f, g, …): both see the
/// machine as it is during the same seconds, which a shared machine's changing speed
/// would otherwise tilt.
#[allow(dead_code)] // not every benchmark compares two jobs
pub fn best_in_turn<T, U>(
    rounds: usize,
    mut f: impl FnMut() -> T,
    mut g: impl FnMut() -> U,
) -> ((f64, f64, T), (f64, f64, U)) {
    let (mut a, mut b) = (None, None);
    for _ in 0..rounds {
        let x = best_s(1, &mut f);
        if a.as_ref().is_none_or(|p: &(f64, f64, T)| x.0 < p.0) {
            a = Some(x);
        }
        let y = best_s(1, &mut g);
        if b.as_ref().is_none_or(|p: &(f64, f64, U)| y.0 < p.0) {
            b = Some(y);
        }
    }
    (
        a.expect("at least one round"),
        b.expect("at least one round"),
    )
}

/// User + system CPU time of this process, all threads, seconds (proc(5): fields 14 and 15
/// of /proc/self/stat, in clock ticks of 1/100 s on Linux).
pub fn cpu_s() -> f64 {
    let Ok(s) = std::fs::read_to_string("/proc/self/stat") else {
        return f64::NAN;
    };
    // Fields after the command name in parentheses start with field 3 (state).
    let rest = s.rsplit_once(')').map(|(_, r)| r).unwrap_or("");
    let f: Vec<f64> = rest
        .split_whitespace()
        .map(|t| t.parse().unwrap_or(f64::NAN))
        .collect();
    match (f.get(11), f.get(12)) {
        (Some(u), Some(s)) => (u + s) / 100.0,
        _ => f64::NAN,
    }
}

/// The 1-minute load average: the machine is shared, so wall times are only meaningful next
/// to it.
pub fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .ok()
        .and_then(|s| s.split_whitespace().next().map(str::to_string))
        .unwrap_or_else(|| "?".into())
}
