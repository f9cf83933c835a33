//! Layer identity from file names and from weak hints in the content.
//!
//! There is no standard for naming fabrication files; each design program has its own
//! habits. Two kinds of evidence are used:
//! - the extension, where it is specific: the Protel-style three-letter scheme (`.GTL` top
//!   layer, `.GBS` bottom solder mask, `.GKO` keep-out used as the board edge, `.G1` first
//!   mid layer, `.GP1` first internal plane …) and the classic EAGLE one (`.cmp` component
//!   side, `.sol` solder side, `.stc`/`.sts` stop mask, `.plc`/`.pls` placement …) — common
//!   practice;
//! - otherwise the words at the end of the name: `F_Cu`, `B_Mask`, `Edge_Cuts`, `In1_Cu`,
//!   `copper_top`, `TopSolderMaskLayer`, `bcream`, `plated-drill`, `_copperTop`, `SOLDERMASK_TOP`
//!   and the like. Project names come first in most conventions, so only the run of known
//!   words at the end of the name counts, and the side word nearest the end wins.

use super::{IdSource, LayerFunction as F, LayerId, Side};

/// Extensions of files that are never layers: documents, pictures, archives, CAM reports,
/// photoplotter/drill info files (EAGLE `.gpi`/`.dri`), job files and project files.
const NOT_LAYER_EXTENSIONS: &[&str] = &[
    "md",
    "pdf",
    "png",
    "jpg",
    "jpeg",
    "svg",
    "zip",
    "gz",
    "gpi",
    "dri",
    "gbrjob",
    "json",
    "toml",
    "rep",
    "extrep",
    "drr",
    "ldp",
    "apr",
    "rul",
    "csv",
    "pos",
    "html",
    "htm",
    "xml",
    "ipc",
    "d356",
    "bom",
    "step",
    "stp",
    "kicad_pcb",
    "kicad_pro",
    "brd",
    "sch",
    "log",
    "ini",
    "cfg",
];

/// Words that mark a file as documentation or CAM settings rather than a layer.
const NOT_LAYER_WORDS: &[&str] = &[
    "license",
    "licence",
    "readme",
    "copying",
    "gpl",
    "notice",
    "authors",
    "changelog",
    "param",
    "params",
    "tools",
    "report",
];

/// Extensions that name a drill file (Excellon), common practice.
const DRILL_EXTENSIONS: &[&str] = &["drl", "xln", "exc", "drd", "cnc", "nc", "ncd", "drill"];

/// Words that may appear glued together inside one token ("toplayer", "bcream",
/// "BoardOutline" after case folding). Words of one or two letters only count as whole tokens.
const VOCABULARY: &[&str] = &[
    "top",
    "bottom",
    "bot",
    "front",
    "back",
    "component",
    "comp",
    "inner",
    "inr",
    "internal",
    "mid",
    "plane",
    "layer",
    "copper",
    "etch",
    "signal",
    "solder",
    "soldermask",
    "mask",
    "stop",
    "silk",
    "silks",
    "silkscreen",
    "screen",
    "legend",
    "overlay",
    "paste",
    "solderpaste",
    "cream",
    "tcream",
    "bcream",
    "stencil",
    "board",
    "outline",
    "edge",
    "cuts",
    "profile",
    "contour",
    "dimension",
    "mill",
    "milling",
    "drill",
    "drills",
    "drilling",
    "holes",
    "hole",
    "pth",
    "npth",
    "plated",
    "nonplated",
    "non",
    "through",
    "via",
    "slot",
    "slots",
    "round",
    "map",
    "drawing",
    "fab",
    "fabrication",
    "assy",
    "assembly",
    "document",
    "documentation",
    "keepout",
    "mechanical",
    "mech",
];

/// Short words accepted only as a whole token ("s" from "SilkS" split at its capital).
const SHORT_WORDS: &[&str] = &["f", "b", "t", "in", "cu", "s"];

fn extension_and_stem(base: &str) -> (String, &str) {
    match base.rfind('.') {
        Some(i) if i > 0 => (base[i + 1..].to_ascii_lowercase(), &base[..i]),
        _ => (String::new(), base),
    }
}

fn base_name(name: &str) -> &str {
    name.rsplit(['/', '\\']).next().unwrap_or(name)
}

/// Whether a file is clearly not a layer (licence texts, read-me files, CAM reports and
/// settings, EAGLE photoplotter info files, job files).
pub fn is_not_a_layer(name: &str) -> bool {
    let base = base_name(name);
    let (ext, stem) = extension_and_stem(base);
    if NOT_LAYER_EXTENSIONS.contains(&ext.as_str()) {
        return true;
    }
    tokens(stem)
        .iter()
        .chain(std::iter::once(&ext))
        .any(|t| NOT_LAYER_WORDS.contains(&t.as_str()))
}

/// Splits a name into lower-case tokens at punctuation, at lower→upper case changes
/// ("copperTop"), before the last capital of a capital run ("PCBBoard" → "pcb", "board") and
/// between letters and digits ("In1" → "in", "1").
fn tokens(s: &str) -> Vec<String> {
    let chars: Vec<char> = s.chars().collect();
    let mut out = Vec::new();
    let mut cur = String::new();
    for (i, &c) in chars.iter().enumerate() {
        if !c.is_alphanumeric() {
            if !cur.is_empty() {
                out.push(std::mem::take(&mut cur).to_lowercase());
            }
            continue;
        }
        if let Some(&p) = i.checked_sub(1).and_then(|j| chars.get(j)) {
            let next_lower = chars.get(i + 1).is_some_and(|n| n.is_lowercase());
            let boundary = p.is_alphanumeric()
                && ((p.is_lowercase() && c.is_uppercase())
                    || (p.is_alphabetic() != c.is_alphabetic())
                    || (p.is_uppercase() && c.is_uppercase() && next_lower));
            if boundary && !cur.is_empty() {
                out.push(std::mem::take(&mut cur).to_lowercase());
            }
        }
        cur.push(c);
    }
    if !cur.is_empty() {
        out.push(cur.to_lowercase());
    }
    out
}

/// Splits a lower-case token into vocabulary words, or `None` when it is not made of them.
fn segment(token: &str) -> Option<Vec<&'static str>> {
    if let Some(w) = VOCABULARY.iter().chain(SHORT_WORDS).find(|w| **w == token) {
        return Some(vec![w]);
    }
    segment_glued(token)
}

/// Longer tokens are never taken apart: glued layer words are short, and the backtracking
/// below could otherwise take exponential time on hostile names ("soldermask" repeated).
const MAX_GLUED_TOKEN: usize = 40;

fn segment_glued(token: &str) -> Option<Vec<&'static str>> {
    if token.len() > MAX_GLUED_TOKEN {
        return None;
    }
    if token.is_empty() {
        return Some(Vec::new());
    }
    // Longest word first, with backtracking; the vocabulary is small and tokens are short.
    let mut candidates: Vec<&'static str> = VOCABULARY
        .iter()
        .copied()
        .filter(|w| token.starts_with(w))
        .collect();
    candidates.sort_by_key(|w| std::cmp::Reverse(w.len()));
    for w in candidates {
        if let Some(mut rest) = segment_glued(&token[w.len()..]) {
            rest.insert(0, w);
            return Some(rest);
        }
    }
    None
}

/// A word of a layer descriptor: a vocabulary word or a number.
#[derive(Debug, Clone, PartialEq)]
enum Word {
    Known(&'static str),
    Number(u32),
}

/// The run of known words (and numbers) at the end of `stem`.
fn trailing_words(stem: &str) -> Vec<Word> {
    let mut run: Vec<Vec<Word>> = Vec::new();
    for t in tokens(stem).iter().rev() {
        if let Ok(n) = t.parse::<u32>() {
            run.push(vec![Word::Number(n)]);
        } else if let Some(ws) = segment(t) {
            run.push(ws.into_iter().map(Word::Known).collect());
        } else if t.chars().all(|c| c.is_ascii_digit()) {
            run.push(Vec::new()); // a number too large to matter
        } else {
            break;
        }
    }
    run.into_iter().rev().flatten().collect()
}

/// What the words say: function, side and plating. `None` when they say nothing definite.
fn classify(words: &[Word]) -> Option<LayerId> {
    let known: Vec<&str> = words
        .iter()
        .filter_map(|w| match w {
            Word::Known(k) => Some(*k),
            Word::Number(_) => None,
        })
        .collect();
    let any = |list: &[&str]| known.iter().any(|k| list.contains(k));
    // The side word nearest the end wins: "Rev_B-F_Cu" is front copper.
    let side = known.iter().rev().find_map(|k| match *k {
        "top" | "front" | "f" | "t" | "tcream" | "component" | "comp" => Some(Side::Top),
        "bottom" | "bot" | "back" | "b" | "bcream" => Some(Side::Bottom),
        _ => None,
    });
    let inner = inner_number(words);
    let plated = if any(&["npth", "nonplated"]) || (any(&["non"]) && any(&["plated"])) {
        Some(false)
    } else if any(&["pth", "plated"]) {
        Some(true)
    } else {
        None
    };
    let src = IdSource::FileName;
    let sided = |f: F| side.map(|s| LayerId::new(f, s, src));
    let drillish = any(&["drill", "drills", "drilling", "holes", "hole"]);
    if drillish && any(&["map", "drawing", "legend"]) {
        return Some(LayerId::new(F::DrillMap, Side::NotApplicable, src));
    }
    if any(&[
        "paste",
        "solderpaste",
        "cream",
        "tcream",
        "bcream",
        "stencil",
    ]) {
        return sided(F::Paste);
    }
    if any(&["mask", "soldermask", "stop"]) {
        return sided(F::SolderMask);
    }
    if any(&["silk", "silks", "silkscreen", "legend", "overlay"]) {
        return sided(F::Legend);
    }
    if any(&["outline", "cuts", "profile", "contour", "mill", "milling"]) {
        return Some(LayerId::new(F::Outline, Side::Both, src));
    }
    let side_or_none = side.unwrap_or(Side::NotApplicable);
    if any(&["assy", "assembly"]) {
        return Some(LayerId::new(F::Assembly, side_or_none, src));
    }
    if any(&[
        "fab",
        "fabrication",
        "document",
        "documentation",
        "dimension",
        "drawing",
        "mechanical",
        "mech",
        "keepout",
    ]) {
        return Some(LayerId::new(F::Mechanical, side_or_none, src));
    }
    if drillish || any(&["pth", "npth", "slot", "slots"]) {
        return Some(LayerId::new(F::Drill, Side::Both, src).with_plated(plated));
    }
    if let Some(n) = inner {
        return Some(LayerId::new(F::Copper, Side::Inner(n), src));
    }
    if any(&["copper", "cu", "etch", "signal", "layer"]) {
        return sided(F::Copper);
    }
    // A bare side word names the copper of that side (e.g. "top.gbr", "BOTTOM.art").
    if any(&["top", "bottom", "bot"]) {
        return sided(F::Copper);
    }
    None
}

/// "In1", "Inner2", "InnerLayer1", "Inr3", "Mid1": the number after an inner-layer word.
fn inner_number(words: &[Word]) -> Option<u32> {
    for (i, w) in words.iter().enumerate() {
        if let Word::Known("in" | "inner" | "inr" | "internal" | "mid") = w {
            let mut rest = words[i + 1..].iter();
            let mut next = rest.next();
            if next == Some(&Word::Known("layer")) {
                next = rest.next();
            }
            if let Some(&Word::Number(n)) = next {
                if n >= 1 {
                    return Some(n);
                }
            }
        }
    }
    None
}

/// Specific extensions: Protel-style, classic EAGLE and a few others (common practice).
fn from_extension(ext: &str) -> Option<LayerId> {
    let src = IdSource::FileName;
    let id = |f, s| Some(LayerId::new(f, s, src));
    match ext {
        "gtl" | "cmp" | "top" => id(F::Copper, Side::Top),
        "gbl" | "sol" | "bot" => id(F::Copper, Side::Bottom),
        "gts" | "stc" | "smt" => id(F::SolderMask, Side::Top),
        "gbs" | "sts" | "smb" => id(F::SolderMask, Side::Bottom),
        "gto" | "plc" | "sst" => id(F::Legend, Side::Top),
        "gbo" | "pls" | "ssb" => id(F::Legend, Side::Bottom),
        "gtp" | "crc" | "spt" => id(F::Paste, Side::Top),
        "gbp" | "crs" | "spb" => id(F::Paste, Side::Bottom),
        // Keep-out, first mechanical layer and "mill layer" files are the board edge in the
        // practice of the programs that write them; EAGLE's .dim is its dimension layer.
        "gko" | "gm" | "gm1" | "gml" | "dim" | "outline" => id(F::Outline, Side::Both),
        "gdd" | "gd1" | "gg1" => id(F::DrillMap, Side::NotApplicable),
        "gdl" | "fab" => id(F::Mechanical, Side::NotApplicable),
        "gpt" => id(F::Other, Side::Top),
        "gpb" => id(F::Other, Side::Bottom),
        _ => numbered_extension(ext),
    }
}

/// `.G1`… mid layers and `.GP1`… internal planes (Protel), `.GM2`… mechanical layers,
/// `.ly2`… EAGLE inner layers (copper layer n, i.e. inner n − 1).
fn numbered_extension(ext: &str) -> Option<LayerId> {
    let src = IdSource::FileName;
    let num = |prefix: &str| -> Option<u32> {
        let rest = ext.strip_prefix(prefix)?;
        if rest.is_empty() || !rest.chars().all(|c| c.is_ascii_digit()) {
            return None;
        }
        rest.parse().ok().filter(|&n: &u32| (1..=64).contains(&n))
    };
    if let Some(n) = num("gp").or_else(|| num("g")) {
        return Some(LayerId::new(F::Copper, Side::Inner(n), src));
    }
    if num("gm").is_some() {
        return Some(LayerId::new(F::Mechanical, Side::NotApplicable, src));
    }
    if let Some(n) = num("ly").filter(|&n| n >= 2) {
        return Some(LayerId::new(F::Copper, Side::Inner(n - 1), src));
    }
    None
}

/// The identity the file name suggests, or `None` when it says nothing definite.
/// Recognised: Protel-style and EAGLE extensions, drill extensions (`.drl .xln .drd .cnc …`)
/// and the words at the end of the name (`-F_Cu`, `.toplayer`, `_maskBottom`, `TopSilk`,
/// `.top-copper`, …). `.txt` files count only when their words say drill.
pub fn from_file_name(name: &str) -> Option<LayerId> {
    if is_not_a_layer(name) {
        return None;
    }
    let (ext, stem) = extension_and_stem(base_name(name));
    if let Some(id) = from_extension(&ext) {
        return Some(id);
    }
    let words = trailing_words(stem);
    let by_words = classify(&words);
    if DRILL_EXTENSIONS.contains(&ext.as_str()) {
        let plated = by_words
            .filter(|id| id.function == F::Drill)
            .and_then(|id| id.plated);
        return Some(LayerId::new(F::Drill, Side::Both, IdSource::FileName).with_plated(plated));
    }
    if ext == "txt" {
        // Plain text: a drill file only when the words say so (many tools write drills as .txt,
        // but so are read-me files and reports).
        return by_words.filter(|id| id.function == F::Drill);
    }
    by_words
}

/// Weak hints in the content: an Excellon header, `%LN`/`%IN` names and `G04` comments that
/// name the layer ("Layer: TopLayer", "Film Name: SOLDERMASK_TOP", "Title: …, bottom_copper").
/// Only the first 32 KiB are read.
pub fn from_content(text: &str) -> Option<LayerId> {
    let mut end = text.len().min(32 * 1024);
    while !text.is_char_boundary(end) {
        end -= 1;
    }
    let head = &text[..end];
    if crate::excellon::looks_like_drill(head) {
        return Some(LayerId::new(F::Drill, Side::Both, IdSource::Content));
    }
    for line in head.split(['\n', '\r']) {
        for candidate in content_names(line.trim()) {
            let found = numbered_fritzing_name(&candidate).or_else(|| {
                let last = candidate.rsplit(['/', ',']).next().unwrap_or("").trim();
                let (ext, stem) = extension_and_stem(last);
                // "Bottom.gbr" in %IN: drop a Gerber extension, keep names like "V2.0".
                let stem = if ["gbr", "ger", "grb", "art", "pho"].contains(&ext.as_str()) {
                    stem
                } else {
                    last
                };
                classify(&trailing_words(stem))
            });
            if let Some(mut id) = found {
                id.source = IdSource::Content;
                return Some(id);
            }
        }
    }
    None
}

/// The layer names a line states, in order.
fn content_names(line: &str) -> Vec<String> {
    let mut out = Vec::new();
    for tag in ["%LN", "%IN"] {
        let mut rest = line;
        while let Some(i) = rest.find(tag) {
            let body = &rest[i + 3..];
            let end = body.find('*').unwrap_or(body.len());
            out.push(body[..end].trim().to_string());
            rest = &body[end..];
        }
    }
    if let Some(body) = line.strip_prefix("G04") {
        let body = body.trim().trim_end_matches('*').trim();
        for key in ["Layer:", "Film Name:", "Title:"] {
            if let Some(v) = body.strip_prefix(key) {
                out.push(v.trim().to_string());
            }
        }
    }
    out.retain(|s| !s.is_empty());
    out
}

/// Layer names of the form COPPER0/COPPER1, MASK0/MASK1, SILK0/SILK1: 0 is the bottom and 1 the
/// top (as files named "…copperTop" with "%LNCOPPER1*%" in the corpus show).
fn numbered_fritzing_name(name: &str) -> Option<LayerId> {
    let lower = name.to_ascii_lowercase();
    let (function, digit) = [
        ("copper", F::Copper),
        ("mask", F::SolderMask),
        ("silk", F::Legend),
    ]
    .iter()
    .find_map(|(w, f)| lower.strip_prefix(w).map(|d| (*f, d)))?;
    let side = match digit {
        "0" => Side::Bottom,
        "1" => Side::Top,
        _ => return None,
    };
    Some(LayerId::new(function, side, IdSource::Content))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tokens_split_at_case_digits_and_punctuation() {
        assert_eq!(
            tokens("Nano_ESP32-PCB_V04_copperTop"),
            ["nano", "esp", "32", "pcb", "v", "04", "copper", "top"]
        );
        assert_eq!(
            tokens("Gerber_InnerLayer1"),
            ["gerber", "inner", "layer", "1"]
        );
        assert_eq!(tokens("PCBBoard"), ["pcb", "board"]);
    }

    #[test]
    fn glued_words_are_segmented() {
        assert_eq!(
            segment("bottomsoldermask"),
            Some(vec!["bottom", "soldermask"])
        );
        assert_eq!(segment("toplayer"), Some(vec!["top", "layer"]));
        assert_eq!(segment("nixie"), None);
        // Short words only as whole tokens: "fab" is a word, "fb" is not two.
        assert_eq!(segment("fb"), None);
    }
}
