//! `umbra inspect`: what each input file is, as umbra understood it.

use crate::image::{Bounds, ImageStats};
use crate::load::{Board, Content};
use serde::Serialize;

/// Holes and slots of one drill tool.
#[derive(Debug, Clone, Serialize)]
pub struct ToolReport {
    pub tool: u32,
    pub diameter_mm: f64,
    pub plated: Option<bool>,
    pub holes: usize,
    pub slots: usize,
}

/// One file as understood.
#[derive(Debug, Clone, Serialize)]
pub struct FileReport {
    pub name: String,
    /// "gerber", "drill", "job" or "other".
    pub kind: &'static str,
    /// e.g. "copper top"; None when the file is not a layer or could not be identified.
    pub layer: Option<String>,
    /// Where the identity came from: "attribute", "file name", "content" or "job file".
    pub identified_by: Option<String>,
    pub units: Option<&'static str>,
    pub extents_mm: Option<Bounds>,
    pub counts: Option<ImageStats>,
    pub objects: Option<usize>,
    pub tools: Vec<ToolReport>,
    pub note: Option<String>,
    pub warnings: Vec<String>,
}

/// The whole inspection.
#[derive(Debug, Clone, Serialize)]
pub struct InspectReport {
    pub board_name: Option<String>,
    pub files: Vec<FileReport>,
    pub warnings: Vec<String>,
}

pub fn report(board: &Board) -> InspectReport {
    let files = board
        .files
        .iter()
        .map(|f| {
            let mut r = FileReport {
                name: f.name.clone(),
                kind: "other",
                layer: f.id.as_ref().map(|id| id.to_string()),
                identified_by: f.id.as_ref().map(|id| id.source.to_string()),
                units: None,
                extents_mm: None,
                counts: None,
                objects: None,
                tools: Vec::new(),
                note: None,
                warnings: Vec::new(),
            };
            match &f.content {
                Content::Gerber(g) => {
                    r.kind = "gerber";
                    r.units = g.units.map(|u| match u {
                        crate::gerber::Units::Millimetres => "mm",
                        crate::gerber::Units::Inches => "inch",
                    });
                    let b = g.image.bounds();
                    r.extents_mm = (!b.is_empty()).then_some(b);
                    r.counts = Some(g.image.stats.clone());
                    r.objects = Some(g.image.objects.len());
                    r.warnings = g.warnings.iter().map(|w| w.to_string()).collect();
                }
                Content::Drill(d) => {
                    r.kind = "drill";
                    r.units = Some(if d.inches { "inch" } else { "mm" });
                    let mut b = Bounds::EMPTY;
                    for h in &d.holes {
                        b.add_circle(h.at, d.tools[h.tool].diameter_mm / 2.0);
                    }
                    for s in &d.slots {
                        for p in &s.path {
                            b.add_circle(*p, d.tools[s.tool].diameter_mm / 2.0);
                        }
                    }
                    r.extents_mm = (!b.is_empty()).then_some(b);
                    r.tools = d
                        .tools
                        .iter()
                        .enumerate()
                        .map(|(i, t)| ToolReport {
                            tool: t.number,
                            diameter_mm: t.diameter_mm,
                            plated: t.plated,
                            holes: d.holes.iter().filter(|h| h.tool == i).count(),
                            slots: d.slots.iter().filter(|s| s.tool == i).count(),
                        })
                        .collect();
                    r.warnings = d.warnings.iter().map(|w| w.to_string()).collect();
                }
                Content::Job => {
                    r.kind = "job";
                    r.note = Some("Gerber job file (layer list)".into());
                }
                Content::Other { why } => r.note = Some(why.clone()),
            }
            r
        })
        .collect();
    InspectReport {
        board_name: board.job_name.clone(),
        files,
        warnings: board.warnings.iter().map(|w| w.to_string()).collect(),
    }
}

fn extents_text(b: &Option<Bounds>) -> String {
    match b {
        Some(b) => format!(
            "{:.2} x {:.2} at ({:.2}, {:.2})",
            b.width(),
            b.height(),
            b.min_x,
            b.min_y
        ),
        None => "-".into(),
    }
}

fn counts_text(r: &FileReport) -> String {
    if let Some(c) = &r.counts {
        format!(
            "{} apertures, {} flashes, {} strokes ({} arcs), {} regions, {} clear",
            c.apertures, c.flashes, c.strokes, c.arcs, c.regions, c.clear_objects
        )
    } else if r.kind == "drill" {
        let holes: usize = r.tools.iter().map(|t| t.holes).sum();
        let slots: usize = r.tools.iter().map(|t| t.slots).sum();
        let sizes: Vec<String> = r
            .tools
            .iter()
            .filter(|t| t.holes + t.slots > 0)
            .map(|t| {
                if t.slots > 0 {
                    format!("{:.2}x{}+{}slot", t.diameter_mm, t.holes, t.slots)
                } else {
                    format!("{:.2}x{}", t.diameter_mm, t.holes)
                }
            })
            .collect();
        format!(
            "{} tools, {} holes, {} slots: {}",
            r.tools.len(),
            holes,
            slots,
            sizes.join(" ")
        )
    } else {
        r.note.clone().unwrap_or_default()
    }
}

/// Short display name: the part after the last folder separator.
fn short_name(name: &str) -> &str {
    let after_zip = name.rsplit(':').next().unwrap_or(name);
    after_zip.rsplit(['/', '\\']).next().unwrap_or(after_zip)
}

/// The report as an aligned text table, then the warnings.
pub fn to_text(r: &InspectReport) -> String {
    let mut rows: Vec<[String; 6]> = vec![[
        "file".into(),
        "kind".into(),
        "layer (from)".into(),
        "units".into(),
        "extents mm (w x h at min corner)".into(),
        "contents".into(),
    ]];
    for f in &r.files {
        let layer = match (&f.layer, &f.identified_by) {
            (Some(l), Some(by)) => format!("{l} ({by})"),
            (Some(l), None) => l.clone(),
            _ => "-".into(),
        };
        rows.push([
            short_name(&f.name).to_string(),
            f.kind.to_string(),
            layer,
            f.units.unwrap_or("-").to_string(),
            extents_text(&f.extents_mm),
            counts_text(f),
        ]);
    }
    let mut widths = [0usize; 6];
    for row in &rows {
        for (w, c) in widths.iter_mut().zip(row.iter()) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out = String::new();
    if let Some(n) = &r.board_name {
        out.push_str(&format!("board: {n}\n"));
    }
    for row in &rows {
        let mut line = String::new();
        for (i, (c, w)) in row.iter().zip(widths.iter()).enumerate() {
            if i + 1 == row.len() {
                line.push_str(c);
            } else {
                line.push_str(&format!("{c:<w$}  "));
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    let n_warn: usize = r.files.iter().map(|f| f.warnings.len()).sum::<usize>() + r.warnings.len();
    if n_warn > 0 {
        out.push_str(&format!("\n{n_warn} warning(s):\n"));
        for w in &r.warnings {
            out.push_str(&format!("  {w}\n"));
        }
        for f in &r.files {
            for w in &f.warnings {
                out.push_str(&format!("  {w}\n"));
            }
        }
    }
    out
}
