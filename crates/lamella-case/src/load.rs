//! Reading a case: file → text → `Case`, with every problem reported.

use std::fs;
use std::path::Path;

use crate::error::{CaseError, Problem};
use crate::schema::Case;

/// Reads, parses and validates a case file. It touches no other file: whether `output.folder`
/// can be written is the runner's question (`lamella_run::feasibility::load_case`).
///
/// Errors list every problem found: every unknown field and choice, and every bad value of
/// a file that parses around them (another syntax error ends the listing).
pub fn load(path: &Path) -> Result<Case, CaseError> {
    let text = read_text(path, "case file")?;
    parse_str(&text, &path.display().to_string())
}

/// The text of the `what` (e.g. "case file") at `path`, a regular file of UTF-8 text, or the
/// problem naming it.
pub(crate) fn read_text(path: &Path, what: &str) -> Result<String, CaseError> {
    let origin = path.display().to_string();
    let refuse = |problem: Problem| CaseError {
        origin: origin.clone(),
        problems: vec![problem],
    };
    let cannot_read = |err: std::io::Error| Problem::File {
        message: format!("cannot read the {what}: {err}; check the path and permissions"),
    };
    // A FIFO or device would block or never end: only regular files are read.
    let metadata = fs::metadata(path).map_err(|err| refuse(cannot_read(err)))?;
    if !metadata.is_file() {
        return Err(refuse(Problem::File {
            message: format!(
                "is not a regular file (a folder, FIFO or device); give the path of a {what}"
            ),
        }));
    }
    let bytes = fs::read(path).map_err(|err| refuse(cannot_read(err)))?;
    utf8_text(&bytes).map(str::to_string).map_err(refuse)
}

/// The case text, or a syntax problem at the line and column of the first byte that is not
/// UTF-8.
fn utf8_text(bytes: &[u8]) -> Result<&str, Problem> {
    std::str::from_utf8(bytes).map_err(|err| {
        let valid = &bytes[..err.valid_up_to()];
        let line = 1 + valid.iter().filter(|&&b| b == b'\n').count();
        let line_start = valid.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
        // Columns count characters, as the parser's do.
        let column = 1 + String::from_utf8_lossy(&valid[line_start..])
            .chars()
            .count();
        Problem::Syntax {
            line,
            column,
            message: format!(
                "byte {:#04x} is not UTF-8 text; save the case file as UTF-8",
                bytes[err.valid_up_to()]
            ),
        }
    })
}

/// Parses and validates case text; `origin` names it in messages (usually the file path).
///
/// Every misspelt field and choice is listed, not only the first, with the value problems of
/// the rest of the file (see [`parse_listing`]). Does not touch the file system.
pub fn parse_str(text: &str, origin: &str) -> Result<Case, CaseError> {
    let (parsed, mut problems) = parse_listing(text);
    if let Some(case) = parsed {
        problems.extend(case.validate());
        if problems.is_empty() {
            return Ok(case);
        }
    }
    Err(CaseError {
        origin: origin.to_string(),
        problems,
    })
}

/// Parses case text without validating its values; the first problem if it does not parse.
pub fn parse_unvalidated(text: &str) -> Result<Case, Problem> {
    match parse_listing(text) {
        (Some(case), problems) if problems.is_empty() => Ok(case),
        (_, mut problems) => Err(problems.swap_remove(0)),
    }
}

/// Most misspelt names one reading lists: a bound on the re-parsing, far above a real file's.
const MAX_LISTED_NAMES: usize = 64;

/// Parses case text, listing every unknown field and unknown choice (enum variant) instead of
/// stopping at the first: after each one the parser reads the text again with that name
/// patched. An unknown field close to an accepted one (at most two letters off) is renamed to
/// it, so its value is still read and checked; any other unknown field is left out, and so is
/// the item (field or list element) holding an unknown choice. Patches overwrite with spaces
/// and keep line breaks, so later problems keep their line and column.
///
/// Returns the case when the patched text parses (the problems then are only the unknown
/// names) and every problem found. A problem that a patch itself caused (a field left out
/// with its unknown choice now missing, a renamed field now duplicated) ends the listing
/// unreported; any other syntax error ends it reported.
pub fn parse_listing(text: &str) -> (Option<Case>, Vec<Problem>) {
    let mut text = text.to_string();
    let mut problems = Vec::new();
    let mut left_out: Vec<String> = Vec::new();
    let mut renamed: Vec<&'static str> = Vec::new();
    while problems.len() < MAX_LISTED_NAMES {
        let err = match ron::Options::default().from_str::<Case>(&text) {
            Ok(case) => return (Some(case), problems),
            Err(err) => err,
        };
        let patch = match &err.code {
            ron::Error::NoSuchStructField {
                found, expected, ..
            } => patch::unknown_field(&text, &err.span, found, expected),
            ron::Error::NoSuchEnumVariant { found, .. } => {
                patch::unknown_variant(&text, &err.span, found)
            }
            ron::Error::MissingStructField { field, .. }
                if left_out.iter().any(|name| name.as_str() == *field) =>
            {
                return (None, problems);
            }
            ron::Error::DuplicateStructField { field, .. } if renamed.contains(field) => {
                return (None, problems);
            }
            _ => None,
        };
        let mut message = syntax_message(&err.code);
        if let Some(patch::Patch {
            rename_to: Some(name),
            ..
        }) = &patch
        {
            message.push_str(&format!("; did you mean `{name}`?"));
        }
        problems.push(Problem::Syntax {
            line: err.span.start.line,
            column: err.span.start.col,
            message,
        });
        let Some(patch) = patch else {
            return (None, problems);
        };
        if let Some(name) = patch.rename_to {
            renamed.push(name);
        }
        if let Some(name) = patch.left_out_field {
            left_out.push(name);
        }
        text = patch.text;
    }
    (None, problems)
}

/// Text patches that let the parser read past an unknown name (see [`parse_listing`]).
mod patch {
    use ron::error::Span;

    /// The patched text and what the patch did.
    pub struct Patch {
        /// The text with the name renamed or its item blanked out.
        pub text: String,
        /// The accepted field name an unknown field was renamed to.
        pub rename_to: Option<&'static str>,
        /// The field whose value (an unknown choice) was left out.
        pub left_out_field: Option<String>,
    }

    /// Renames an unknown field to a close accepted name, or blanks out the field.
    pub fn unknown_field(
        text: &str,
        span: &Span,
        found: &str,
        expected: &[&'static str],
    ) -> Option<Patch> {
        let start = identifier_at(text, span, found)?;
        let end = start + found.len();
        if let Some(name) = closest(found, expected) {
            let mut patched = String::with_capacity(text.len());
            patched.push_str(&text[..start]);
            patched.push_str(name);
            patched.push_str(&text[end..]);
            return Some(Patch {
                text: patched,
                rename_to: Some(name),
                left_out_field: None,
            });
        }
        let colon = skip_blank(text, end);
        if !text[colon..].starts_with(':') {
            return None;
        }
        let item_end = item_end(text, value_end(text, colon + 1)?);
        Some(Patch {
            text: blank(text, start, item_end),
            rename_to: None,
            left_out_field: None,
        })
    }

    /// Blanks out the field or list element whose value is the unknown variant `found`.
    pub fn unknown_variant(text: &str, span: &Span, found: &str) -> Option<Patch> {
        let start = identifier_at(text, span, found)?;
        let end = item_end(text, value_end(text, start)?);
        let before = text[..start].trim_end();
        if let Some(field) = before.strip_suffix(':') {
            let field = field.trim_end();
            let name_start = field
                .char_indices()
                .rev()
                .take_while(|&(_, c)| is_identifier_char(c))
                .last()
                .map(|(i, _)| i)?;
            return Some(Patch {
                text: blank(text, name_start, end),
                rename_to: None,
                left_out_field: Some(field[name_start..].to_string()),
            });
        }
        // An element of a list: the list stays valid without it.
        if before.ends_with('[') || before.ends_with(',') {
            return Some(Patch {
                text: blank(text, start, end),
                rename_to: None,
                left_out_field: None,
            });
        }
        None
    }

    /// The accepted name at most two edits from `found` and closer than any other.
    fn closest(found: &str, expected: &[&'static str]) -> Option<&'static str> {
        let mut ranked: Vec<(usize, &'static str)> = expected
            .iter()
            .map(|&e| (edit_distance(found, e), e))
            .collect();
        ranked.sort();
        match ranked.as_slice() {
            [(d, name), rest @ ..] if *d <= 2 && rest.first().is_none_or(|(d2, _)| d2 > d) => {
                Some(name)
            }
            _ => None,
        }
    }

    /// Levenshtein distance: insertions, deletions and substitutions of characters.
    fn edit_distance(a: &str, b: &str) -> usize {
        let b: Vec<char> = b.chars().collect();
        let mut row: Vec<usize> = (0..=b.len()).collect();
        for (i, ca) in a.chars().enumerate() {
            let mut diagonal = row[0];
            row[0] = i + 1;
            for (j, &cb) in b.iter().enumerate() {
                let next = (diagonal + usize::from(ca != cb))
                    .min(row[j] + 1)
                    .min(row[j + 1] + 1);
                diagonal = row[j + 1];
                row[j + 1] = next;
            }
        }
        row[b.len()]
    }

    fn is_identifier_char(c: char) -> bool {
        c.is_alphanumeric() || c == '_'
    }

    /// Byte offset of a 1-based line and character column.
    fn offset(text: &str, line: usize, column: usize) -> usize {
        let line_start = text
            .split_inclusive('\n')
            .take(line.saturating_sub(1))
            .map(str::len)
            .sum::<usize>();
        text[line_start..]
            .char_indices()
            .nth(column.saturating_sub(1))
            .map_or(text.len(), |(i, _)| line_start + i)
    }

    /// Where the identifier `found` the parser complained about starts: at the span's start,
    /// or else its last whole-word occurrence on that line before the span's end.
    fn identifier_at(text: &str, span: &Span, found: &str) -> Option<usize> {
        let whole_word = |at: usize| {
            text[at..].starts_with(found)
                && !text[..at]
                    .chars()
                    .next_back()
                    .is_some_and(is_identifier_char)
                && !text[at + found.len()..]
                    .chars()
                    .next()
                    .is_some_and(is_identifier_char)
        };
        let start = offset(text, span.start.line, span.start.col);
        if !found.is_empty() && whole_word(start) {
            return Some(start);
        }
        let line_start = text[..start].rfind('\n').map_or(0, |i| i + 1);
        let end = offset(text, span.end.line, span.end.col).max(start);
        let line_end = text[end..].find('\n').map_or(text.len(), |i| end + i);
        text[line_start..line_end]
            .match_indices(found)
            .map(|(i, _)| line_start + i)
            .filter(|&at| at <= end && whole_word(at))
            .last()
    }

    /// Skips spaces and comments from `at`.
    fn skip_blank(text: &str, mut at: usize) -> usize {
        loop {
            let rest = &text[at..];
            let trimmed = rest.trim_start();
            at += rest.len() - trimmed.len();
            if trimmed.starts_with("//") {
                at += trimmed.find('\n').unwrap_or(trimmed.len());
            } else if trimmed.starts_with("/*") {
                at += trimmed.find("*/").map_or(trimmed.len(), |i| i + 2);
            } else {
                return at;
            }
        }
    }

    /// The end of the value that starts at or after `at`: the first `,` or unmatched closing
    /// bracket outside strings, characters, comments and brackets.
    fn value_end(text: &str, at: usize) -> Option<usize> {
        let bytes = text.as_bytes();
        let mut depth = 0usize;
        let mut i = skip_blank(text, at);
        while i < bytes.len() {
            match bytes[i] {
                b'"' => {
                    i += 1;
                    while i < bytes.len() && bytes[i] != b'"' {
                        i += if bytes[i] == b'\\' { 2 } else { 1 };
                    }
                }
                b'\'' => {
                    i += 1;
                    while i < bytes.len() && bytes[i] != b'\'' {
                        i += if bytes[i] == b'\\' { 2 } else { 1 };
                    }
                }
                b'/' if matches!(bytes.get(i + 1), Some(b'/' | b'*')) => {
                    i = skip_blank(text, i);
                    continue;
                }
                b'(' | b'[' | b'{' => depth += 1,
                b')' | b']' | b'}' if depth == 0 => return Some(i),
                b')' | b']' | b'}' => depth -= 1,
                b',' if depth == 0 => return Some(i),
                _ => {}
            }
            i += 1;
        }
        None
    }

    /// The end of an item whose value ends at `value_end`: past its comma, if it has one.
    fn item_end(text: &str, value_end: usize) -> usize {
        if text[value_end..].starts_with(',') {
            value_end + 1
        } else {
            value_end
        }
    }

    /// `text` with `start..end` overwritten by spaces, line breaks kept.
    fn blank(text: &str, start: usize, end: usize) -> String {
        let mut out = String::with_capacity(text.len());
        out.push_str(&text[..start]);
        out.extend(
            text[start..end]
                .chars()
                .map(|c| if c == '\n' { '\n' } else { ' ' }),
        );
        out.push_str(&text[end..]);
        out
    }
}

/// The parser's message with a hint on how to fix the common mistakes.
pub(crate) fn syntax_message(code: &ron::Error) -> String {
    let hint = match code {
        ron::Error::NoSuchStructField { .. } => {
            "; remove it or fix its spelling (every field is listed in cases/README.md)"
        }
        ron::Error::MissingStructField { .. } => "; add it (see cases/README.md)",
        ron::Error::NoSuchEnumVariant { .. } => "; use one of the listed choices",
        _ => "",
    };
    format!("{code}{hint}")
}

/// Writes a case as RON text that [`parse_str`] reads back to an equal case.
pub fn to_ron(case: &Case) -> String {
    let config = ron::ser::PrettyConfig::new()
        .extensions(ron::extensions::Extensions::IMPLICIT_SOME)
        .struct_names(false);
    ron::Options::default()
        .to_string_pretty(case, config)
        .expect("every case type serialises to RON")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_field_with_an_unknown_choice_is_left_out_and_not_reported_missing() {
        // `side` is required: leaving it out with its unknown choice must not add a
        // "missing field" problem, and the listing ends there.
        let text = include_str!("../tests/base.ron").replace("(side: Top)", "(side: Tpo)");
        let (case, problems) = parse_listing(&text);
        assert!(case.is_none());
        assert_eq!(problems.len(), 1, "{problems:?}");
        assert!(problems[0].to_string().contains("`Tpo`"), "{}", problems[0]);
    }

    #[test]
    fn a_misspelt_field_beside_its_correct_spelling_is_reported_once() {
        let text = include_str!("../tests/base.ron").replace(
            "smoothing_ratio: 1.3",
            "smoothing_ratio: 1.3, smoothing_rate: 1.2",
        );
        let (case, problems) = parse_listing(&text);
        assert!(case.is_none());
        assert_eq!(problems.len(), 1, "{problems:?}");
    }

    #[test]
    fn syntax_errors_carry_line_and_column() {
        let problem = parse_unvalidated("(\n  dimension: 2,\n  domian: ()\n)").unwrap_err();
        match problem {
            Problem::Syntax { line, column, .. } => assert_eq!((line, column), (3, 3)),
            other => panic!("expected a syntax problem, got {other:?}"),
        }
    }
}
