//! Problems found in a case file, and the error that lists all of them.

use std::fmt;

/// One thing wrong with a case file.
#[derive(Clone, Debug, PartialEq)]
pub enum Problem {
    /// The text is not valid RON for a case (includes unknown and missing fields).
    Syntax {
        /// Line, counted from 1.
        line: usize,
        /// Column, counted from 1.
        column: usize,
        /// What the parser found and expected.
        message: String,
    },
    /// A field has a value that makes no sense.
    Value {
        /// Field path, e.g. `phases[1].viscosity_law.viscosity`.
        path: String,
        /// The offending value as written.
        value: String,
        /// What would be valid.
        expected: String,
    },
    /// The file (or the output folder) cannot be read or written.
    File {
        /// What went wrong and what to do.
        message: String,
    },
}

impl Problem {
    /// A bad value at `path`.
    pub fn value(
        path: impl Into<String>,
        value: impl Into<String>,
        expected: impl Into<String>,
    ) -> Problem {
        Problem::Value {
            path: path.into(),
            value: value.into(),
            expected: expected.into(),
        }
    }

    /// The field path for value problems.
    pub fn path(&self) -> Option<&str> {
        match self {
            Problem::Value { path, .. } => Some(path),
            _ => None,
        }
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Problem::Syntax {
                line,
                column,
                message,
            } => write!(f, "{line}:{column}: {message}"),
            Problem::Value {
                path,
                value,
                expected,
            } => write!(f, "{path}: bad value {value}; expected {expected}"),
            Problem::File { message } => f.write_str(message),
        }
    }
}

/// Advice about a valid case: something that works but is outside common practice.
#[derive(Clone, Debug, PartialEq)]
pub struct Warning {
    /// Field path the advice is about.
    pub path: String,
    /// The advice.
    pub message: String,
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.path, self.message)
    }
}

/// Every problem found in one case file.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseError {
    /// The file (or other origin) the case came from.
    pub origin: String,
    /// All problems found, in file order for syntax and field order for meaning.
    pub problems: Vec<Problem>,
}

impl fmt::Display for CaseError {
    /// One line per problem: `file:line:col: message` for syntax, `file: path: bad value X;
    /// expected Y` for meaning.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (i, problem) in self.problems.iter().enumerate() {
            if i > 0 {
                writeln!(f)?;
            }
            match problem {
                Problem::Syntax { .. } => write!(f, "{}:{problem}", self.origin)?,
                _ => write!(f, "{}: {problem}", self.origin)?,
            }
        }
        Ok(())
    }
}

impl std::error::Error for CaseError {}

/// Formats a number for messages: plain for moderate magnitudes, scientific otherwise.
pub(crate) fn num(x: f64) -> String {
    let a = x.abs();
    if x == 0.0 || (1e-3..1e5).contains(&a) || !x.is_finite() {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// Formats a computed suggestion with nine significant digits (enough to tile a domain).
pub(crate) fn approx(x: f64) -> String {
    let rounded: f64 = format!("{x:.8e}").parse().unwrap_or(x);
    num(rounded)
}

/// Formats a vector for messages, as it is written in RON.
pub(crate) fn vec_str(v: &[f64]) -> String {
    let parts: Vec<String> = v.iter().map(|&x| num(x)).collect();
    format!("[{}]", parts.join(", "))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_lists_every_problem_with_its_origin() {
        let err = CaseError {
            origin: "a.ron".into(),
            problems: vec![
                Problem::Syntax {
                    line: 3,
                    column: 7,
                    message: "unexpected `]`".into(),
                },
                Problem::value("phases[0].density", "-1", "a positive density in kg/m³"),
            ],
        };
        assert_eq!(
            err.to_string(),
            "a.ron:3:7: unexpected `]`\n\
             a.ron: phases[0].density: bad value -1; expected a positive density in kg/m³"
        );
    }

    #[test]
    fn numbers_print_compactly() {
        assert_eq!(num(0.001), "0.001");
        assert_eq!(num(2.5e-5), "2.5e-5");
        assert_eq!(num(1000.0), "1000");
        assert_eq!(vec_str(&[0.0, 1.5]), "[0, 1.5]");
        assert_eq!(approx(1.0e-3 / 33.0), "3.03030303e-5");
    }
}
