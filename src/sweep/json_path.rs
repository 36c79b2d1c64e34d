//! Paths into a JSON document, as a sweep names the model value it varies:
//! `layers[0].albedo`, `layers[1].phase.g`, `source.polar_angle_deg`.
//!
//! Grammar: a key, then any number of `.key` or `[index]`; keys are letters, digits and
//! `_`. Every step but the last must exist in the document; the last may name a key the
//! object does not have yet (the model's own validation then decides whether it is a
//! model-file field), but never an array element past the end.

use std::fmt;
use std::str::FromStr;

use serde_json::Value;
use thiserror::Error;

/// One step of a [`JsonPath`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Segment {
    /// An object key.
    Key(String),
    /// An array index (0-based).
    Index(usize),
}

/// A parsed path such as `layers[0].albedo`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct JsonPath {
    text: String,
    segments: Vec<Segment>,
}

/// A path that does not parse or does not lead anywhere in the document.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum PathError {
    /// Not of the form `key(.key|[index])*`.
    #[error("{path:?} is not a path like layers[0].albedo: {problem}")]
    Syntax {
        /// The path as written.
        path: String,
        /// What is wrong.
        problem: String,
    },
    /// A step of the path is not in the document.
    #[error("{path}: {problem}")]
    NotFound {
        /// The path as written.
        path: String,
        /// Which step is missing and what is there instead.
        problem: String,
    },
}

impl JsonPath {
    /// The steps of the path.
    pub fn segments(&self) -> &[Segment] {
        &self.segments
    }

    /// The path as written.
    pub fn as_str(&self) -> &str {
        &self.text
    }

    /// The value the path names, or `None` if its last key is absent from its object.
    ///
    /// # Errors
    /// [`PathError::NotFound`] when a step before the last is missing, an index is out of
    /// range, or a step goes into a value of the wrong kind.
    pub fn get<'v>(&self, root: &'v Value) -> Result<Option<&'v Value>, PathError> {
        let (parent, last) = self.parent(root)?;
        match last {
            Segment::Key(key) => Ok(parent.get(key)),
            Segment::Index(index) => Ok(parent.get(*index)),
        }
    }

    /// Sets the value the path names (adding the last key to its object if absent).
    ///
    /// # Errors
    /// As for [`JsonPath::get`].
    pub fn set(&self, root: &mut Value, value: Value) -> Result<(), PathError> {
        self.parent(root)?;
        let mut node = root;
        let (last, steps) = self.segments.split_last().expect("paths are never empty");
        for step in steps {
            node = match step {
                Segment::Key(key) => node.get_mut(key),
                Segment::Index(index) => node.get_mut(*index),
            }
            .expect("checked by parent()");
        }
        match last {
            Segment::Key(key) => {
                node.as_object_mut()
                    .expect("checked by parent()")
                    .insert(key.clone(), value);
            }
            Segment::Index(index) => {
                node.as_array_mut().expect("checked by parent()")[*index] = value;
            }
        }
        Ok(())
    }

    /// The container of the last step, checking that the last step fits it.
    fn parent<'v>(&self, root: &'v Value) -> Result<(&'v Value, &Segment), PathError> {
        let mut node = root;
        let mut walked = String::new();
        let count = self.segments.len();
        for (position, step) in self.segments.iter().enumerate() {
            let is_last = position + 1 == count;
            let here = if walked.is_empty() {
                "the model".to_string()
            } else {
                walked.clone()
            };
            let not_found = |problem: String| PathError::NotFound {
                path: self.text.clone(),
                problem,
            };
            match step {
                Segment::Key(key) => {
                    let Some(object) = node.as_object() else {
                        return Err(not_found(format!(
                            "{here} is {}, not an object with key \"{key}\"",
                            describe(node)
                        )));
                    };
                    if is_last {
                        return Ok((node, step));
                    }
                    node = object
                        .get(key)
                        .ok_or_else(|| not_found(format!("{here} has no key \"{key}\"")))?;
                    if !walked.is_empty() {
                        walked.push('.');
                    }
                    walked.push_str(key);
                }
                Segment::Index(index) => {
                    let Some(array) = node.as_array() else {
                        return Err(not_found(format!(
                            "{here} is {}, not a list to index with [{index}]",
                            describe(node)
                        )));
                    };
                    if *index >= array.len() {
                        return Err(not_found(format!(
                            "{here} has {} entr{} (indices start at 0), so [{index}] does not exist",
                            array.len(),
                            if array.len() == 1 { "y" } else { "ies" }
                        )));
                    }
                    if is_last {
                        return Ok((node, step));
                    }
                    node = &array[*index];
                    walked.push_str(&format!("[{index}]"));
                }
            }
        }
        unreachable!("paths are never empty")
    }
}

/// A short description of a JSON value's kind, for messages ("a number", "a string", …).
pub fn describe(value: &Value) -> &'static str {
    match value {
        Value::Null => "null",
        Value::Bool(_) => "true/false",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "a list",
        Value::Object(_) => "an object",
    }
}

impl fmt::Display for JsonPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text)
    }
}

impl FromStr for JsonPath {
    type Err = PathError;
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let syntax = |problem: &str| PathError::Syntax {
            path: text.to_string(),
            problem: problem.to_string(),
        };
        let is_key_char = |c: char| c.is_ascii_alphanumeric() || c == '_';
        let mut segments = Vec::new();
        let mut rest = text;
        let mut expect_key = true;
        while !rest.is_empty() || expect_key {
            if expect_key {
                let end = rest.find(|c: char| !is_key_char(c)).unwrap_or(rest.len());
                if end == 0 {
                    return Err(syntax(if segments.is_empty() {
                        "it must start with a key"
                    } else {
                        "a key must follow '.'"
                    }));
                }
                segments.push(Segment::Key(rest[..end].to_string()));
                rest = &rest[end..];
                expect_key = false;
            } else if let Some(after) = rest.strip_prefix('.') {
                rest = after;
                expect_key = true;
            } else if let Some(after) = rest.strip_prefix('[') {
                let close = after.find(']').ok_or_else(|| syntax("'[' without ']'"))?;
                let index: usize = after[..close]
                    .parse()
                    .map_err(|_| syntax("an index in [] must be a whole number >= 0"))?;
                segments.push(Segment::Index(index));
                rest = &after[close + 1..];
            } else {
                return Err(syntax("expected '.key' or '[index]' after a step"));
            }
        }
        Ok(Self {
            text: text.to_string(),
            segments,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn path(text: &str) -> JsonPath {
        text.parse().unwrap()
    }

    #[test]
    fn parses_keys_and_indices() {
        assert_eq!(
            path("layers[10].phase.g").segments(),
            &[
                Segment::Key("layers".into()),
                Segment::Index(10),
                Segment::Key("phase".into()),
                Segment::Key("g".into())
            ]
        );
        for bad in [
            "", ".a", "a.", "a..b", "a[", "a[x]", "a[-1]", "[0]", "a b", "a]",
        ] {
            assert!(bad.parse::<JsonPath>().is_err(), "{bad:?}");
        }
    }

    #[test]
    fn gets_and_sets_values() {
        let mut model = json!({"layers": [{"albedo": 0.5}, {"phase": {"g": 0.1}}]});
        assert_eq!(
            path("layers[0].albedo").get(&model).unwrap(),
            Some(&json!(0.5))
        );
        assert_eq!(path("layers[1].albedo").get(&model).unwrap(), None);
        path("layers[1].phase.g")
            .set(&mut model, json!(0.7))
            .unwrap();
        path("layers[1].albedo")
            .set(&mut model, json!(0.9))
            .unwrap();
        assert_eq!(
            model,
            json!({"layers": [{"albedo": 0.5}, {"albedo": 0.9, "phase": {"g": 0.7}}]})
        );
    }

    #[test]
    fn missing_steps_are_named() {
        let model = json!({"layers": [{"albedo": 0.5}]});
        let error = path("layers[2].albedo")
            .get(&model)
            .unwrap_err()
            .to_string();
        assert!(error.contains("layers has 1 entry"), "{error}");
        let error = path("layers[0].phase.g")
            .get(&model)
            .unwrap_err()
            .to_string();
        assert!(error.contains("layers[0] has no key \"phase\""), "{error}");
        let error = path("layers.albedo").get(&model).unwrap_err().to_string();
        assert!(error.contains("layers is a list"), "{error}");
        let error = path("geometry[0]")
            .get(&json!({"geometry": "slab"}))
            .unwrap_err();
        assert!(error.to_string().contains("a string"), "{error}");
    }
}
