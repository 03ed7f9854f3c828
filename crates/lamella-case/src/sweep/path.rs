//! Setting one number of a case by its field path (`phases[0].viscosity_law.viscosity`,
//! `regions[1].bottom`, `body_force[0]`), generically, on the case's serde data model.
//!
//! The case is serialised to a [`serde_json::Value`] (an in-memory tree, nothing is written as
//! JSON), which keeps every field of every struct and the name of every enum variant as a
//! one-key object (`{"Layer": {"phase": …, "bottom": …, "top": …}}`), the number is set there,
//! and the tree is deserialised back into a [`Case`](crate::Case) and validated.

use serde_json::{Number, Value};

/// One step of a field path.
#[derive(Clone, Debug, PartialEq)]
pub enum Step {
    /// A field of a struct (or of the struct variant an enum holds).
    Field(String),
    /// An element of a list.
    Index(usize),
}

/// Parses a field path such as `phases[0].viscosity_law.viscosity`: field names joined by
/// dots, each followed by any number of `[index]`.
pub fn parse(path: &str) -> Result<Vec<Step>, String> {
    let bad = |why: &str| {
        format!(
            "`{path}` is not a field path ({why}); write it like `phases[0].viscosity_law.viscosity`"
        )
    };
    if path.trim().is_empty() {
        return Err(bad("it is empty"));
    }
    let mut steps = Vec::new();
    for part in path.split('.') {
        let (name, mut rest) = part.split_at(part.find('[').unwrap_or(part.len()));
        let is_name =
            !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
        if !is_name {
            return Err(bad(&format!("`{part}` does not start with a field name")));
        }
        steps.push(Step::Field(name.to_string()));
        while !rest.is_empty() {
            let close = rest
                .find(']')
                .filter(|_| rest.starts_with('['))
                .ok_or_else(|| bad(&format!("`{rest}` is not an index like [0]")))?;
            let index = rest[1..close]
                .parse::<usize>()
                .map_err(|_| bad(&format!("`{}` is not an index like [0]", &rest[..=close])))?;
            steps.push(Step::Index(index));
            rest = &rest[close + 1..];
        }
    }
    Ok(steps)
}

/// What a tree node is, for messages.
fn kind(value: &Value) -> &'static str {
    match value {
        Value::Null => "not set (None)",
        Value::Bool(_) => "a true/false setting",
        Value::Number(_) => "a number",
        Value::String(_) => "a name or a choice",
        Value::Array(_) => "a list",
        Value::Object(_) => "a group of fields",
    }
}

/// The struct fields of `value`: its own, or those of the one struct variant it holds.
fn fields(value: &mut Value) -> Option<&mut serde_json::Map<String, Value>> {
    let Value::Object(map) = value else {
        return None;
    };
    let variant = map.len() == 1
        && map
            .iter()
            .next()
            .is_some_and(|(k, v)| k.starts_with(|c: char| c.is_ascii_uppercase()) && v.is_object());
    if variant {
        return map.values_mut().next().and_then(Value::as_object_mut);
    }
    Some(map)
}

/// Sets the number at `steps` in `root` to `number`. A field holding a whole number (a count)
/// takes only a whole number. The error says where the path stops making sense and what is
/// there (the valid field names at that level, the length of a list, the kind of value).
pub fn set(root: &mut Value, steps: &[Step], number: f64) -> Result<(), String> {
    let mut node = root;
    let mut walked = String::new();
    for step in steps {
        let here = if walked.is_empty() {
            "the case".to_string()
        } else {
            format!("`{walked}`")
        };
        node = match step {
            Step::Field(name) => {
                let kind_here = kind(node);
                let Some(map) = fields(node) else {
                    return Err(format!("{here} is {kind_here}, it has no field `{name}`"));
                };
                if !map.contains_key(name) {
                    let names: Vec<&str> = map.keys().map(String::as_str).collect();
                    return Err(format!(
                        "{here} has no field `{name}`; its fields are: {}",
                        names.join(", ")
                    ));
                }
                if !walked.is_empty() {
                    walked.push('.');
                }
                walked.push_str(name);
                map.get_mut(name).expect("checked above")
            }
            Step::Index(index) => {
                let kind_here = kind(node);
                let Value::Array(list) = node else {
                    return Err(format!(
                        "{here} is {kind_here}, not a list; give it in the base case first if \
                         it is optional"
                    ));
                };
                let len = list.len();
                let Some(element) = list.get_mut(*index) else {
                    return Err(format!(
                        "{here} has {len} entries, so [{index}] does not exist (indices count \
                         from 0)"
                    ));
                };
                walked.push_str(&format!("[{index}]"));
                element
            }
        };
    }
    let Value::Number(old) = node else {
        return Err(format!(
            "`{walked}` is {}, not a number; a sweep varies numbers",
            kind(node)
        ));
    };
    let whole = number.fract() == 0.0 && number.abs() < 9.0e15;
    *node = Value::Number(if old.is_u64() || old.is_i64() {
        if !whole || (old.is_u64() && number < 0.0) {
            return Err(format!(
                "`{walked}` is a whole number{}; {number} is not",
                if old.is_u64() { " ≥ 0" } else { "" }
            ));
        }
        if number < 0.0 {
            Number::from(number as i64)
        } else {
            Number::from(number as u64)
        }
    } else {
        Number::from_f64(number).ok_or_else(|| format!("`{walked}`: {number} is not finite"))?
    });
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn paths_parse_into_fields_and_indices() {
        assert_eq!(
            parse("phases[0].viscosity_law.viscosity").unwrap(),
            vec![
                Step::Field("phases".into()),
                Step::Index(0),
                Step::Field("viscosity_law".into()),
                Step::Field("viscosity".into()),
            ]
        );
        assert_eq!(
            parse("a[1][2]").unwrap(),
            vec![Step::Field("a".into()), Step::Index(1), Step::Index(2)]
        );
        for bad in ["", "a..b", "a[x]", "a[1", "[0].a", "a b", "a[-1]"] {
            let err = parse(bad).unwrap_err();
            assert!(err.contains("is not a field path"), "{bad}: {err}");
        }
    }

    #[test]
    fn numbers_are_set_through_structs_lists_and_enum_variants() {
        let mut tree = json!({
            "regions": [{"Layer": {"phase": "a", "bottom": 0.0, "top": 0.5}}],
            "layers": 3,
            "body_force": null,
        });
        set(&mut tree, &parse("regions[0].top").unwrap(), 0.25).unwrap();
        assert_eq!(tree["regions"][0]["Layer"]["top"], json!(0.25));
        set(&mut tree, &parse("layers").unwrap(), 4.0).unwrap();
        assert_eq!(tree["layers"], json!(4));
        let err = |path: &str, v: f64| set(&mut tree.clone(), &parse(path).unwrap(), v);
        let unknown = err("regions[0].tpo", 1.0).unwrap_err();
        assert!(
            unknown.contains("`regions[0]` has no field `tpo`; its fields are: ")
                && unknown.contains("bottom")
                && unknown.contains("top"),
            "{unknown}"
        );
        assert!(
            err("regions[2].top", 1.0)
                .unwrap_err()
                .contains("has 1 entries")
        );
        assert!(
            err("regions[0].phase", 1.0)
                .unwrap_err()
                .contains("not a number")
        );
        assert!(
            err("body_force[0]", 1.0)
                .unwrap_err()
                .contains("not a list")
        );
        assert!(err("layers", 2.5).unwrap_err().contains("whole number"));
        assert!(
            err("layers", -1.0)
                .unwrap_err()
                .contains("whole number ≥ 0")
        );
        assert!(
            err("nothing", 1.0)
                .unwrap_err()
                .contains("the case has no field")
        );
    }
}
