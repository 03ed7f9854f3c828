//! Reading a case: file → text → `Case`, with every problem reported.

use std::fs;
use std::path::Path;

use crate::error::{CaseError, Problem};
use crate::schema::Case;

/// Reads, parses and validates a case file. It touches no other file: whether `output.folder`
/// can be written is the runner's question (`lamella_run::feasibility::load_case`).
///
/// Errors list every problem found (a syntax error stops parsing, so there is at most one).
pub fn load(path: &Path) -> Result<Case, CaseError> {
    let origin = path.display().to_string();
    let refuse = |problem: Problem| CaseError {
        origin: origin.clone(),
        problems: vec![problem],
    };
    let cannot_read = |err: std::io::Error| Problem::File {
        message: format!("cannot read the case file: {err}; check the path and permissions"),
    };
    // A FIFO or device would block or never end: only regular files are read.
    let metadata = fs::metadata(path).map_err(|err| refuse(cannot_read(err)))?;
    if !metadata.is_file() {
        return Err(refuse(Problem::File {
            message: "is not a regular file (a folder, FIFO or device); give the path of a \
                      case file"
                .into(),
        }));
    }
    let bytes = fs::read(path).map_err(|err| refuse(cannot_read(err)))?;
    let text = utf8_text(&bytes).map_err(refuse)?;
    parse_str(text, &origin)
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
/// Does not touch the file system (the output folder is checked by [`load`]).
pub fn parse_str(text: &str, origin: &str) -> Result<Case, CaseError> {
    let case = parse_unvalidated(text).map_err(|problem| CaseError {
        origin: origin.to_string(),
        problems: vec![problem],
    })?;
    let problems = case.validate();
    if problems.is_empty() {
        Ok(case)
    } else {
        Err(CaseError {
            origin: origin.to_string(),
            problems,
        })
    }
}

/// Parses case text without validating its values.
pub fn parse_unvalidated(text: &str) -> Result<Case, Problem> {
    ron::Options::default()
        .from_str::<Case>(text)
        .map_err(|err| Problem::Syntax {
            line: err.span.start.line,
            column: err.span.start.col,
            message: syntax_message(&err.code),
        })
}

/// The parser's message with a hint on how to fix the common mistakes.
fn syntax_message(code: &ron::Error) -> String {
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
    fn syntax_errors_carry_line_and_column() {
        let problem = parse_unvalidated("(\n  dimension: 2,\n  domian: ()\n)").unwrap_err();
        match problem {
            Problem::Syntax { line, column, .. } => assert_eq!((line, column), (3, 3)),
            other => panic!("expected a syntax problem, got {other:?}"),
        }
    }
}
