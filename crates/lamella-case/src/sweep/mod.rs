//! Parameter sweeps: a sweep file names a base case and the numbers to vary in it, each by its
//! field path; [`load`] reads it and its base case, and [`expand`] makes one validated case
//! per member. Reading touches the sweep file and the base case file, nothing else.
//!
//! ```ron
//! (
//!     base: "interface-growth.ron",          // relative to the sweep file
//!     combine: Grid,                          // Grid (every combination) or Zip (side by side)
//!     parameters: [
//!         (path: "phases[0].viscosity_law.viscosity", values: Log(start: 2e-3, end: 2e-2, count: 3)),
//!         (path: "regions[0].top", values: List([4e-4, 6e-4]), group: "interface"),
//!         (path: "regions[1].bottom", values: List([4e-4, 6e-4]), group: "interface"),
//!     ],
//! )
//! ```
//!
//! With `Grid`, parameters of one `group` move together (zipped) and the groups (a parameter
//! without a group is a group of its own) are combined in every way, the first one varying
//! slowest. With `Zip`, every parameter moves together.

mod path;

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{CaseError, Problem, num};
use crate::schema::Case;

/// Most members one sweep may have: far above what a cluster allocation runs, and it keeps a
/// mistyped count from generating millions of cases.
pub const MAX_MEMBERS: usize = 10_000;

/// A sweep file, exactly as written (RON; unknown fields are errors).
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct SweepFile {
    /// The base case file, relative to the sweep file's folder (or absolute).
    pub base: String,
    /// How the parameters' values are combined into members [default: Grid].
    #[serde(default)]
    pub combine: Combine,
    /// The numbers to vary.
    pub parameters: Vec<Parameter>,
}

/// How the values of several parameters make members.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Combine {
    /// Every combination of the groups' values (a parameter without a group is its own group).
    #[default]
    Grid,
    /// The k-th member takes the k-th value of every parameter; all need equally many values.
    Zip,
}

/// One varied number of the case.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Parameter {
    /// Field path into the case, e.g. `phases[0].viscosity_law.viscosity`.
    pub path: String,
    /// Its values.
    pub values: Values,
    /// Parameters of one group move together (zipped) in a `Grid` [default: its own group].
    #[serde(default)]
    pub group: Option<String>,
}

/// The values of a parameter.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub enum Values {
    /// These values, in this order.
    List(Vec<f64>),
    /// `count` evenly spaced values from `start` to `end`, both included.
    Linear {
        /// First value.
        start: f64,
        /// Last value.
        end: f64,
        /// Number of values, at least 1.
        count: usize,
    },
    /// `count` values from `start` to `end` (both included, both positive), evenly spaced in
    /// their logarithm.
    Log {
        /// First value (> 0).
        start: f64,
        /// Last value (> 0).
        end: f64,
        /// Number of values, at least 1.
        count: usize,
    },
}

impl Values {
    /// The values, or what valid values would be.
    pub fn expand(&self) -> Result<Vec<f64>, String> {
        let (start, end, count) = match self {
            Values::List(list) if list.is_empty() => {
                return Err("at least one value (the list is empty)".into());
            }
            Values::List(list) => {
                return match list.iter().find(|v| !v.is_finite()) {
                    Some(v) => Err(format!("finite numbers ({v} is not)")),
                    None => Ok(list.clone()),
                };
            }
            Values::Linear { start, end, count } | Values::Log { start, end, count } => {
                (*start, *end, *count)
            }
        };
        if count == 0 {
            return Err("count ≥ 1 (count: 0 makes an empty range)".into());
        }
        if !(start.is_finite() && end.is_finite()) {
            return Err(format!("a finite start and end, not {start} and {end}"));
        }
        let log = matches!(self, Values::Log { .. });
        if log && !(start > 0.0 && end > 0.0) {
            return Err(format!(
                "a positive start and end for a log range, not {} and {}; use Linear for \
                 values that reach zero or below",
                num(start),
                num(end)
            ));
        }
        let last = count - 1;
        Ok((0..count)
            .map(|k| match k {
                0 => start,
                k if k == last => end,
                k if log => start * (end / start).powf(k as f64 / last as f64),
                k => {
                    let t = k as f64 / last as f64;
                    start * (1.0 - t) + end * t
                }
            })
            .collect())
    }
}

/// One member of a sweep: its index, the values of the parameters and its case.
#[derive(Clone, Debug, PartialEq)]
pub struct Member {
    /// Position in the sweep, from 0.
    pub index: usize,
    /// The value of every parameter, in the order of the sweep file.
    pub values: Vec<f64>,
    /// The base case with these values set (validated).
    pub case: Case,
}

/// A sweep read from its file: the base case and the members.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// The sweep file, as its messages name it.
    pub origin: String,
    /// The base case file.
    pub base_path: PathBuf,
    /// The field path of every parameter, in the order of the sweep file.
    pub parameters: Vec<String>,
    /// The members, in index order.
    pub members: Vec<Member>,
}

impl Sweep {
    /// "member 3 (regions[0].top = 4e-4, …)": a member and its values, for messages.
    pub fn label(&self, member: usize, values: &[f64]) -> String {
        label(&self.parameters, member, values)
    }
}

fn label(parameters: &[String], member: usize, values: &[f64]) -> String {
    let set: Vec<String> = parameters
        .iter()
        .zip(values)
        .map(|(p, v)| format!("{p} = {}", num(*v)))
        .collect();
    format!("member {member} ({})", set.join(", "))
}

/// Reads and parses the sweep file at `path`, loads its base case (relative to the sweep
/// file's folder) and expands the members ([`expand`]). The error lists every problem: of the
/// sweep file (named by its field path, e.g. `parameters[1].path`) or of any member's case
/// (named by the member and its values).
pub fn load(path: &Path) -> Result<Sweep, CaseError> {
    let text = crate::load::read_text(path, "sweep file")?;
    let origin = path.display().to_string();
    let file = parse_str(&text, &origin)?;
    let base_path = path.parent().unwrap_or(Path::new("")).join(&file.base);
    let base = crate::load(&base_path).map_err(|mut err| {
        err.origin = format!("{} (the base case of {origin})", err.origin);
        err
    })?;
    expand(&file, &base, &origin, base_path)
}

/// Parses sweep file text (an optional field is written without `Some`); `origin` names it
/// in messages.
pub fn parse_str(text: &str, origin: &str) -> Result<SweepFile, CaseError> {
    ron::Options::default()
        .with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
        .from_str::<SweepFile>(text)
        .map_err(|err| CaseError {
            origin: origin.to_string(),
            problems: vec![Problem::Syntax {
                line: err.span.start.line,
                column: err.span.start.col,
                message: crate::load::syntax_message(&err.code).replace(
                    "cases/README.md",
                    "the sweep file reference in cases/README.md",
                ),
            }],
        })
}

/// The members of `file` over the case `base` (from `base_path`), each validated; `origin`
/// names the sweep file in messages.
pub fn expand(
    file: &SweepFile,
    base: &Case,
    origin: &str,
    base_path: PathBuf,
) -> Result<Sweep, CaseError> {
    let refuse = |problems: Vec<Problem>| CaseError {
        origin: origin.to_string(),
        problems,
    };
    let tree = serde_json::to_value(base).map_err(|err| {
        refuse(vec![Problem::File {
            message: format!("the base case cannot be edited: {err}"),
        }])
    })?;
    let mut problems = Vec::new();
    if file.parameters.is_empty() {
        problems.push(Problem::value(
            "parameters",
            "[]",
            "at least one parameter to vary",
        ));
    }
    let mut steps = Vec::new();
    let mut values = Vec::new();
    for (i, parameter) in file.parameters.iter().enumerate() {
        let at = |field: &str| format!("parameters[{i}].{field}");
        let parsed = path::parse(&parameter.path).and_then(|s| {
            // The first value shows whether the path leads to a number.
            path::set(&mut tree.clone(), &s, 0.0).map(|()| s)
        });
        match parsed {
            Ok(s) => steps.push(s),
            Err(why) => problems.push(Problem::value(
                at("path"),
                format!("{:?}", parameter.path),
                format!("a field path to a number of the base case: {why}"),
            )),
        }
        if file.parameters[..i]
            .iter()
            .any(|p| p.path == parameter.path)
        {
            problems.push(Problem::value(
                at("path"),
                format!("{:?}", parameter.path),
                "a path no other parameter varies".to_string(),
            ));
        }
        match parameter.values.expand() {
            Ok(v) => values.push(v),
            Err(why) => {
                let written = ron::to_string(&parameter.values).unwrap_or_default();
                problems.push(Problem::value(at("values"), written, why));
                values.push(Vec::new());
            }
        }
        if file.combine == Combine::Zip && parameter.group.is_some() {
            problems.push(Problem::value(
                at("group"),
                format!("{:?}", parameter.group),
                "no group with combine: Zip (every parameter moves together already); remove \
                 it, or use combine: Grid",
            ));
        }
    }
    let groups = groups(file);
    for members in &groups {
        let first = members[0];
        for &j in &members[1..] {
            let (a, b) = (values[first].len(), values[j].len());
            if a != b && a > 0 && b > 0 {
                problems.push(Problem::value(
                    format!("parameters[{j}].values"),
                    format!("{b} values"),
                    format!(
                        "as many values as parameters[{first}] ({}), which moves together with \
                         it (zipped): {a}",
                        file.parameters[first].path
                    ),
                ));
            }
        }
    }
    let count = groups
        .iter()
        .map(|g| values[g[0]].len())
        .try_fold(1usize, |acc, n| acc.checked_mul(n))
        .unwrap_or(usize::MAX);
    if count > MAX_MEMBERS {
        problems.push(Problem::value(
            "parameters",
            format!("{count} members"),
            format!("at most {MAX_MEMBERS} members; split the sweep or use fewer values"),
        ));
    }
    if !problems.is_empty() {
        return Err(refuse(problems));
    }
    let parameters: Vec<String> = file.parameters.iter().map(|p| p.path.clone()).collect();
    let mut members = Vec::with_capacity(count);
    for index in 0..count {
        let member_values = member_values(&groups, &values, index);
        let mut edited = tree.clone();
        let mut found: Vec<String> = Vec::new();
        for (s, &v) in steps.iter().zip(&member_values) {
            if let Err(why) = path::set(&mut edited, s, v) {
                found.push(why);
            }
        }
        let case = match found.is_empty() {
            true => Case::deserialize(edited).map_err(|err| vec![err.to_string()]),
            false => Err(found),
        };
        let name = label(&parameters, index, &member_values);
        match case {
            Ok(case) => {
                for problem in case.validate() {
                    problems.push(in_member(&name, problem));
                }
                members.push(Member {
                    index,
                    values: member_values,
                    case,
                });
            }
            Err(whys) => {
                for why in whys {
                    problems.push(Problem::value(name.clone(), "", why));
                }
            }
        }
    }
    if !problems.is_empty() {
        return Err(refuse(problems));
    }
    Ok(Sweep {
        origin: origin.to_string(),
        base_path,
        parameters,
        members,
    })
}

/// A problem of a member's case, named by the member and its values (`label`).
pub fn in_member(label: &str, problem: Problem) -> Problem {
    match problem {
        Problem::Value {
            path,
            value,
            expected,
        } => Problem::value(format!("{label}: {path}"), value, expected),
        other => Problem::value(label, "", other.to_string()),
    }
}

/// The parameter indices of each group, in order of first appearance: one group for `Zip`,
/// and under `Grid` the parameters sharing a `group` name together, every other one alone.
fn groups(file: &SweepFile) -> Vec<Vec<usize>> {
    if file.combine == Combine::Zip {
        return vec![(0..file.parameters.len()).collect()];
    }
    let mut groups: Vec<(Option<&str>, Vec<usize>)> = Vec::new();
    for (i, p) in file.parameters.iter().enumerate() {
        match groups
            .iter_mut()
            .find(|(name, _)| name.is_some() && *name == p.group.as_deref())
        {
            Some((_, members)) => members.push(i),
            None => groups.push((p.group.as_deref(), vec![i])),
        }
    }
    groups.into_iter().map(|(_, members)| members).collect()
}

/// The values of every parameter in member `index` of the grid over `groups` (the first group
/// varies slowest).
fn member_values(groups: &[Vec<usize>], values: &[Vec<f64>], index: usize) -> Vec<f64> {
    let mut out = vec![0.0; values.len()];
    let mut rest = index;
    for group in groups.iter().rev() {
        let len = values[group[0]].len();
        let k = rest % len;
        rest /= len;
        for &p in group {
            out[p] = values[p][k];
        }
    }
    out
}

#[cfg(test)]
mod tests;
