//! Telling an Excellon drill file from a Gerber file by its content.
//!
//! Gerber blocks end with `*` and its parameters sit between `%` signs (`%FSLAX24Y24*%`,
//! Gerber spec 2024.05 §3.3–3.4); Excellon blocks have no terminator and its header uses
//! `M48`, `INCH`/`METRIC` and `T..C..` lines (IPC-NC-349). Some drill writers put
//! Gerber-like text inside `;` comments (`;GenerationSoftware,…*%`), so comments never
//! count as Gerber evidence.

/// How many characters of the start of a file are examined.
const SAMPLE_CHARS: usize = 16_000;

/// Whether `text` looks like an Excellon drill file rather than Gerber.
pub fn looks_like_drill(text: &str) -> bool {
    let end = text
        .char_indices()
        .nth(SAMPLE_CHARS)
        .map_or(text.len(), |(i, _)| i);
    let head = &text[..end];
    let mut drill = 0usize;
    let mut gerber = 0usize;
    for line in head.split(['\n', '\r']) {
        let l = line.trim();
        if l.is_empty() || l.starts_with(';') {
            continue;
        }
        let upper = l.to_ascii_uppercase();
        if upper.ends_with('*')
            || upper.contains("*%")
            || upper.starts_with("%FS")
            || upper.starts_with("%MO")
            || upper.starts_with("G04")
        {
            gerber += 1;
            continue;
        }
        if upper == "M48" || upper == "M72" || upper == "M71" || upper.starts_with("FMAT,") {
            drill += 3;
        } else if upper.starts_with("METRIC") || upper.starts_with("INCH") {
            let rest = upper
                .trim_start_matches("METRIC")
                .trim_start_matches("INCH");
            if rest.is_empty() || rest.starts_with(',') {
                drill += 3;
            }
        } else if is_tool_definition(&upper) {
            drill += 2;
        }
    }
    drill > 0 && drill >= gerber
}

/// `T01C0.8`, `T1F00S00C0.03`, `T100C.042`.
fn is_tool_definition(upper: &str) -> bool {
    let Some(rest) = upper.strip_prefix('T') else {
        return false;
    };
    let digits = rest.bytes().take_while(u8::is_ascii_digit).count();
    if digits == 0 {
        return false;
    }
    let params = &rest[digits..];
    params.contains('C')
        && params.bytes().all(|b| {
            b.is_ascii_digit()
                || matches!(
                    b,
                    b'.' | b'C' | b'F' | b'S' | b'B' | b'H' | b'Z' | b'+' | b'-'
                )
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_examples() {
        assert!(looks_like_drill(
            "M48\nMETRIC,TZ\nT1C0.8\n%\nT1\nX1Y1\nM30\n"
        ));
        assert!(looks_like_drill(
            ";TYPE=PLATED\nM48\n;GenerationSoftware,X*%\n"
        ));
        assert!(!looks_like_drill(
            "G04 comment*\n%FSLAX24Y24*%\n%MOIN*%\nX0Y0D02*\nM02*\n"
        ));
        assert!(!looks_like_drill(""));
        assert!(!looks_like_drill("INTEGER-PLACES 3\nDECIMAL-PLACES 5\n"));
    }
}
