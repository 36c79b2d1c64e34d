//! A seeded mutator of input files: structural changes to JSON (a node replaced by a hostile
//! value, removed, duplicated, moved, scaled) and byte-level changes to any text (flips,
//! insertions of hostile tokens, cuts, repeats, truncation). The same seed gives the same
//! mutants.

use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use serde_json::{Map, Number, Value};

/// Numbers a hostile or careless user writes: zero, signs, the edges of f64 and of the
/// integers, values just inside and outside the stated limits, and everyday values.
const HOSTILE_NUMBERS: &[f64] = &[
    0.0,
    -0.0,
    -1.0,
    1.0,
    0.5,
    2.0,
    3.9,
    4.0,
    1e-300,
    5e-324,
    2.9e-312,
    1e-268,
    1e-30,
    1e30,
    1e100,
    1e308,
    1.797e308,
    -1e308,
    1e9,
    1e5,
    1e20,
    -5.9e100,
    9.223372036854776e18,
    1.8446744073709552e19,
];

/// Tokens spliced into text as it is: non-JSON numbers, stray punctuation, a byte-order
/// mark, long digit strings.
const HOSTILE_TOKENS: &[&str] = &[
    "NaN",
    "nan",
    "inf",
    "-inf",
    "1e999",
    "-1e999",
    "1e-999",
    "18446744073709551616",
    "9223372036854775808",
    "-9223372036854775809",
    "0x10",
    "\u{feff}",
    "\"",
    "{",
    "}",
    "[",
    "]",
    ",",
    ":",
    "\\",
    "\n",
    "\t",
    "null",
    "\u{0}",
    "é",
    "99999999999999999999999999999999999999",
];

/// A deterministic source of mutants.
pub struct Mutator {
    rng: Xoshiro256PlusPlus,
}

impl Mutator {
    /// The mutator of `seed`.
    pub fn new(seed: u64) -> Self {
        Self {
            rng: Xoshiro256PlusPlus::seed_from_u64(seed),
        }
    }

    fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            self.rng.random_range(0..n)
        }
    }

    /// One to four stacked mutations of `text`; structural ones where `text` is JSON.
    pub fn mutate(&mut self, text: &str) -> String {
        let rounds = match self.below(20) {
            0..12 => 1,
            12..17 => 2,
            _ => 3 + self.below(2),
        };
        let mut current = text.to_string();
        for _ in 0..rounds {
            current = match serde_json::from_str::<Value>(&current) {
                Ok(value) if self.below(10) < 8 => {
                    let mutated = self.mutate_value(value);
                    self.render(&mutated)
                }
                _ => self.mutate_text(&current),
            };
        }
        current
    }

    /// JSON text of `value`, sometimes with a number written out of f64 range or as NaN
    /// (which serde_json itself never writes).
    fn render(&mut self, value: &Value) -> String {
        let text = serde_json::to_string(value).unwrap();
        if self.below(8) == 0 {
            self.replace_number_token(&text)
        } else {
            text
        }
    }

    fn mutate_value(&mut self, mut root: Value) -> Value {
        let leaves_only = self.below(3) > 0;
        let count = count_nodes(&root, leaves_only);
        let target = self.below(count);
        let mut index = 0;
        let choice = self.below(9);
        let replacement = if self.below(3) == 0 {
            self.hostile_value()
        } else {
            self.hostile_number()
        };
        let factor = 10f64.powi(self.below(61) as i32 - 30);
        let mut action = |node: &mut Value, choice| apply(node, choice, &replacement, factor);
        visit(
            &mut root,
            &mut index,
            target,
            leaves_only,
            &mut action,
            choice,
        );
        root
    }

    fn hostile_number(&mut self) -> Value {
        let number = HOSTILE_NUMBERS[self.below(HOSTILE_NUMBERS.len())];
        Number::from_f64(number).map_or(Value::Null, Value::Number)
    }

    fn hostile_value(&mut self) -> Value {
        match self.below(12) {
            0 => Value::Null,
            1 => Value::Bool(self.below(2) == 0),
            2 => Value::String(String::new()),
            3 => Value::String(
                ["x", "slab", "sphere", "henyey_greenstein", "-1", "1e5"][self.below(6)].into(),
            ),
            4 => Value::Array(Vec::new()),
            5 => Value::Object(Map::new()),
            6 => Value::Number(Number::from(u64::MAX)),
            7 => Value::Number(Number::from(i64::MIN)),
            8 => Value::Number(Number::from(self.below(5) as u64)),
            _ => {
                let number = HOSTILE_NUMBERS[self.below(HOSTILE_NUMBERS.len())];
                Number::from_f64(number).map_or(Value::Null, Value::Number)
            }
        }
    }

    fn mutate_text(&mut self, text: &str) -> String {
        let mut bytes = text.as_bytes().to_vec();
        let length = bytes.len();
        match self.below(7) {
            0 if length > 0 => {
                let at = self.below(length);
                bytes[at] ^= 1 << self.below(8);
            }
            1 => {
                let at = self.below(length + 1);
                let token = HOSTILE_TOKENS[self.below(HOSTILE_TOKENS.len())];
                bytes.splice(at..at, token.bytes());
            }
            2 if length > 0 => {
                let from = self.below(length);
                let to = (from + 1 + self.below(64)).min(length);
                bytes.drain(from..to);
            }
            3 if length > 0 => {
                let from = self.below(length);
                let to = (from + 1 + self.below(256)).min(length);
                let piece: Vec<u8> = bytes[from..to].to_vec();
                let at = self.below(length + 1);
                bytes.splice(at..at, piece);
            }
            4 => {
                let keep = self.below(length + 1);
                bytes.truncate(keep);
            }
            _ => return self.replace_number_token(text),
        }
        String::from_utf8_lossy(&bytes).into_owned()
    }

    /// Replaces one number written in `text` by a hostile number or token.
    fn replace_number_token(&mut self, text: &str) -> String {
        let starts: Vec<usize> = text
            .char_indices()
            .filter(|&(i, c)| {
                (c.is_ascii_digit() || c == '-')
                    && !text[..i]
                        .ends_with(|p: char| p.is_ascii_alphanumeric() || p == '.' || p == '_')
            })
            .map(|(i, _)| i)
            .collect();
        if starts.is_empty() {
            return text.to_string();
        }
        let start = starts[self.below(starts.len())];
        let end = text[start + 1..]
            .find(|c: char| !(c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-')))
            .map_or(text.len(), |e| start + 1 + e);
        let replacement = if self.below(2) == 0 {
            HOSTILE_TOKENS[self.below(10)].to_string()
        } else {
            format!("{:e}", HOSTILE_NUMBERS[self.below(HOSTILE_NUMBERS.len())])
        };
        format!("{}{}{}", &text[..start], replacement, &text[end..])
    }
}

/// The nodes of `value` (only its leaves, the numbers, strings, booleans and nulls, if
/// `leaves_only`).
fn count_nodes(value: &Value, leaves_only: bool) -> usize {
    match value {
        Value::Array(items) => {
            usize::from(!leaves_only)
                + items
                    .iter()
                    .map(|v| count_nodes(v, leaves_only))
                    .sum::<usize>()
        }
        Value::Object(map) => {
            usize::from(!leaves_only)
                + map
                    .values()
                    .map(|v| count_nodes(v, leaves_only))
                    .sum::<usize>()
        }
        _ => 1,
    }
}

/// Calls `action` on the `target`-th node (leaf, if `leaves_only`) in depth-first order.
fn visit(
    node: &mut Value,
    index: &mut usize,
    target: usize,
    leaves_only: bool,
    action: &mut dyn FnMut(&mut Value, usize),
    choice: usize,
) -> bool {
    let container = matches!(node, Value::Array(_) | Value::Object(_));
    if !(leaves_only && container) {
        if *index == target {
            action(node, choice);
            return true;
        }
        *index += 1;
    }
    match node {
        Value::Array(items) => items
            .iter_mut()
            .any(|item| visit(item, index, target, leaves_only, action, choice)),
        Value::Object(map) => map
            .values_mut()
            .any(|item| visit(item, index, target, leaves_only, action, choice)),
        _ => false,
    }
}

/// One structural mutation of `node`.
fn apply(node: &mut Value, choice: usize, replacement: &Value, factor: f64) {
    match (choice, &mut *node) {
        (0, Value::Object(map)) if !map.is_empty() => {
            let key = map
                .keys()
                .nth(factor.to_bits() as usize % map.len())
                .cloned();
            if let Some(key) = key {
                map.remove(&key);
            }
        }
        (1, Value::Array(items)) if !items.is_empty() => {
            let at = factor.to_bits() as usize % items.len();
            if factor > 1.0 {
                let copy = items[at].clone();
                items.insert(at, copy);
            } else {
                items.remove(at);
            }
        }
        (2, Value::Number(number)) => {
            let scaled = number.as_f64().unwrap_or(1.0) * factor;
            *node = Number::from_f64(scaled).map_or(Value::Null, Value::Number);
        }
        (3, Value::Number(number)) => {
            let negated = -number.as_f64().unwrap_or(1.0);
            *node = Number::from_f64(negated).map_or(Value::Null, Value::Number);
        }
        (4, Value::Object(map)) => {
            map.insert("unexpected_key".into(), replacement.clone());
        }
        (5, Value::Array(items)) if !items.is_empty() => {
            let last = items.len() - 1;
            items.swap(0, last);
        }
        _ => *node = replacement.clone(),
    }
}
