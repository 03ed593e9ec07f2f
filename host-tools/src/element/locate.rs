//! Locating keys in a spec's TOML text, so that every error names its line.
//!
//! The spec schema is ours and simple (tables, arrays of tables, `key = value`
//! lines), so a line scanner that tracks the current table is enough to map a
//! dotted key (`die.junction_depth_um`, `arm[2].density_cm3`, 1-based array
//! index) to its line, and a byte offset from the TOML parser back to a key.

use super::error::SpecError;

/// One significant line of the text: its number, the table it belongs to and
/// the key it sets (if any).
struct ScannedLine {
    line: usize,
    table: String,
    header: bool,
    key: Option<String>,
}

/// Scans the text line by line, tracking `[table]` and `[[array]]` headers.
fn scan(text: &str) -> Vec<ScannedLine> {
    let mut out = Vec::new();
    let mut table = String::new();
    let mut array_counts: Vec<(String, usize)> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = strip_comment(raw).trim();
        if line.is_empty() {
            continue;
        }
        if let Some(name) = line.strip_prefix("[[").and_then(|s| s.strip_suffix("]]")) {
            let name = name.trim().to_string();
            let count = match array_counts.iter_mut().find(|(n, _)| *n == name) {
                Some((_, c)) => {
                    *c += 1;
                    *c
                }
                None => {
                    array_counts.push((name.clone(), 1));
                    1
                }
            };
            table = format!("{name}[{count}]");
            out.push(ScannedLine {
                line: i + 1,
                table: table.clone(),
                header: true,
                key: None,
            });
        } else if let Some(name) = line.strip_prefix('[').and_then(|s| s.strip_suffix(']')) {
            table = name.trim().to_string();
            out.push(ScannedLine {
                line: i + 1,
                table: table.clone(),
                header: true,
                key: None,
            });
        } else {
            let key = line
                .split_once('=')
                .map(|(k, _)| k.trim().trim_matches('"').to_string());
            out.push(ScannedLine {
                line: i + 1,
                table: table.clone(),
                header: false,
                key,
            });
        }
    }
    out
}

/// Removes a trailing `# comment` that is not inside a basic or literal string.
fn strip_comment(line: &str) -> &str {
    let mut quote: Option<char> = None;
    for (i, c) in line.char_indices() {
        match (quote, c) {
            (None, '#') => return &line[..i],
            (None, '"' | '\'') => quote = Some(c),
            (Some(q), c) if c == q => quote = None,
            _ => {}
        }
    }
    line
}

/// Joins a table path and a key into a dotted key.
fn join(table: &str, key: &str) -> String {
    if table.is_empty() {
        key.to_string()
    } else {
        format!("{table}.{key}")
    }
}

/// The line of a dotted key; if the key is absent, the line of its table's
/// header; if that is absent too, line 1.
pub fn line_of(text: &str, field: &str) -> usize {
    let lines = scan(text);
    if let Some(l) = lines
        .iter()
        .find(|l| l.key.as_deref().is_some_and(|k| join(&l.table, k) == field))
    {
        return l.line;
    }
    let mut table = field;
    while let Some((head, _)) = table.rsplit_once('.') {
        table = head;
        if let Some(l) = lines.iter().find(|l| l.header && l.table == table) {
            return l.line;
        }
    }
    1
}

/// A located error for a dotted key.
pub fn error_at(text: &str, field: &str, message: impl Into<String>) -> SpecError {
    SpecError {
        line: line_of(text, field),
        field: field.to_string(),
        message: message.into(),
    }
}

/// Turns a TOML parse or schema error into a located error: line from the
/// error's byte span, field from the message (`unknown field`, `missing
/// field`) or from the key set on that line, prefixed with its table.
pub fn from_toml(text: &str, err: &toml::de::Error) -> SpecError {
    let message = err.message().trim().to_string();
    let line = match err.span() {
        Some(span) => text[..span.start.min(text.len())].matches('\n').count() + 1,
        None => 1,
    };
    let lines = scan(text);
    let at = lines.iter().rev().find(|l| l.line <= line);
    let table = at.map(|l| l.table.as_str()).unwrap_or("");
    let quoted = message.split('`').nth(1).map(str::to_string);
    let field = if message.starts_with("unknown field") || message.starts_with("missing field") {
        join(table, quoted.as_deref().unwrap_or("?"))
    } else {
        match at.and_then(|l| if l.line == line { l.key.clone() } else { None }) {
            Some(key) => join(table, &key),
            None if table.is_empty() => "(document)".to_string(),
            None => table.to_string(),
        }
    };
    // The parser's message may span several lines (with a source excerpt);
    // the first line is the one that says what is wrong.
    let first = message.lines().next().unwrap_or("").to_string();
    SpecError {
        line,
        field,
        message: first,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = "kind = \"bridge\" # the kind\n\n[die]\njunction_depth_um = 1.5\n\n[[arm]]\ndensity_cm3 = 1e18\n[[arm]]\n# comment line\ndensity_cm3 = 2e18 # '#' in comment\nname = \"a # b\"\n";

    #[test]
    fn keys_map_to_their_lines() {
        // (field, expected line) read off TEXT by hand.
        let table = [
            ("kind", 1),
            ("die.junction_depth_um", 4),
            ("arm[1].density_cm3", 7),
            ("arm[2].density_cm3", 10),
            ("arm[2].name", 11),
            ("die.missing_key", 3),
            ("arm[2].missing", 8),
            ("nowhere.at_all", 1),
        ];
        for (field, want) in table {
            let got = line_of(TEXT, field);
            assert_eq!(got, want, "field {field}: got line {got}, expected {want}");
        }
    }

    #[test]
    fn comments_outside_strings_are_stripped() {
        assert_eq!(strip_comment("a = 1 # c"), "a = 1 ");
        assert_eq!(strip_comment("a = \"x#y\" # c"), "a = \"x#y\" ");
        assert_eq!(strip_comment("# only"), "");
    }

    #[derive(Debug, serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Die {
        junction_depth_um: f64,
    }

    #[derive(Debug, serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Doc {
        die: Die,
    }

    #[test]
    fn toml_errors_name_line_and_key() {
        // (text, expected line, expected field)
        let table = [
            (
                "[die]\njunction_depth_um = 1\ncolour = 3\n",
                3,
                "die.colour",
            ),
            (
                "[die]\njunction_depth_um = \"deep\"\n",
                2,
                "die.junction_depth_um",
            ),
            ("\n[die]\n", 2, "die.junction_depth_um"),
        ];
        for (text, want_line, want_field) in table {
            let err = toml::from_str::<Doc>(text).expect_err("must fail");
            let got = from_toml(text, &err);
            assert_eq!(
                (got.line, got.field.as_str()),
                (want_line, want_field),
                "text {text:?}: got {got}, expected line {want_line} field {want_field}"
            );
        }
    }
}
