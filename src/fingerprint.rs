//! Fingerprints of JSON documents: a canonical text form and its 64-bit FNV-1a hash.
//!
//! Shard files, checkpoints and sweep point files carry the fingerprint of the model (or
//! sweep specification) they were made from, so that results of different inputs are never
//! merged or resumed into each other. The hash only has to tell *accidentally* different
//! inputs apart (files are not adversarial): two different inputs share a 64-bit hash with
//! odds of about 2⁻⁶⁴ per comparison, and merge compares the embedded model (or spec)
//! itself as well. So a non-cryptographic hash is enough: FNV-1a (Fowler, Noll & Vo;
//! parameters from the IETF draft `draft-eastlake-fnv`), which needs no dependency.

use serde_json::Value;

/// FNV-1a 64-bit offset basis.
const FNV_OFFSET: u64 = 0xcbf2_9ce4_8422_2325;
/// FNV-1a 64-bit prime.
const FNV_PRIME: u64 = 0x0000_0100_0000_01b3;

/// The 64-bit FNV-1a hash of `bytes`.
///
/// # Examples
/// ```
/// // Test vectors of the FNV reference implementation.
/// assert_eq!(sojourn::fingerprint::fnv1a64(b""), 0xcbf29ce484222325);
/// assert_eq!(sojourn::fingerprint::fnv1a64(b"a"), 0xaf63dc4c8601ec8c);
/// ```
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    bytes.iter().fold(FNV_OFFSET, |hash, &byte| {
        (hash ^ u64::from(byte)).wrapping_mul(FNV_PRIME)
    })
}

/// The canonical text of a JSON value: compact, object keys sorted by their bytes, numbers
/// as serde_json prints them (shortest round-trip form). Two values that are equal as JSON
/// data have the same canonical text, whatever the key order or spacing of their source.
pub fn canonical_json(value: &Value) -> String {
    let mut out = String::new();
    write_canonical(value, &mut out);
    out
}

fn write_canonical(value: &Value, out: &mut String) {
    match value {
        Value::Object(map) => {
            let mut entries: Vec<(&String, &Value)> = map.iter().collect();
            entries.sort_by(|a, b| a.0.as_bytes().cmp(b.0.as_bytes()));
            out.push('{');
            for (index, (key, item)) in entries.into_iter().enumerate() {
                if index > 0 {
                    out.push(',');
                }
                out.push_str(&Value::String(key.clone()).to_string());
                out.push(':');
                write_canonical(item, out);
            }
            out.push('}');
        }
        Value::Array(items) => {
            out.push('[');
            for (index, item) in items.iter().enumerate() {
                if index > 0 {
                    out.push(',');
                }
                write_canonical(item, out);
            }
            out.push(']');
        }
        scalar => out.push_str(&scalar.to_string()),
    }
}

/// The fingerprint of a JSON value: `fnv1a64:` and 16 hex digits of the FNV-1a hash of its
/// canonical text.
pub fn fingerprint(value: &Value) -> String {
    format!("fnv1a64:{:016x}", fnv1a64(canonical_json(value).as_bytes()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_order_and_spacing_do_not_matter() {
        let a: Value = serde_json::from_str(r#"{"b": 1, "a": [1.5, {"y": 2, "x": "s"}]}"#).unwrap();
        let b: Value = serde_json::from_str(r#"{"a":[1.5,{"x":"s","y":2}],"b":1}"#).unwrap();
        assert_eq!(canonical_json(&a), r#"{"a":[1.5,{"x":"s","y":2}],"b":1}"#);
        assert_eq!(fingerprint(&a), fingerprint(&b));
    }

    #[test]
    fn different_values_differ() {
        let a: Value = serde_json::from_str(r#"{"albedo": 0.9}"#).unwrap();
        let b: Value = serde_json::from_str(r#"{"albedo": 0.99}"#).unwrap();
        assert_ne!(fingerprint(&a), fingerprint(&b));
    }

    #[test]
    fn reference_vector() {
        // FNV-1a 64 of "foobar" from the FNV reference test suite.
        assert_eq!(fnv1a64(b"foobar"), 0x85944171f73967e8);
    }
}
