//! UTC timestamps in RFC 3339 form (`2024-05-01T12:00:00Z`) without a date-time dependency.

use std::time::{SystemTime, UNIX_EPOCH};

/// Now, in UTC, to the second.
pub fn now_rfc3339() -> String {
    let secs = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    rfc3339_from_unix(secs)
}

/// Seconds since 1970-01-01T00:00:00Z as `YYYY-MM-DDTHH:MM:SSZ`.
pub fn rfc3339_from_unix(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let s = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!(
        "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z",
        y,
        m,
        d,
        s / 3600,
        s / 60 % 60,
        s % 60
    )
}

/// Proleptic Gregorian date of a day count from 1970-01-01 (H. Hinnant, "chrono-Compatible
/// Low-Level Date Algorithms", days_from_civil inverse).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// Whether `s` has the shape [`rfc3339_from_unix`] writes: `NNNN-NN-NNTNN:NN:NNZ` (the
/// material schema's `created` pattern).
pub fn has_rfc3339_shape(s: &str) -> bool {
    s.len() == 20
        && s.bytes().enumerate().all(|(i, c)| match i {
            4 | 7 => c == b'-',
            10 => c == b'T',
            13 | 16 => c == b':',
            19 => c == b'Z',
            _ => c.is_ascii_digit(),
        })
}

/// [`has_rfc3339_shape`] with plausible field ranges.
pub fn is_rfc3339_utc(s: &str) -> bool {
    let num = |r: std::ops::Range<usize>| {
        s.get(r)
            .and_then(|t| t.parse::<u32>().ok())
            .unwrap_or(u32::MAX)
    };
    has_rfc3339_shape(s)
        && (1..=12).contains(&num(5..7))
        && (1..=31).contains(&num(8..10))
        && num(11..13) < 24
        && num(14..16) < 60
        && num(17..19) < 61
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Check values: the Unix epoch; 951782400 = 2000-02-29 (leap day of a century leap year);
    /// 1234567890 = 2009-02-13T23:31:30Z (widely reported [from memory]); both cross-checked
    /// with Python's `datetime.fromtimestamp(t, timezone.utc)`.
    #[test]
    fn formats_known_instants() {
        assert_eq!(rfc3339_from_unix(0), "1970-01-01T00:00:00Z");
        assert_eq!(rfc3339_from_unix(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(rfc3339_from_unix(1_234_567_890), "2009-02-13T23:31:30Z");
        assert_eq!(rfc3339_from_unix(-1), "1969-12-31T23:59:59Z");
    }

    #[test]
    fn recognises_its_own_form_only() {
        assert!(is_rfc3339_utc(&now_rfc3339()));
        assert!(!is_rfc3339_utc("2024-13-01T00:00:00Z"));
        assert!(!is_rfc3339_utc("2024-01-01 00:00:00Z"));
        assert!(!is_rfc3339_utc("2024-01-01T00:00:00+01:00"));
    }
}
