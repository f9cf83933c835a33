//! The check as text: statistics per film, the findings table and what to do about each kind.

use super::{CheckReport, FindingKind};

/// Short name of a kind, as in the table.
pub fn kind_words(kind: FindingKind) -> &'static str {
    match kind {
        FindingKind::ThinCopper => "copper too narrow",
        FindingKind::NarrowGap => "gap too narrow",
        FindingKind::CopperVanishes => "copper lost on film",
        FindingKind::GapCloses => "clearance lost on film",
        FindingKind::CopperJoined => "gap closed on film",
        FindingKind::ThinRing => "annular ring too small",
        FindingKind::ThinMaskWeb => "mask web too narrow",
    }
}

/// What the user can change, in the design or in the process, for a kind of finding.
pub fn kind_advice(kind: FindingKind) -> &'static str {
    match kind {
        FindingKind::ThinCopper => {
            "widen the track or pad in the design; if it is wide enough there, the film's edge \
             compensation shrinks it: check undercut_um and toner_spread_um in the profile"
        }
        FindingKind::NarrowGap => {
            "give the copper more clearance in the design (track spacing, pour clearance); if \
             the design gap is fine, the compensation closes it: check exposure_spread_um and \
             the copper extra_um"
        }
        FindingKind::CopperVanishes => {
            "the drawn copper is finer than the film can show at this resolution (or the \
             compensation eats it): draw it wider or print at a higher resolution"
        }
        FindingKind::GapCloses => {
            "a drawn clearance is finer than the film can show (or the compensation fills it): \
             widen it in the design or print at a higher resolution"
        }
        FindingKind::CopperJoined => {
            "two separately drawn pieces of copper come so close (the design gap is in the \
             'measured' column) that the film joins them and the board will short them: move \
             them apart in the design, print at a higher resolution, or, if the edge growth \
             closes it, lower exposure_spread_um and the copper extra_um"
        }
        FindingKind::ThinRing => {
            "use a larger pad or a smaller drill; where the drill-centre mark is larger than the \
             drill, its etched dot eats the ring too: set drill_marks.pilot_diameter_mm below \
             the smallest drill (or style = \"none\")"
        }
        FindingKind::ThinMaskWeb => {
            "the mask between these openings will flake off: one opening over the whole row of \
             pads, or less mask expansion in the design"
        }
    }
}

fn mm(v: Option<f64>, below: f64) -> String {
    match v {
        Some(v) => format!("{v:.3} mm"),
        None if below > 0.0 => format!(">= {below:.2} mm"),
        None => "-".into(),
    }
}

/// Lays out rows as left-aligned columns.
fn table(rows: &[Vec<String>]) -> String {
    let mut widths = vec![0usize; rows.first().map_or(0, |r| r.len())];
    for r in rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out = String::new();
    for r in rows {
        let mut line = String::new();
        for (c, w) in r.iter().zip(&widths) {
            line.push_str(c);
            line.push_str(&" ".repeat(w - c.chars().count() + 2));
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

/// The check report for the terminal.
pub fn check_text(r: &CheckReport) -> String {
    let l = &r.limits;
    let mut s = format!(
        "process check: copper >= {:.2} mm, gap >= {:.2} mm, annular ring >= {:.2} mm, mask web >= {:.2} mm\n\
         board {:.2} x {:.2} mm\n\n",
        l.min_copper_width_mm,
        l.min_gap_mm,
        l.min_annular_ring_mm,
        l.min_mask_web_mm,
        r.board_mm[0],
        r.board_mm[1]
    );
    let mut rows = vec![vec![
        "film".to_string(),
        "copper area (etchant load)".into(),
        "narrowest copper".into(),
        "narrowest gap / web".into(),
        "findings".into(),
    ]];
    for f in &r.films {
        let copper = match (f.copper_area_mm2, f.copper_percent) {
            (Some(a), Some(p)) => format!("{a:.1} mm² ({p:.1} % of board)"),
            (Some(a), None) => format!("{a:.1} mm²"),
            _ => "-".into(),
        };
        let is_copper = f.copper_area_mm2.is_some();
        rows.push(vec![
            f.layer.clone(),
            copper,
            if is_copper {
                mm(f.smallest_width_mm, f.measured_below_mm)
            } else {
                "-".into()
            },
            mm(f.smallest_gap_mm, f.measured_below_mm),
            f.findings.to_string(),
        ]);
    }
    s.push_str(&table(&rows));
    // A narrowest value a little under a limit with no finding: say why, or the table looks
    // as if the check missed it.
    let under_without_finding = r.films.iter().any(|f| {
        let limit_of_gap = if f.copper_area_mm2.is_some() {
            l.min_gap_mm
        } else {
            l.min_mask_web_mm
        };
        f.findings == 0
            && (f
                .smallest_width_mm
                .is_some_and(|w| w < l.min_copper_width_mm)
                || f.smallest_gap_mm.is_some_and(|g| g < limit_of_gap))
    });
    if under_without_finding {
        let px = r
            .films
            .iter()
            .map(|f| 25.4 / f.dpi[0].min(f.dpi[1]))
            .fold(0.0, f64::max);
        s.push_str(&format!(
            "(widths are measured on the film's pixels, to within about half a pixel ({:.3} mm here); \
             a narrowest value that close to its limit is not reported)\n",
            px / 2.0
        ));
    }
    if r.findings.is_empty() {
        s.push_str("\nno findings: the films keep every limit\n");
    } else {
        let mut rows = vec![vec![
            "#".to_string(),
            "film".into(),
            "finding".into(),
            "at x, y (mm)".into(),
            "measured".into(),
            "limit".into(),
            "drawn".into(),
        ]];
        for f in &r.findings {
            rows.push(vec![
                f.number.to_string(),
                f.layer.clone(),
                kind_words(f.kind).to_string(),
                format!("{:.2}, {:.2}", f.at_mm.x, f.at_mm.y),
                format!("{:.3} mm", f.width_mm),
                format!("{:.2} mm", f.limit_mm),
                match (f.kind, f.drawn_mm) {
                    (FindingKind::ThinRing, Some(d)) => match f.mark_mm {
                        Some(m) if m > d => format!("hole {d:.2} mm, mark {m:.2} mm"),
                        _ => format!("hole {d:.2} mm"),
                    },
                    (_, Some(d)) => format!("{d:.4} mm"),
                    _ => String::new(),
                },
            ]);
        }
        s.push('\n');
        s.push_str(&table(&rows));
        let hidden: usize = r.films.iter().map(|f| f.findings_not_listed).sum();
        if hidden > 0 {
            s.push_str(&format!(
                "({hidden} more finding(s) of the same kinds not listed; the narrowest of each kind are shown)\n"
            ));
        }
        s.push_str("\nwhat to do:\n");
        let mut kinds: Vec<FindingKind> = r.findings.iter().map(|f| f.kind).collect();
        kinds.sort();
        kinds.dedup();
        for k in kinds {
            let n = r.findings.iter().filter(|f| f.kind == k).count();
            s.push_str(&format!(
                "  {} ({n} listed): {}\n",
                kind_words(k),
                kind_advice(k)
            ));
        }
    }
    if let Some(p) = &r.proof {
        s.push_str(&format!(
            "\nproof picture: {} ({} x {} px, {:.1} px/mm; findings circled and numbered)\n",
            p.file, p.size_px[0], p.size_px[1], p.px_per_mm
        ));
    }
    s
}

/// One line for the `films` summary.
pub fn check_line(r: &CheckReport) -> String {
    let n = r.total_findings();
    if n == 0 {
        "process check: no findings".to_string()
    } else {
        let mut kinds: Vec<FindingKind> = r.findings.iter().map(|f| f.kind).collect();
        kinds.sort();
        kinds.dedup();
        let words: Vec<&str> = kinds.into_iter().map(kind_words).collect();
        format!(
            "process check: {n} finding(s) ({}); run `umbra check` for the table",
            words.join(", ")
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::{FilmCheck, ProcessLimits};

    fn report(gap_mm: f64, findings: usize) -> CheckReport {
        CheckReport {
            limits: ProcessLimits::default(),
            board_mm: [50.0, 40.0],
            films: vec![FilmCheck {
                film: "copper-bottom".into(),
                layer: "copper bottom".into(),
                dpi: [300.0, 300.0],
                copper_area_mm2: Some(100.0),
                copper_percent: Some(5.0),
                smallest_width_mm: None,
                smallest_gap_mm: Some(gap_mm),
                measured_below_mm: 0.3,
                findings,
                findings_not_listed: 0,
            }],
            findings: Vec::new(),
            proof: None,
        }
    }

    #[test]
    fn a_narrowest_value_under_the_limit_without_finding_is_explained() {
        // 300 dpi: a pixel is 25.4 / 300 = 0.0847 mm, half of it 0.042 mm (the international
        // inch is exactly 25.4 mm). The default gap limit is 0.2 mm (common practice).
        let text = check_text(&report(0.189, 0));
        assert!(text.contains("half a pixel (0.042 mm here)"), "{text}");
        // At or above the limit there is nothing to explain.
        let text = check_text(&report(0.21, 0));
        assert!(!text.contains("half a pixel"), "{text}");
    }
}
