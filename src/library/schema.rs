//! The material file's JSON Schema (`material.schema.json`, compiled in) and a validator for
//! the subset of JSON Schema 2020-12 it uses.
//!
//! The schema file is the one description of the format: Python's `jsonschema` validates the
//! committed example against it in `tests/reference/`, and this validator interprets the same
//! file at run time. Regular-expression `pattern`s are not interpreted generally; each pattern
//! the schema uses is mapped to a Rust check that accepts exactly the same strings, and an
//! unknown pattern or keyword is reported as a fault (fail closed).

use super::{id, timefmt};
use serde_json::Value;
use std::sync::OnceLock;

/// The schema text, as committed.
pub const SCHEMA_TEXT: &str = include_str!("material.schema.json");

const ID_PATTERN: &str = "^[a-z0-9][a-z0-9._-]{0,63}$";
const SHA256_PATTERN: &str = "^[0-9a-f]{64}$";
const TIME_PATTERN: &str = "^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z$";

/// The parsed schema (`Null` if the compiled-in text were unreadable, which a test rules out).
pub fn schema() -> &'static Value {
    static SCHEMA: OnceLock<Value> = OnceLock::new();
    SCHEMA.get_or_init(|| serde_json::from_str(SCHEMA_TEXT).unwrap_or(Value::Null))
}

/// Every way `doc` departs from the schema, as `at /json/pointer: problem`; empty when valid.
pub fn validate(doc: &Value) -> Vec<String> {
    let root = schema();
    let mut errors = Vec::new();
    if !root.is_object() {
        errors.push("the built-in material schema is unreadable".to_string());
        return errors;
    }
    check(root, root, doc, "", &mut errors);
    errors
}

/// Whether `s` is lower-case hex SHA-256 text.
pub fn is_sha256_hex(s: &str) -> bool {
    s.len() == 64
        && s.bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

fn pattern_matches(pattern: &str, s: &str) -> Option<bool> {
    match pattern {
        ID_PATTERN => Some(id::validate_id(s).is_ok()),
        SHA256_PATTERN => Some(is_sha256_hex(s)),
        TIME_PATTERN => Some(timefmt::has_rfc3339_shape(s)),
        _ => None,
    }
}

fn check(root: &Value, schema: &Value, v: &Value, at: &str, errors: &mut Vec<String>) {
    let Some(rules) = schema.as_object() else {
        if schema != &Value::Bool(true) {
            errors.push(format!(
                "at {}: unsupported sub-schema {}",
                at_or_root(at),
                schema
            ));
        }
        return;
    };
    let mut fail = |msg: String| errors.push(format!("at {}: {}", at_or_root(at), msg));
    let mut nested: Vec<(&Value, &Value, String)> = Vec::new();
    for (keyword, arg) in rules {
        match keyword.as_str() {
            "$schema" | "$id" | "title" | "description" | "$defs" | "$comment" => {}
            "$ref" => match arg
                .as_str()
                .and_then(|r| r.strip_prefix("#/"))
                .and_then(|p| root.pointer(&format!("/{}", p)))
            {
                Some(target) => nested.push((target, v, at.to_string())),
                None => fail(format!("unresolvable $ref {}", arg)),
            },
            "type" => {
                let types: Vec<&str> = match arg {
                    Value::String(t) => vec![t.as_str()],
                    Value::Array(a) => a.iter().filter_map(Value::as_str).collect(),
                    _ => vec![],
                };
                if !types.iter().any(|t| has_type(v, t)) {
                    fail(format!(
                        "expected {}, found {}",
                        types.join(" or "),
                        type_name(v)
                    ));
                }
            }
            "required" => {
                if let Value::Object(o) = v {
                    for name in arg
                        .as_array()
                        .into_iter()
                        .flatten()
                        .filter_map(Value::as_str)
                    {
                        if !o.contains_key(name) {
                            fail(format!("missing required field '{}'", name));
                        }
                    }
                }
            }
            "properties" => {
                if let (Value::Object(o), Some(props)) = (v, arg.as_object()) {
                    for (name, sub) in props {
                        if let Some(x) = o.get(name) {
                            nested.push((sub, x, format!("{}/{}", at, name)));
                        }
                    }
                }
            }
            "additionalProperties" => {
                if let Value::Object(o) = v {
                    let known = rules.get("properties").and_then(Value::as_object);
                    for (name, x) in o
                        .iter()
                        .filter(|(n, _)| !known.is_some_and(|k| k.contains_key(*n)))
                    {
                        match arg {
                            Value::Bool(false) => fail(format!("unexpected field '{}'", name)),
                            Value::Bool(true) => {}
                            sub => nested.push((sub, x, format!("{}/{}", at, name))),
                        }
                    }
                }
            }
            "items" => {
                if let Value::Array(a) = v {
                    nested.extend(
                        a.iter()
                            .enumerate()
                            .map(|(i, x)| (arg, x, format!("{}/{}", at, i))),
                    );
                }
            }
            "minItems" => {
                if let (Value::Array(a), Some(n)) = (v, arg.as_u64()) {
                    if (a.len() as u64) < n {
                        fail(format!("expected at least {} items, found {}", n, a.len()));
                    }
                }
            }
            "minimum" | "exclusiveMinimum" => {
                if let (Some(x), Some(limit)) = (v.as_f64(), arg.as_f64()) {
                    let below = if keyword == "minimum" {
                        x < limit
                    } else {
                        x <= limit
                    };
                    if below {
                        let op = if keyword == "minimum" { "≥" } else { ">" };
                        fail(format!("expected a value {} {}, found {}", op, limit, x));
                    }
                }
            }
            "minLength" => {
                if let (Value::String(s), Some(n)) = (v, arg.as_u64()) {
                    if (s.chars().count() as u64) < n {
                        fail(format!("expected at least {} characters", n));
                    }
                }
            }
            "pattern" => {
                if let Value::String(s) = v {
                    match pattern_matches(arg.as_str().unwrap_or(""), s) {
                        Some(true) => {}
                        Some(false) => fail(format!("{:?} does not match {}", s, arg)),
                        None => fail(format!("schema pattern {} is not supported", arg)),
                    }
                }
            }
            "enum" => {
                if !arg
                    .as_array()
                    .is_some_and(|a| a.iter().any(|c| json_eq(c, v)))
                {
                    fail(format!("expected one of {}, found {}", arg, v));
                }
            }
            "const" => {
                if !json_eq(arg, v) {
                    fail(format!("expected {}, found {}", arg, v));
                }
            }
            other => fail(format!("schema keyword '{}' is not supported", other)),
        }
    }
    for (sub, x, path) in nested {
        check(root, sub, x, &path, errors);
    }
}

fn at_or_root(at: &str) -> &str {
    if at.is_empty() {
        "/"
    } else {
        at
    }
}

/// JSON Schema equality: numbers compare by value (1 equals 1.0).
fn json_eq(a: &Value, b: &Value) -> bool {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => x.as_f64() == y.as_f64(),
        _ => a == b,
    }
}

fn has_type(v: &Value, t: &str) -> bool {
    match t {
        "object" => v.is_object(),
        "array" => v.is_array(),
        "string" => v.is_string(),
        "boolean" => v.is_boolean(),
        "null" => v.is_null(),
        "number" => v.is_number(),
        // JSON Schema counts 2.0 as an integer.
        "integer" => v.is_u64() || v.is_i64() || v.as_f64().is_some_and(|x| x.fract() == 0.0),
        _ => false,
    }
}

fn type_name(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "boolean",
        Value::Number(_) => "number",
        Value::String(_) => "string",
        Value::Array(_) => "array",
        Value::Object(_) => "object",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::TermKind;
    use serde_json::json;

    #[test]
    fn schema_parses_and_names_every_term_kind() {
        let kinds = schema()
            .pointer("/$defs/term/properties/kind/enum")
            .and_then(Value::as_array)
            .unwrap();
        let names: Vec<&str> = kinds.iter().filter_map(Value::as_str).collect();
        assert_eq!(
            names,
            TermKind::ALL.iter().map(|k| k.name()).collect::<Vec<_>>()
        );
    }

    #[test]
    fn reports_each_problem_with_its_place() {
        let errs = validate(&json!({"schema_version": 2, "material": "Bad Id", "extra": 1}));
        let text = errs.join("\n");
        assert!(text.contains("at /schema_version: expected 1"), "{text}");
        assert!(text.contains("at /material:"), "{text}");
        assert!(text.contains("unexpected field 'extra'"), "{text}");
        assert!(text.contains("missing required field 'sha256'"), "{text}");
    }

    #[test]
    fn integer_and_number_follow_json_schema() {
        assert!(has_type(&json!(2.0), "integer") && !has_type(&json!(2.5), "integer"));
        assert!(json_eq(&json!(1), &json!(1.0)));
    }
}

/// Verdicts of Python's `jsonschema` (Draft 2020-12 validator, PyPI) on the committed example
/// and single-change variants of it (tests/reference/material_schema_cases.py): this validator
/// must agree on every one.
#[cfg(test)]
mod jsonschema_reference {
    use super::*;

    #[test]
    fn agrees_with_python_jsonschema_on_every_reference_case() {
        let cases: Value = serde_json::from_str(include_str!(
            "../../tests/reference/material_schema_cases.json"
        ))
        .unwrap();
        let cases = cases["cases"].as_array().unwrap();
        assert!(
            cases.len() >= 30
                && cases.iter().any(|c| c["valid"] == true)
                && cases.iter().any(|c| c["valid"] == false)
        );
        for c in cases {
            let errors = validate(&c["document"]);
            assert_eq!(
                errors.is_empty(),
                c["valid"].as_bool().unwrap(),
                "case '{}': ours {:?}, jsonschema {}",
                c["name"],
                errors,
                c["errors"]
            );
        }
    }
}
