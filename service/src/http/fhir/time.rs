//! FHIR R4 date and time values: checking a `dateTime` as given, ordering
//! full ones, and writing an `instant`.

use std::str::FromStr;

use prost_types::Timestamp;

/// Whether `text` is a FHIR R4 `dateTime`
/// (https://hl7.org/fhir/R4/datatypes.html#dateTime): `YYYY`, `YYYY-MM`,
/// `YYYY-MM-DD`, or `YYYY-MM-DDThh:mm:ss(.fff)` with `Z` or `+hh:mm`/`-hh:mm`.
pub fn is_fhir_date_time(text: &str) -> bool {
    let b = text.as_bytes();
    let digits = |range: std::ops::Range<usize>| {
        b.get(range.clone())
            .is_some_and(|s| s.iter().all(u8::is_ascii_digit))
    };
    let number = |range: std::ops::Range<usize>| -> u32 {
        text.get(range)
            .and_then(|s| s.parse().ok())
            .unwrap_or(u32::MAX)
    };
    if !digits(0..4) || number(0..4) == 0 {
        return false;
    }
    if b.len() == 4 {
        return true;
    }
    if b[4] != b'-' || !digits(5..7) || !(1..=12).contains(&number(5..7)) {
        return false;
    }
    if b.len() == 7 {
        return true;
    }
    if b.get(7) != Some(&b'-') || !digits(8..10) || !(1..=31).contains(&number(8..10)) {
        return false;
    }
    if b.len() == 10 {
        return true;
    }
    // A time needs seconds and a zone.
    let time_ok = b.get(10) == Some(&b'T')
        && digits(11..13)
        && number(11..13) <= 23
        && b.get(13) == Some(&b':')
        && digits(14..16)
        && number(14..16) <= 59
        && b.get(16) == Some(&b':')
        && digits(17..19)
        && number(17..19) <= 60;
    if !time_ok {
        return false;
    }
    let mut rest = &text[19..];
    if let Some(fraction) = rest.strip_prefix('.') {
        let end = fraction
            .find(|c: char| !c.is_ascii_digit())
            .unwrap_or(fraction.len());
        if end == 0 {
            return false;
        }
        rest = &fraction[end..];
    }
    match rest.as_bytes() {
        [b'Z'] => true,
        [sign, h1, h2, b':', m1, m2]
            if matches!(sign, b'+' | b'-')
                && [h1, h2, m1, m2].iter().all(|c| c.is_ascii_digit()) =>
        {
            let hours = (h1 - b'0') * 10 + (h2 - b'0');
            let minutes = (m1 - b'0') * 10 + (m2 - b'0');
            (hours < 14 && minutes <= 59) || (hours == 14 && minutes == 0)
        }
        _ => false,
    }
}

/// The instant a full `dateTime` (with time and zone) names, as (seconds,
/// nanoseconds) since the Unix epoch; `None` for a partial one.
pub fn instant_of(text: &str) -> Option<(i64, i32)> {
    if text.len() < 20 || !is_fhir_date_time(text) {
        return None;
    }
    let timestamp = Timestamp::from_str(text).ok()?;
    Some((timestamp.seconds, timestamp.nanos))
}

/// A FHIR `instant` for `timestamp` (RFC 3339 in UTC).
pub fn instant(timestamp: &Timestamp) -> String {
    timestamp.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn date_times_as_fhir_r4_defines_them() {
        for good in [
            "2026",
            "2026-12",
            "2026-12-03",
            "2026-12-03T09:41:00Z",
            "2026-12-03T09:41:00.250+01:00",
            "2026-12-03T09:41:00-05:00",
        ] {
            assert!(is_fhir_date_time(good), "{good}");
        }
        for bad in [
            "",
            "0000",
            "26-12-03",
            "2026-13",
            "2026-12-32",
            "2026-12-03T09:41",
            "2026-12-03T09:41:00",
            "2026-12-03T25:00:00Z",
            "2026-12-03T09:41:00.Z",
            "2026-12-03 09:41:00Z",
            "2026-12-03T09:41:00+1:00",
        ] {
            assert!(!is_fhir_date_time(bad), "{bad}");
        }
    }

    #[test]
    fn full_date_times_order_across_zones() {
        let a = instant_of("2026-12-03T09:41:00+01:00").unwrap();
        let b = instant_of("2026-12-03T08:42:00Z").unwrap();
        assert!(a < b);
        assert_eq!(instant_of("2026-12-03"), None);
    }
}
