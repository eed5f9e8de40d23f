//! Canonical JSON and the self-hash of a document.
//!
//! Canonical form: serde_json's compact output with every object's keys in byte order, no
//! whitespace, numbers as serde_json writes them (shortest round-trip form). Parsing a file and
//! writing it again gives the same bytes, so a reader re-derives the hash exactly.

use serde_json::{Map, Value};
use sha2::{Digest, Sha256};

/// The field of a document that holds the SHA-256 of the rest of it.
pub const HASH_FIELD: &str = "sha256";

/// `v` with every object's keys re-inserted in sorted order (independent of serde_json's
/// `preserve_order` feature).
pub fn sorted(v: &Value) -> Value {
    match v {
        Value::Object(m) => {
            let mut keys: Vec<&String> = m.keys().collect();
            keys.sort();
            let mut out = Map::new();
            for k in keys {
                out.insert(k.clone(), sorted(&m[k]));
            }
            Value::Object(out)
        }
        Value::Array(a) => Value::Array(a.iter().map(sorted).collect()),
        other => other.clone(),
    }
}

/// Compact, key-sorted bytes of `v`.
pub fn canonical_bytes(v: &Value) -> Vec<u8> {
    // Serialising a Value cannot fail: its keys are strings and its numbers finite.
    serde_json::to_vec(&sorted(v)).unwrap_or_default()
}

/// Indented, key-sorted text of `v` with a final newline: the form written to disk.
pub fn pretty_bytes(v: &Value) -> Vec<u8> {
    let mut out = serde_json::to_vec_pretty(&sorted(v)).unwrap_or_default();
    out.push(b'\n');
    out
}

/// Lower-case hex SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{:02x}", b))
        .collect()
}

/// SHA-256 of the canonical form of `doc` without its [`HASH_FIELD`].
pub fn content_hash(doc: &Value) -> String {
    let mut body = doc.clone();
    if let Value::Object(m) = &mut body {
        m.remove(HASH_FIELD);
    }
    sha256_hex(&canonical_bytes(&body))
}

/// `doc` with its [`HASH_FIELD`] set to its content hash.
pub fn seal(mut doc: Value) -> Value {
    let hash = content_hash(&doc);
    if let Value::Object(m) = &mut doc {
        m.insert(HASH_FIELD.to_string(), Value::String(hash));
    }
    doc
}

/// Check a sealed document: `Err` says what the stored and the recomputed hash are.
pub fn check_seal(doc: &Value) -> Result<(), String> {
    let stored = doc
        .get(HASH_FIELD)
        .and_then(Value::as_str)
        .ok_or_else(|| format!("no '{}' field", HASH_FIELD))?;
    let actual = content_hash(doc);
    if stored == actual {
        Ok(())
    } else {
        Err(format!("content does not match its sha256 (stored {}, computed {}): the file was changed after publishing", stored, actual))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    /// FIPS 180-2, Appendix B.1: SHA-256("abc") [from memory; also the first example of
    /// RFC 6234 §8.5 test vectors].
    #[test]
    fn sha256_matches_fips_180_2_example() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn canonical_form_sorts_keys_at_every_depth() {
        let v = json!({"b": 1, "a": {"d": [1.5, {"z": null, "y": true}], "c": "x"}});
        assert_eq!(
            String::from_utf8(canonical_bytes(&v)).unwrap(),
            r#"{"a":{"c":"x","d":[1.5,{"y":true,"z":null}]},"b":1}"#
        );
    }

    #[test]
    fn seal_survives_a_pretty_print_and_reparse_but_not_an_edit() {
        let doc = seal(json!({"x": 0.1, "n": 3, "tiny": 1.25e-300, "s": "μ″"}));
        let text = pretty_bytes(&doc);
        let back: Value = serde_json::from_slice(&text).unwrap();
        assert!(check_seal(&back).is_ok());
        let edited = String::from_utf8(text).unwrap().replacen("0.1", "0.2", 1);
        let back: Value = serde_json::from_str(&edited).unwrap();
        assert!(check_seal(&back).is_err());
    }

    /// Every finite double must survive write → parse exactly, or a file's hash could fail on
    /// reading (serde_json needs its `float_roundtrip` feature for this).
    #[test]
    fn floats_round_trip_exactly_through_the_written_text() {
        let mut state = 0x2545_F491_4F6C_DD1D_u64;
        let values: Vec<f64> = (0..20_000)
            .filter_map(|_| {
                state ^= state << 13;
                state ^= state >> 7;
                state ^= state << 17;
                Some(f64::from_bits(state)).filter(|x| x.is_finite())
            })
            .collect();
        let doc = seal(serde_json::json!({ "v": values }));
        let back: Value = serde_json::from_slice(&pretty_bytes(&doc)).unwrap();
        assert!(check_seal(&back).is_ok());
    }
}
