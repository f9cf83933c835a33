//! The process check: what the rendered, compensated films will actually make, measured
//! against the user's process limits, before a board is wasted.
//!
//! Every check runs on the film's pixels after composition and edge offset (what will be
//! printed), turned back into *material* terms (copper, or mask opening). See
//! `docs/check.md` for the method and its limits.
//!
//! - Copper narrower than `min_copper_width_mm`: what a morphological opening with a disc of
//!   that diameter removes, kept only where it joins copper (or is an island), then measured
//!   (`measure.rs`); convex corners, which an opening also rounds, are not reported.
//! - Gaps narrower than `min_gap_mm`: the same on the complement (a closing of the copper).
//! - Copper that vanishes entirely (a drawn object with no pixel on the film) and clearances
//!   that close entirely (a drawn clear object with no clear pixel), from the layer image.
//! - Annular rings: the copper left around each drill hole after the drill-centre mark and
//!   the drill itself.
//! - Solder-mask films: mask webs between openings narrower than `min_mask_web_mm`.
//!
//! Residue pixels are grouped into 8-connected components, and components of one kind closer
//! than the disc's diameter are merged, so one long thin track is one finding.

mod area;
pub mod cli;
mod joins;
mod measure;
mod objects;
mod pieces;
mod report;

pub use report::{check_line, check_text, kind_advice, kind_words};

use crate::excellon::DrillFile;
use crate::image::{Bounds, LayerImage, Point};
use crate::layers::LayerFunction;
use crate::process::FilmRecipe;
use crate::raster::morphology::{self, Pitch};
use crate::raster::{Bitmap, DeviceMap};
use area::Area;
use measure::{and_not, components, crop, inverted, Labels, Probe};
use objects::{hole_sites, ring_of, vanished, HoleSite};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// The smallest features the user's process makes reliably. The defaults are common practice
/// for home etching with toner-transfer or photoresist films (not a measured value of any
/// particular process; measure your own).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ProcessLimits {
    /// Narrowest copper (track, pad neck) that survives etching, mm.
    pub min_copper_width_mm: f64,
    /// Narrowest gap between copper that etches clean, mm.
    pub min_gap_mm: f64,
    /// Smallest copper ring left around a drilled hole, mm.
    pub min_annular_ring_mm: f64,
    /// Narrowest solder-mask web between two mask openings that stays on the board, mm.
    pub min_mask_web_mm: f64,
    /// Resolution of the proof picture, pixels per mm.
    pub proof_px_per_mm: f64,
}

impl Default for ProcessLimits {
    fn default() -> Self {
        ProcessLimits {
            min_copper_width_mm: 0.2,
            min_gap_mm: 0.2,
            min_annular_ring_mm: 0.15,
            min_mask_web_mm: 0.15,
            proof_px_per_mm: 20.0,
        }
    }
}

impl ProcessLimits {
    /// Checks value ranges that TOML types cannot express.
    pub fn validate(&self) -> Result<(), String> {
        for (k, v) in [
            ("limits.min_copper_width_mm", self.min_copper_width_mm),
            ("limits.min_gap_mm", self.min_gap_mm),
            ("limits.min_annular_ring_mm", self.min_annular_ring_mm),
            ("limits.min_mask_web_mm", self.min_mask_web_mm),
        ] {
            if !(v.is_finite() && (0.0..=5.0).contains(&v)) {
                return Err(format!(
                    "{k} = {v} must be between 0 and 5 mm (0 turns the check off)"
                ));
            }
        }
        let p = self.proof_px_per_mm;
        if !(p.is_finite() && (2.0..=100.0).contains(&p)) {
            return Err(format!(
                "limits.proof_px_per_mm = {p} must be between 2 and 100 pixels per mm"
            ));
        }
        Ok(())
    }
}

/// What a finding is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FindingKind {
    /// Copper narrower than the minimum width.
    ThinCopper,
    /// A gap between copper narrower than the minimum.
    NarrowGap,
    /// A drawn copper object that leaves no pixel on the film.
    CopperVanishes,
    /// A drawn clearance that leaves no clear pixel on the film.
    GapCloses,
    /// Copper pieces separate in the design are one piece on the film: the gap between them
    /// closed entirely (narrower than a pixel, or filled by the edge growth).
    CopperJoined,
    /// Less copper ring around a hole than the minimum.
    ThinRing,
    /// A solder-mask web between openings narrower than the minimum.
    ThinMaskWeb,
}

/// One place where the films will not make what the design asks for.
#[derive(Debug, Clone, Serialize)]
pub struct Finding {
    /// 1-based, as in the table and on the proof picture.
    pub number: usize,
    pub kind: FindingKind,
    /// Film key, e.g. "copper-top".
    pub film: String,
    /// Film title, e.g. "copper top".
    pub layer: String,
    /// Where, board mm (seen from the top, as in the design).
    pub at_mm: Point,
    /// The measured width (copper, gap, ring or web) on the film, mm; 0 when it vanished.
    pub width_mm: f64,
    /// The limit it falls short of, mm.
    pub limit_mm: f64,
    /// Size of the affected area (width, height), mm.
    pub extent_mm: [f64; 2],
    /// The drawn size, when known from the layer image (vanishing objects) or the drill file
    /// (the hole diameter, for rings), mm.
    pub drawn_mm: Option<f64>,
    /// For rings: the drill-centre mark's diameter on the film, mm (the copper under a mark
    /// larger than the drill is etched away too).
    pub mark_mm: Option<f64>,
}

/// Statistics and the smallest features of one film.
#[derive(Debug, Clone, Serialize)]
pub struct FilmCheck {
    pub film: String,
    pub layer: String,
    pub dpi: [f64; 2],
    /// Copper on the board (copper films), mm²: the etchant's load is the rest.
    pub copper_area_mm2: Option<f64>,
    /// Copper as a percentage of the board's box.
    pub copper_percent: Option<f64>,
    /// The narrowest copper measured (copper films), mm; `None` when nothing narrower than
    /// about `measured_below_mm` was found (features a little wider may be measured too).
    pub smallest_width_mm: Option<f64>,
    /// The narrowest gap (copper films) or mask web (mask films) measured, mm.
    pub smallest_gap_mm: Option<f64>,
    /// The limit below which features are looked for; "at least this" when none was found.
    pub measured_below_mm: f64,
    pub findings: usize,
    /// Findings found but not listed (the list keeps the worst of each kind).
    pub findings_not_listed: usize,
}

/// The whole check of one board.
#[derive(Debug, Clone, Serialize)]
pub struct CheckReport {
    pub limits: ProcessLimits,
    /// Board extents, mm (width, height).
    pub board_mm: [f64; 2],
    pub films: Vec<FilmCheck>,
    pub findings: Vec<Finding>,
    /// The proof picture, when one was written.
    pub proof: Option<crate::proof::ProofInfo>,
}

impl CheckReport {
    /// Findings in all (including those not listed).
    pub fn total_findings(&self) -> usize {
        self.films.iter().map(|f| f.findings).sum()
    }
}

/// One film to check.
#[derive(Debug, Clone, Copy)]
pub struct FilmInput<'a> {
    pub key: &'a str,
    pub title: &'a str,
    pub function: LayerFunction,
    /// The final film, bit 1 = black.
    pub film: &'a Bitmap,
    pub map: &'a DeviceMap,
    pub recipe: &'a FilmRecipe,
    /// The layer image the film was made from (for vanishing objects and closed gaps).
    pub image: Option<&'a LayerImage>,
    /// Drill files whose holes sit on this film (copper films).
    pub drills: &'a [&'a DrillFile],
}

/// How far beyond the board's extents the check looks, mm: the film keeps layer artwork up
/// to 0.5 mm beyond (compose::BOARD_CLIP_MARGIN_MM); targets and label lie further out and
/// are not checked.
const BOARD_MARGIN_MM: f64 = 0.5;
/// Widths are measured up to this multiple of the limit; wider samples count as not thin.
const MEASURE_FACTOR: f64 = 1.5;
/// Findings listed per kind and film (the narrowest first).
const MAX_LISTED: usize = 100;
/// Residue pixels examined per film and kind at most (bounds time on pathological input).
const MAX_RESIDUE_PIXELS: usize = 20_000_000;
/// Pixels measured per component at most (evenly spread).
const SAMPLES_PER_COMPONENT: usize = 16;
/// A component's width is this percentile of its sampled widths: the median (see `thin_parts`).
const WIDTH_PERCENTILE: usize = 50;

/// A thin part found in one space, in crop pixel coordinates.
#[derive(Debug, Clone)]
struct Thin {
    /// Where to report it (crop pixel coordinates): the centroid when it lies on the part,
    /// else the part's pixel nearest to it (a curved track's centroid can be beside it).
    at: (f64, f64),
    bbox: (u32, u32, u32, u32),
    width_mm: f64,
}

/// The disc radius (µm, board pixels) whose digital disc is at least `min_mm` across along
/// both axes: the smallest odd pixel count not below the limit.
fn disc_radius_um(min_mm: f64, mm_x: f64, mm_y: f64) -> f64 {
    let k = |mm: f64| ((min_mm / mm - 1.0) / 2.0 - 1e-9).ceil().max(1.0);
    (k(mm_x) * mm_x).max(k(mm_y) * mm_y) * 1000.0
}

/// Thin parts of `space` (set = the feature measured): opening residue, components that
/// matter (`keep`), widths. Returns parts measured narrower than `MEASURE_FACTOR × min_mm`.
/// Which thin parts matter.
enum Keep<'a> {
    /// Thin copper: parts that join two or more pieces of well-formed copper (a neck, a thin
    /// track between pads) or none at all (an island that the etch removes). A part touching
    /// one piece only is kept when it is a stub or a loop ([`is_stub`]), not the rounded
    /// corner or tip of wide copper.
    Bridges,
    /// Gaps and mask webs: parts whose two sides belong to different pieces of the other
    /// material (given with its labels). A wedge between a track and the pad it joins has
    /// the same copper on both sides: if it fills, nothing is shorted.
    Separates(&'a Labels),
}

fn thin_parts(
    space: &Bitmap,
    outside: bool,
    area: &Area,
    min_mm: f64,
    keep: Keep<'_>,
) -> Vec<Thin> {
    if min_mm <= 0.0 || space.width() == 0 || space.height() == 0 {
        return Vec::new();
    }
    // One pixel more than half the limit: a digital disc is narrower along the diagonals
    // than along the axes, and the width measurement decides what is thin anyway.
    let r_um =
        disc_radius_um(min_mm, area.mm_x, area.mm_y).max((min_mm / 2.0 + area.pixel_mm()) * 1000.0);
    let pitch = Pitch {
        x_um: area.mm_x * 1000.0,
        y_um: area.mm_y * 1000.0,
    };
    let opened = morphology::opening(space, r_um, pitch);
    let mut residue = and_not(space, &opened);
    // Which pieces each residue part touches: of the opened copper (bridges), or of the
    // other material (gaps and webs).
    let touches = match keep {
        Keep::Bridges => Labels::of(&opened).touches(&residue),
        Keep::Separates(l) => l.touches(&residue),
    };
    drop(opened);
    // What can matter (the tests below, before any pixel is walked): parts between two
    // pieces; for bridges also islands, and parts touching one piece large enough to be a
    // stub.
    let probe = Probe {
        bm: space,
        outside,
        mm_x: area.mm_x,
        mm_y: area.mm_y,
    };
    let cap = MEASURE_FACTOR * min_mm;
    // A measured width is at least two nearest-outside steps less a pixel along the way
    // (`Probe::width_at_in`), so a dangling part with fewer pixels than this cannot run as
    // long as the limit ([`is_stub`]) and needs no measuring.
    let least_width = (2.0 * area.mm_x.min(area.mm_y) - area.mm_x.max(area.mm_y)).max(0.0);
    let stub_pixels = min_mm * least_width / (area.mm_x * area.mm_y) * (1.0 - 1e-9);
    touches.retain(&mut residue, |pieces, pixels| match keep {
        Keep::Separates(_) => pieces >= 2,
        Keep::Bridges => pieces != 1 || pixels as f64 >= stub_pixels,
    });
    let comps = components(&residue, MAX_RESIDUE_PIXELS);
    comps
        .par_iter()
        .map_init(measure::Window::scratch, |window, c| {
            // Only parts that matter are left (above); one touching a single piece of
            // copper must still prove to be a stub.
            let dangling = matches!(keep, Keep::Bridges) && touches.of(c) == 1;
            let stride = (c.pixels.len() / SAMPLES_PER_COMPONENT).max(1);
            let sampled = c.pixels.len().div_ceil(stride);
            let mut widths: Vec<f64> = c
                .pixels
                .iter()
                .step_by(stride)
                .filter_map(|&(x, y)| probe.width_at_in(window, x as i64, y as i64, cap))
                .collect();
            if widths.is_empty() {
                return None;
            }
            // The median: the round end of a track narrows to nothing in its last pixels,
            // which says nothing about the track's width.
            widths.sort_by(f64::total_cmp);
            let width = widths[(widths.len() - 1) * WIDTH_PERCENTILE / 100];
            if dangling && !is_stub(&widths, sampled, c.pixels.len(), width, area, min_mm) {
                return None;
            }
            Some(Thin {
                at: on_part(c),
                bbox: c.bbox(),
                width_mm: width,
            })
        })
        .flatten()
        .collect()
}

/// Whether residue touching one piece of copper only is a thin stub or loop (reported) rather
/// than the rounded corner or tip of wide copper (not reported). A stub or loop is thin along
/// its length: nearly every sample measures, the widths agree (the middle half of them within
/// 1.5 pixels or a third of the width), and it runs longer than the limit (area ÷ width). A
/// corner's residue is short, most of its pixels are not thin across at all, and a sharp
/// tip's widths run evenly from nothing to the limit.
///
/// A stub or loop cuts no connection when it etches away, and a slanted feature measures up
/// to a pixel low (`measure.rs`): one drawn at the limit must not be reported, so a stub has
/// to measure more than a whole pixel below the limit (bridges keep the half-pixel slack).
fn is_stub(
    sorted_widths: &[f64],
    sampled: usize,
    pixels: usize,
    width: f64,
    area: &Area,
    min_mm: f64,
) -> bool {
    let n = sorted_widths.len();
    if width <= 0.0 || 4 * n < 3 * sampled {
        return false;
    }
    let spread = sorted_widths[3 * (n - 1) / 4] - sorted_widths[(n - 1) / 4];
    let length = pixels as f64 * area.mm_x * area.mm_y / width;
    spread <= (1.5 * area.pixel_mm()).max(width / 3.0)
        && length >= min_mm
        && width < min_mm - area.pixel_mm()
}

/// The component's centroid if a pixel of it is within a pixel of there, else the centre of
/// its pixel nearest to the centroid.
fn on_part(c: &measure::Component) -> (f64, f64) {
    let (cx, cy) = c.centroid();
    let d2 = |&(x, y): &(u32, u32)| {
        let (dx, dy) = (x as f64 + 0.5 - cx, y as f64 + 0.5 - cy);
        dx * dx + dy * dy
    };
    match c.pixels.iter().min_by(|a, b| d2(a).total_cmp(&d2(b))) {
        Some(p) if d2(p) > 1.0 => (p.0 as f64 + 0.5, p.1 as f64 + 0.5),
        _ => (cx, cy),
    }
}

/// Merges parts whose boxes come within `gap_px` of each other. Only small parts (fragments
/// of one thin feature broken up by the pixel grid) are merged: the box of a long, winding
/// part says little about where its pixels are.
fn merge(parts: Vec<Thin>, gap_px: u32) -> Vec<Thin> {
    let n = parts.len();
    if n > 20_000 {
        return parts;
    }
    let mut parent: Vec<usize> = (0..n).collect();
    fn root(p: &mut [usize], mut i: usize) -> usize {
        while p[i] != i {
            p[i] = p[p[i]];
            i = p[i];
        }
        i
    }
    let small = |t: &Thin| {
        let (x0, y0, x1, y1) = t.bbox;
        (x1 - x0).max(y1 - y0) <= 8 * gap_px
    };
    let mut order: Vec<usize> = (0..n).filter(|&i| small(&parts[i])).collect();
    order.sort_by_key(|&i| parts[i].bbox.0);
    for (k, &i) in order.iter().enumerate() {
        let a = parts[i].bbox;
        for &j in &order[k + 1..] {
            let b = parts[j].bbox;
            if b.0 > a.2.saturating_add(gap_px) {
                break;
            }
            let near_y = b.1 <= a.3.saturating_add(gap_px) && a.1 <= b.3.saturating_add(gap_px);
            if near_y {
                let (ri, rj) = (root(&mut parent, i), root(&mut parent, j));
                parent[ri] = rj;
            }
        }
    }
    let mut groups: Vec<Option<Thin>> = vec![None; n];
    for (i, t) in parts.into_iter().enumerate() {
        let r = root(&mut parent, i);
        groups[r] = Some(match groups[r].take() {
            None => t,
            Some(g) => Thin {
                // The narrowest place of the group is what the user should look at.
                at: if t.width_mm < g.width_mm { t.at } else { g.at },
                bbox: (
                    g.bbox.0.min(t.bbox.0),
                    g.bbox.1.min(t.bbox.1),
                    g.bbox.2.max(t.bbox.2),
                    g.bbox.3.max(t.bbox.3),
                ),
                width_mm: g.width_mm.min(t.width_mm),
            },
        });
    }
    groups.into_iter().flatten().collect()
}

/// Turns thin parts below `limit` (by more than half a pixel) into findings.
fn findings_of(
    parts: &[Thin],
    kind: FindingKind,
    limit: f64,
    area: &Area,
    input: &FilmInput<'_>,
) -> Vec<Finding> {
    let slack = 0.5 * area.pixel_mm();
    parts
        .iter()
        .filter(|t| t.width_mm < limit - slack)
        .map(|t| {
            let at = area.to_mm(t.at.0, t.at.1);
            let (x0, y0, x1, y1) = t.bbox;
            let extent = [
                (x1 - x0 + 1) as f64 * area.mm_x,
                (y1 - y0 + 1) as f64 * area.mm_y,
            ];
            finding(input, kind, at, t.width_mm, limit, extent, None)
        })
        .collect()
}

fn finding(
    input: &FilmInput<'_>,
    kind: FindingKind,
    at: Point,
    width_mm: f64,
    limit_mm: f64,
    extent_mm: [f64; 2],
    drawn_mm: Option<f64>,
) -> Finding {
    Finding {
        number: 0,
        kind,
        film: input.key.to_string(),
        layer: input.title.to_string(),
        at_mm: at,
        width_mm,
        limit_mm,
        extent_mm,
        drawn_mm,
        mark_mm: None,
    }
}

/// Keeps the narrowest `MAX_LISTED` findings; returns how many were dropped.
fn keep_worst(list: &mut Vec<Finding>) -> usize {
    list.sort_by(|a, b| a.width_mm.total_cmp(&b.width_mm));
    let dropped = list.len().saturating_sub(MAX_LISTED);
    list.truncate(MAX_LISTED);
    dropped
}

/// Checks one film. Findings come back unnumbered (number 0).
pub fn check_film(
    input: &FilmInput<'_>,
    board: &Bounds,
    limits: &ProcessLimits,
) -> (FilmCheck, Vec<Finding>) {
    let area = Area::of(input.map, board);
    let (w, h) = area.size(board);
    let mut material = crop(input.film, area.x0, area.y0, w, h);
    if !input.recipe.black_is_material {
        material.invert();
    }
    let gap_px =
        (limits.min_gap_mm.max(limits.min_copper_width_mm) / area.pixel_mm()).ceil() as u32;
    let mut check = FilmCheck {
        film: input.key.to_string(),
        layer: input.title.to_string(),
        dpi: [input.map.dpi_x, input.map.dpi_y],
        copper_area_mm2: None,
        copper_percent: None,
        smallest_width_mm: None,
        smallest_gap_mm: None,
        measured_below_mm: 0.0,
        findings: 0,
        findings_not_listed: 0,
    };
    let smallest = |parts: &[Thin]| {
        let m = parts
            .iter()
            .map(|t| t.width_mm)
            .fold(f64::INFINITY, f64::min);
        m.is_finite().then_some(m)
    };
    let mut lists: Vec<Vec<Finding>> = Vec::new();
    match input.function {
        LayerFunction::Copper => {
            let area_mm2 = material.count_ones() as f64 * area.mm_x * area.mm_y;
            check.copper_area_mm2 = Some(area_mm2);
            let box_mm2 = board.width() * board.height();
            check.copper_percent = (box_mm2 > 0.0).then(|| 100.0 * area_mm2 / box_mm2);
            check.measured_below_mm = limits.min_copper_width_mm.min(limits.min_gap_mm);
            let holes = hole_sites(input);
            let labels = Labels::of(&material);
            let ((copper, gaps), joined) = rayon::join(
                || {
                    rayon::join(
                        || {
                            thin_parts(
                                &material,
                                false,
                                &area,
                                limits.min_copper_width_mm,
                                Keep::Bridges,
                            )
                        },
                        || {
                            let gap = inverted(&material);
                            thin_parts(
                                &gap,
                                true,
                                &area,
                                limits.min_gap_mm,
                                Keep::Separates(&labels),
                            )
                        },
                    )
                },
                || joins::closed_gaps(input, &material, &area, limits.min_gap_mm),
            );
            let copper = merge(copper, gap_px);
            // Drill-centre marks are intended holes in the copper, not gaps.
            let gaps: Vec<Thin> = merge(gaps, gap_px)
                .into_iter()
                .filter(|t| {
                    let at = area.to_mm(t.at.0, t.at.1);
                    !holes.iter().any(|hs| {
                        let r = hs.mark_r + area.pixel_mm();
                        let (dx, dy) = (hs.at.x - at.x, hs.at.y - at.y);
                        dx * dx + dy * dy <= r * r
                    })
                })
                .collect();
            let mut rings = Vec::new();
            let mut ring_holes = Vec::new();
            if limits.min_annular_ring_mm > 0.0 {
                let thin_rings: Vec<(HoleSite, f64)> = holes
                    .par_iter()
                    .filter_map(|hs| {
                        ring_of(&material, &area, hs, limits.min_annular_ring_mm).map(|r| (*hs, r))
                    })
                    .collect();
                for (hs, r) in &thin_rings {
                    let r = *r;
                    ring_holes.push(*hs);
                    let d = 2.0 * hs.open_r;
                    let mut f = finding(
                        input,
                        FindingKind::ThinRing,
                        hs.at,
                        r,
                        limits.min_annular_ring_mm,
                        [d, d],
                        Some(hs.hole_mm),
                    );
                    f.mark_mm = (hs.mark_r > 0.0).then_some(2.0 * hs.mark_r);
                    rings.push(f);
                }
            }
            // A thin ring is one finding, not also a thin piece of copper.
            let copper: Vec<Thin> = copper
                .into_iter()
                .filter(|t| {
                    let at = area.to_mm(t.at.0, t.at.1);
                    !ring_holes.iter().any(|hs| {
                        let r = hs.open_r + limits.min_annular_ring_mm + 2.0 * area.pixel_mm();
                        let (dx, dy) = (hs.at.x - at.x, hs.at.y - at.y);
                        dx * dx + dy * dy <= r * r
                    })
                })
                .collect();
            check.smallest_width_mm = smallest(&copper);
            check.smallest_gap_mm = smallest(&gaps);
            let thin = findings_of(
                &copper,
                FindingKind::ThinCopper,
                limits.min_copper_width_mm,
                &area,
                input,
            );
            let narrow = findings_of(
                &gaps,
                FindingKind::NarrowGap,
                limits.min_gap_mm,
                &area,
                input,
            );
            // Copper under a drill-centre mark or inside a hole is meant to go.
            let mut gone = vanished(input, &material, &area, board, limits);
            gone.retain(|f| {
                !holes.iter().any(|hs| {
                    let reach = hs.open_r - 0.5 * f.extent_mm[0].hypot(f.extent_mm[1]);
                    reach > 0.0 && hs.at.dist(f.at_mm) <= reach
                })
            });
            let (mut copper_gone, mut gap_gone): (Vec<Finding>, Vec<Finding>) = gone
                .into_iter()
                .partition(|f| f.kind == FindingKind::CopperVanishes);
            copper_gone.truncate(MAX_LISTED * 4);
            gap_gone.truncate(MAX_LISTED * 4);
            // A lost clearance is reported once, as such, not also as the copper it joins.
            let joined: Vec<Finding> = joined
                .into_iter()
                .filter(|j| {
                    !gap_gone.iter().any(|g| {
                        let r = 0.5 * g.extent_mm[0].hypot(g.extent_mm[1]) + area.pixel_mm();
                        g.at_mm.dist(j.at_mm) <= r
                    })
                })
                .collect();
            lists.extend([thin, narrow, copper_gone, gap_gone, joined, rings]);
        }
        LayerFunction::SolderMask => {
            check.measured_below_mm = limits.min_mask_web_mm;
            let labels = Labels::of(&material);
            let web = inverted(&material);
            let webs = merge(
                thin_parts(
                    &web,
                    true,
                    &area,
                    limits.min_mask_web_mm,
                    Keep::Separates(&labels),
                ),
                gap_px,
            );
            check.smallest_gap_mm = smallest(&webs);
            lists.push(findings_of(
                &webs,
                FindingKind::ThinMaskWeb,
                limits.min_mask_web_mm,
                &area,
                input,
            ));
        }
        // Legend and paste films: nothing meaningful to measure against the etch limits.
        _ => {}
    }
    let mut out = Vec::new();
    for mut l in lists {
        let total = l.len();
        check.findings_not_listed += keep_worst(&mut l);
        check.findings += total;
        out.extend(l);
    }
    (check, out)
}

/// Checks every film of a board made by [`crate::films::make_films`] and numbers the
/// findings (film by film, kind by kind, narrowest first).
pub fn check_films(
    films: &[crate::films::MadeFilm],
    board: &crate::load::Board,
    frame_board: &Bounds,
    limits: &ProcessLimits,
) -> CheckReport {
    let drills = crate::films::drill_files(board);
    let image_of = |source: &str| {
        board.files.iter().find_map(|f| match &f.content {
            crate::load::Content::Gerber(g) if f.name == source => Some(&g.image),
            _ => None,
        })
    };
    let results: Vec<(FilmCheck, Vec<Finding>)> = films
        .par_iter()
        .map(|f| {
            let is_copper = f.id.function == LayerFunction::Copper;
            let film_drills: &[&DrillFile] = if is_copper { &drills } else { &[] };
            let input = FilmInput {
                key: &f.key,
                title: &f.title,
                function: f.id.function,
                film: &f.rendered.bitmap,
                map: &f.rendered.map,
                recipe: &f.recipe,
                image: image_of(&f.source),
                drills: film_drills,
            };
            check_film(&input, frame_board, limits)
        })
        .collect();
    let mut report = CheckReport {
        limits: limits.clone(),
        board_mm: [frame_board.width(), frame_board.height()],
        films: Vec::new(),
        findings: Vec::new(),
        proof: None,
    };
    for (c, mut f) in results {
        f.sort_by(|a, b| a.kind.cmp(&b.kind).then(a.width_mm.total_cmp(&b.width_mm)));
        report.films.push(c);
        report.findings.extend(f);
    }
    for (i, f) in report.findings.iter_mut().enumerate() {
        f.number = i + 1;
    }
    report
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn disc_is_at_least_the_limit_across() {
        // 1200 dpi: 0.2 mm is 9.45 px; the smallest odd disc not narrower is 11 px (k = 5).
        let mm = 25.4 / 1200.0;
        let r = disc_radius_um(0.2, mm, mm);
        assert!((r - 5.0 * mm * 1000.0).abs() < 1e-6, "{r}");
        // 600 dpi: 4.72 px → 5 px (k = 2).
        let mm = 25.4 / 600.0;
        assert!((disc_radius_um(0.2, mm, mm) - 2.0 * mm * 1000.0).abs() < 1e-6);
    }

    #[test]
    fn defaults_validate() {
        assert!(ProcessLimits::default().validate().is_ok());
        let bad = ProcessLimits {
            min_gap_mm: -1.0,
            ..Default::default()
        };
        assert!(bad.validate().unwrap_err().contains("min_gap_mm"));
    }
}
