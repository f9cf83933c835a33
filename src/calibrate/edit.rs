//! Writing solved values into the user's profile: the TOML is edited in place with
//! `toml_edit`, so comments, layout and every other key stay as the user wrote them; the
//! previous file is kept as a backup and the new one replaces it atomically.

use super::CalibrateError;
use crate::diag::Pos;
use std::path::{Path, PathBuf};
use toml_edit::{DocumentMut, Item, Value};

/// `text` with each (section, key) set to its value. Existing keys keep their comments
/// (before the key and after the value); missing keys and sections are added.
/// A syntax error is reported with `file`, line and column.
pub fn set_values(
    text: &str,
    file: &str,
    edits: &[(&str, &str, f64)],
) -> Result<String, CalibrateError> {
    let mut doc: DocumentMut = text.parse().map_err(|e: toml_edit::TomlError| {
        let pos = e
            .span()
            .map(|s| format!(":{}", Pos::of_offset(text, s.start)))
            .unwrap_or_default();
        CalibrateError(format!(
            "{file}{pos}: {} (the profile was left as it is)",
            e.message().trim()
        ))
    })?;
    for &(section, key, v) in edits {
        let table = doc
            .entry(section)
            .or_insert(toml_edit::table())
            .as_table_like_mut()
            .ok_or_else(|| {
                CalibrateError(format!(
                    "{file}: \"{section}\" is not a table, so {section}.{key} cannot be set"
                ))
            })?;
        match table.get_mut(key) {
            Some(item) => {
                let value = item.as_value_mut().ok_or_else(|| {
                    CalibrateError(format!("{file}: {section}.{key} is not a plain value"))
                })?;
                let decor = value.decor().clone();
                *value = Value::from(v);
                *value.decor_mut() = decor;
            }
            None => {
                table.insert(key, Item::Value(Value::from(v)));
            }
        }
    }
    Ok(doc.to_string())
}

/// The first free backup name: `FILE.bak`, else `FILE.bak.1`, `FILE.bak.2`, …
pub fn backup_path(path: &Path) -> Result<PathBuf, CalibrateError> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "profile".into());
    let first = path.with_file_name(format!("{name}.bak"));
    if !first.exists() {
        return Ok(first);
    }
    for n in 1..10_000 {
        let p = path.with_file_name(format!("{name}.bak.{n}"));
        if !p.exists() {
            return Ok(p);
        }
    }
    Err(CalibrateError(format!(
        "{}: too many backups beside it; remove old .bak files",
        path.display()
    )))
}

/// Replaces `path` with `new_text`, first copying the old file to a backup (when it exists).
/// Returns the backup's path.
pub fn write_with_backup(path: &Path, new_text: &str) -> Result<Option<PathBuf>, CalibrateError> {
    let backup = if path.exists() {
        let b = backup_path(path)?;
        std::fs::copy(path, &b).map_err(|e| {
            CalibrateError(format!(
                "could not back up {} to {}: {e}; the profile was left as it is",
                path.display(),
                b.display()
            ))
        })?;
        Some(b)
    } else {
        None
    };
    crate::output::write_atomically(path, |w| {
        use std::io::Write;
        w.write_all(new_text.as_bytes())
            .map_err(|source| crate::output::OutputError::Io {
                path: path.to_path_buf(),
                source,
            })
    })
    .map_err(|e| CalibrateError(e.to_string()))?;
    Ok(backup)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_comments_and_adds_missing_keys() {
        let text = "# mine\n[printer]\n# before\nscale_x = 1.0 # after\ndpi = 600\n";
        let out = set_values(
            text,
            "p.toml",
            &[
                ("printer", "scale_x", 1.003009),
                ("exposure", "time_s", 85.0),
            ],
        )
        .unwrap();
        assert!(
            out.contains("# mine\n[printer]\n# before\nscale_x = 1.003009 # after\ndpi = 600\n"),
            "{out}"
        );
        assert!(out.contains("[exposure]\ntime_s = 85.0\n"), "{out}");
    }

    #[test]
    fn syntax_error_names_line_and_column() {
        let e = set_values("[printer]\nscale_x = = 1\n", "p.toml", &[]).unwrap_err();
        assert!(e.0.starts_with("p.toml:2:"), "{e}");
    }
}
