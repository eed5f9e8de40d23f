//! The core spec language: `SHAPE:key=value,...` with units on every dimension, e.g.
//! `toroid:od=25mm,id=15mm,h=10mm`, `split:od=..,id=..,h=..,gap=8um`,
//! `flat:w=..,t=..,slot_w=..,slot_t=..,len=..`, `given:c1=0.906/mm,c2=0.0189/mm3`,
//! `stack:toroid:od=..,id=..,h=..,n=2`. A spec without a colon is the name of a core in a
//! cores file ([`super::cores_file`]).

use super::{Core, GeometryError};
use crate::error::Diagnostic;

/// One line per shape: its keys and an example, shown whenever a spec is wrong.
pub const SHAPES_HELP: &str =
    "toroid:od=LEN,id=LEN,h=LEN[,chamfer=LEN|,radius=LEN]  (alias: sleeve)\n  \
split:od=LEN,id=LEN,h=LEN[,gap=LEN per face]  or split:SHAPE:...,gap=LEN\n  \
flat:w=LEN,t=LEN,slot_w=LEN,slot_t=LEN,len=LEN\n  \
given:two of c1=/mm, c2=/mm3, le=LEN, ae=mm2 [,amin=mm2]\n  \
stack:SHAPE:...,n=COUNT\n  \
or a NAME from a cores file; LEN takes a unit: mm, m, um, in";

/// Parse a spec. Names (specs without a colon) are looked up with `lookup`, which returns the
/// named core's own spec.
pub fn parse_core(
    spec: &str,
    lookup: &dyn Fn(&str) -> Option<String>,
) -> Result<Core, GeometryError> {
    parse_depth(spec, lookup, 0)
}

fn parse_depth(
    spec: &str,
    lookup: &dyn Fn(&str) -> Option<String>,
    depth: usize,
) -> Result<Core, GeometryError> {
    let spec = spec.trim();
    if depth > 8 {
        return Err(spec_error(spec, "core names refer to each other in a loop").into());
    }
    let Some((shape, body)) = spec.split_once(':') else {
        return match lookup(spec) {
            Some(named) => parse_depth(&named, lookup, depth + 1),
            None => Err(spec_error(spec, "not a core spec and not a known core name")
                .hint("write SHAPE:key=value,... or define the name in a cores file (--cores-file)")
                .into()),
        };
    };
    let shape = shape.trim().to_ascii_lowercase();
    match shape.as_str() {
        "toroid" | "sleeve" => {
            let mut kv = KeyValues::parse(spec, &shape, body)?;
            let t = super::Toroid::from_keys(&mut kv)?;
            kv.finish()?;
            Ok(Core::Toroid(t))
        }
        "split" => {
            let (inner, gap) = take_key(body, "gap");
            let body = match inner.split_once(':') {
                Some(_) => parse_depth(&inner, lookup, depth + 1)?,
                None => parse_depth(&format!("toroid:{}", inner), lookup, depth + 1)?,
            };
            let gap_per_face = match gap {
                Some(g) => Some(parse_power(&g, 1).map_err(|m| key_error(spec, "gap", &m))?),
                None => None,
            };
            super::split::Split::new(body, gap_per_face)
                .map(Core::Split)
                .map_err(|e| rewrap(spec, e))
        }
        "flat" => {
            let mut kv = KeyValues::parse(spec, &shape, body)?;
            let f = super::flat::Flat::from_keys(&mut kv)?;
            kv.finish()?;
            Ok(Core::Flat(f))
        }
        "given" => {
            let mut kv = KeyValues::parse(spec, &shape, body)?;
            let g = super::given::Given::from_keys(&mut kv)?;
            kv.finish()?;
            Ok(Core::Given(g))
        }
        "stack" => {
            let (inner, n) = take_key(body, "n");
            let n = n.ok_or_else(|| {
                key_error(
                    spec,
                    "n",
                    "missing; say how many identical cores are stacked",
                )
            })?;
            let n: u32 = n.trim().parse().ok().filter(|&n| n >= 1).ok_or_else(|| {
                key_error(spec, "n", &format!("'{}' is not a whole number ≥ 1", n))
            })?;
            Ok(Core::Stack {
                core: Box::new(parse_depth(&inner, lookup, depth + 1)?),
                n,
            })
        }
        _ => Err(spec_error(spec, &format!("unknown core shape '{}'", shape)).into()),
    }
}

/// Remove `key=value` from a comma list; returns the rest and the value.
fn take_key(body: &str, key: &str) -> (String, Option<String>) {
    let mut value = None;
    let mut rest = Vec::new();
    for part in body.split(',') {
        match part.split_once('=') {
            Some((k, v)) if k.trim().eq_ignore_ascii_case(key) => {
                value = Some(v.trim().to_string())
            }
            _ => rest.push(part),
        }
    }
    (rest.join(","), value)
}

fn spec_error(spec: &str, what: &str) -> Diagnostic {
    Diagnostic::new(format!("core spec '{}': {}", spec, what)).expected(SHAPES_HELP)
}

fn key_error(spec: &str, key: &str, what: &str) -> GeometryError {
    spec_error(spec, &format!("{}: {}", key, what)).into()
}

/// Keep the message of an error found below, but say which spec it came from.
fn rewrap(spec: &str, e: GeometryError) -> GeometryError {
    let mut d = e.0;
    if !d.message.contains(spec) {
        d.message = format!("core spec '{}': {}", spec, d.message);
    }
    if d.expected.is_empty() {
        d.expected = SHAPES_HELP.to_string();
    }
    GeometryError(d)
}

/// The `key=value` pairs of one shape, consumed key by key so leftovers can be reported.
pub(crate) struct KeyValues {
    spec: String,
    shape: String,
    pairs: Vec<(String, String)>,
}

impl KeyValues {
    pub(crate) fn parse(spec: &str, shape: &str, body: &str) -> Result<KeyValues, GeometryError> {
        let mut pairs: Vec<(String, String)> = Vec::new();
        for part in body.split(',').map(str::trim).filter(|p| !p.is_empty()) {
            let Some((k, v)) = part.split_once('=') else {
                return Err(spec_error(spec, &format!("'{}' is not key=value", part)).into());
            };
            let k = k.trim().to_ascii_lowercase();
            if pairs.iter().any(|(seen, _)| *seen == k) {
                return Err(key_error(spec, &k, "given twice"));
            }
            pairs.push((k, v.trim().to_string()));
        }
        Ok(KeyValues {
            spec: spec.to_string(),
            shape: shape.to_string(),
            pairs,
        })
    }

    fn take(&mut self, key: &str) -> Option<String> {
        let i = self.pairs.iter().position(|(k, _)| k == key)?;
        Some(self.pairs.remove(i).1)
    }

    /// A quantity of dimension length^`power` (power −1 for C1, −3 for C2, 2 for areas).
    pub(crate) fn opt_power(
        &mut self,
        key: &str,
        power: i32,
    ) -> Result<Option<f64>, GeometryError> {
        match self.take(key) {
            None => Ok(None),
            Some(v) => parse_power(&v, power)
                .map(Some)
                .map_err(|m| key_error(&self.spec, key, &m)),
        }
    }

    pub(crate) fn opt_length(&mut self, key: &str) -> Result<Option<f64>, GeometryError> {
        self.opt_power(key, 1)
    }

    pub(crate) fn length(&mut self, key: &str) -> Result<f64, GeometryError> {
        self.opt_length(key)?.ok_or_else(|| {
            key_error(
                &self.spec,
                key,
                &format!("missing for shape '{}'", self.shape),
            )
        })
    }

    /// An error about this spec as a whole.
    pub(crate) fn error(&self, what: &str) -> GeometryError {
        spec_error(&self.spec, what).into()
    }

    pub(crate) fn rewrap(&self, e: GeometryError) -> GeometryError {
        rewrap(&self.spec, e)
    }

    /// Every key must have been used.
    pub(crate) fn finish(self) -> Result<(), GeometryError> {
        match self.pairs.first() {
            None => Ok(()),
            Some((k, _)) => Err(key_error(
                &self.spec,
                k,
                &format!("not a key of shape '{}'", self.shape),
            )),
        }
    }
}

/// Parse a quantity of dimension length^`power` with a mandatory unit: `25mm`, `8um`, `1in`,
/// `0.906/mm`, `0.906mm-1`, `48mm2`, `48mm^2`, `1.89e-2/mm3`. Returns SI (m^power).
pub fn parse_power(text: &str, power: i32) -> Result<f64, String> {
    let t = text.trim();
    let example = match power {
        1 => "25mm",
        -1 => "0.906/mm",
        2 => "48mm2",
        -3 => "0.0189/mm3",
        _ => "1mm",
    };
    let split = (1..=t.len())
        .rev()
        .filter(|&i| t.is_char_boundary(i))
        .find(|&i| t[..i].trim().parse::<f64>().is_ok());
    let Some(split) = split else {
        return Err(format!(
            "'{}' is not a number with a unit; expected e.g. {}",
            t, example
        ));
    };
    let value: f64 = t[..split]
        .trim()
        .parse()
        .map_err(|_| format!("'{}' is not a number", t))?;
    let suffix = t[split..].trim();
    if suffix.is_empty() {
        return Err(format!(
            "'{}' has no unit; expected e.g. {} (units: mm, m, um, in)",
            t, example
        ));
    }
    let (inverse, rest) = match suffix
        .strip_prefix("1/")
        .or_else(|| suffix.strip_prefix('/'))
    {
        Some(r) => (true, r.trim()),
        None => (false, suffix),
    };
    let rest = rest.replace('^', "");
    let base_len = rest
        .trim_end_matches(|c: char| c.is_ascii_digit() || c == '-')
        .len();
    let (base, exp) = rest.split_at(base_len);
    let exp: i32 = if exp.is_empty() {
        1
    } else {
        exp.parse()
            .map_err(|_| format!("bad exponent in '{}'", t))?
    };
    let exp = if inverse { -exp } else { exp };
    let scale = length_unit(base).ok_or_else(|| {
        format!(
            "unknown unit '{}' in '{}'; expected mm, m, um or in",
            base, t
        )
    })?;
    if exp != power {
        return Err(format!(
            "'{}' has the wrong dimension; expected length^{} e.g. {}",
            t, power, example
        ));
    }
    let v = value * scale.powi(power);
    if !(v.is_finite() && v >= 0.0) {
        return Err(format!("'{}' must be a finite, non-negative size", t));
    }
    Ok(v)
}

/// Metres per unit of length, through the crate's one unit parser; only letter units (mm, m,
/// um, µm, in, ...), so a bare SI prefix cannot pass for a unit.
fn length_unit(base: &str) -> Option<f64> {
    let base = base.trim();
    if base.is_empty() || !base.chars().all(|c| c.is_alphabetic()) {
        return None;
    }
    crate::units::parse_quantity(&format!("1{}", base), "m").ok()
}

/// A length as a spec writes it back: millimetres (micrometres below 0.1 mm, as gaps are
/// stated), trailing zeros trimmed.
pub fn fmt_len(m: f64) -> String {
    if m != 0.0 && m.abs() < 1e-4 {
        format!("{}um", trim_number(m * 1e6, 4))
    } else {
        format!("{}mm", trim_number(m * 1e3, 6))
    }
}

/// A length^power in mm units (for `given:`).
pub fn fmt_power(v: f64, power: i32) -> String {
    let mm = v / 1e-3f64.powi(power);
    match power {
        1 => fmt_len(v),
        p if p < 0 => format!(
            "{}/mm{}",
            sig(mm),
            if p == -1 {
                String::new()
            } else {
                (-p).to_string()
            }
        ),
        p => format!("{}mm{}", sig(mm), p),
    }
}

fn trim_number(x: f64, decimals: usize) -> String {
    let s = format!("{:.*}", decimals, x);
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// Nine significant digits, enough to reproduce a stated constant.
fn sig(x: f64) -> String {
    let s = format!("{:.8e}", x);
    match s.parse::<f64>() {
        Ok(v) => format!("{}", v),
        Err(_) => s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn no_names(_: &str) -> Option<String> {
        None
    }

    #[test]
    fn units_and_powers() {
        assert!((parse_power("25mm", 1).unwrap() - 0.025).abs() < 1e-15);
        assert!((parse_power("8um", 1).unwrap() - 8e-6).abs() < 1e-18);
        assert!((parse_power("1in", 1).unwrap() - 0.0254).abs() < 1e-15);
        assert!((parse_power("0.5 m", 1).unwrap() - 0.5).abs() < 1e-15);
        assert!((parse_power("0.90647/mm", -1).unwrap() - 906.47).abs() < 1e-9);
        assert!((parse_power("0.90647mm-1", -1).unwrap() - 906.47).abs() < 1e-9);
        assert!((parse_power("1.8867e-2/mm3", -3).unwrap() - 1.8867e7).abs() < 1e-3);
        assert!((parse_power("48.045mm^2", 2).unwrap() - 48.045e-6).abs() < 1e-15);
        for bad in ["25", "25 furlongs", "mm", "25mm2", "-3mm", "25/mm"] {
            assert!(parse_power(bad, 1).is_err(), "{} should be refused", bad);
        }
    }

    #[test]
    fn specs_round_trip() {
        for spec in [
            "toroid:od=25mm,id=15mm,h=10mm",
            "toroid:od=20mm,id=10mm,h=10mm,chamfer=0.5mm",
            "toroid:od=20mm,id=10mm,h=10mm,radius=0.3mm",
            "split:od=25mm,id=15mm,h=10mm,gap=8um",
            "split:od=25mm,id=15mm,h=10mm",
            "flat:w=40mm,t=10mm,slot_w=30mm,slot_t=2mm,len=20mm",
            "given:c1=0.90647/mm,c2=0.018867/mm3",
            "stack:toroid:od=25mm,id=15mm,h=10mm,n=2",
            "stack:split:od=25mm,id=15mm,h=10mm,gap=8um,n=3",
            "split:flat:w=40mm,t=10mm,slot_w=30mm,slot_t=2mm,len=20mm,gap=5um",
        ] {
            let core = parse_core(spec, &no_names).unwrap_or_else(|e| panic!("{}: {}", spec, e));
            let again = parse_core(&core.spec(), &no_names).unwrap();
            assert_eq!(again.spec(), core.spec(), "{}", spec);
            let (a, b) = (core.effective(), again.effective());
            assert!((a.c1 / b.c1 - 1.0).abs() < 1e-12 && (a.c2 / b.c2 - 1.0).abs() < 1e-12);
            assert!((core.gap_m() - again.gap_m()).abs() < 1e-15);
        }
    }

    #[test]
    fn bad_specs_show_expected_keys() {
        for (spec, needle) in [
            ("toroid:od=25mm,id=15mm", "h: missing"),
            ("toroid:od=25mm,id=15mm,h=10mm,hieght=3mm", "hieght"),
            ("toroid:od=25,id=15mm,h=10mm", "no unit"),
            ("toroid:od=15mm,id=25mm,h=10mm", "not a toroid"),
            ("donut:od=25mm", "unknown core shape"),
            ("stack:toroid:od=25mm,id=15mm,h=10mm", "n: missing"),
            ("given:c1=0.9/mm", "two of"),
            ("nosuchcore", "not a known core name"),
        ] {
            let e = parse_core(spec, &no_names).unwrap_err();
            let text = e.to_string();
            assert!(text.contains(needle), "{}: {}", spec, text);
            assert!(
                text.contains("\n  expected: "),
                "expected form missing for {}: {}",
                spec,
                text
            );
        }
    }
}
