//! The report's date and its re-verification due date: calendar arithmetic
//! in UTC (jiff), from `--as-of` and `--interval`.

use jiff::{civil::Date, tz::TimeZone, Span, Timestamp, Unit};

/// The interval when none is given. Laboratory policy decides; checklists
/// commonly ask for calculations to be re-verified at least every two years
/// (from memory; see shared/reference/assurance.md part C.2), and this
/// default is shorter.
pub(crate) const DEFAULT_INTERVAL: &str = "6 months";

/// When the report was made and when it falls due.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Schedule {
    /// The report's time, to the second, UTC.
    pub(crate) as_of: Timestamp,
    /// The interval as written.
    pub(crate) interval: String,
    /// The interval in ISO 8601 form.
    pub(crate) interval_iso: String,
    /// The date (UTC) re-verification is due by.
    pub(crate) due_by: Date,
}

/// An `--as-of` time: RFC 3339 (`2026-12-03T09:00:00Z`) or a date
/// (`2026-12-03`, midnight UTC).
pub(crate) fn parse_as_of(text: &str) -> Result<Timestamp, String> {
    let text = text.trim();
    if let Ok(stamp) = text.parse::<Timestamp>() {
        return Ok(stamp);
    }
    text.parse::<Date>()
        .ok()
        .and_then(|date| date.to_zoned_datetime(TimeZone::UTC).ok())
        .map(|zoned| zoned.timestamp())
        .ok_or_else(|| {
            format!(
                "`{text}` is not a time such as 2026-12-03T09:00:00Z or a date such as 2026-12-03"
            )
        })
}

/// An `--interval`: `6 months`, `6mo`, `1 year`, `90 days`, `P6M`.
pub(crate) fn parse_interval(text: &str) -> Result<Span, String> {
    let span: Span = text.trim().parse().map_err(|e| {
        format!("`{text}` is not an interval such as `6 months`, `1 year` or `P6M` ({e})")
    })?;
    if span.is_negative() || span.is_zero() {
        return Err(format!(
            "`{text}`: the interval must be longer than nothing"
        ));
    }
    if span.get_hours() != 0
        || span.get_minutes() != 0
        || span.get_seconds() != 0
        || span.get_milliseconds() != 0
        || span.get_microseconds() != 0
        || span.get_nanoseconds() != 0
    {
        return Err(format!(
            "`{text}`: give the interval in whole days, weeks, months or years"
        ));
    }
    Ok(span)
}

impl Schedule {
    /// The schedule of a report made at `as_of` (to the second), due after
    /// `interval`.
    pub(crate) fn new(as_of: Timestamp, interval: &str) -> Result<Self, String> {
        let as_of = as_of
            .round(Unit::Second)
            .map_err(|e| format!("--as-of: {e}"))?;
        let span = parse_interval(interval)?;
        let due_by = as_of
            .to_zoned_datetime(TimeZone::UTC)
            .checked_add(span)
            .map_err(|e| format!("--interval {interval}: {e}"))?
            .date();
        Ok(Self {
            as_of,
            interval: interval.trim().to_owned(),
            interval_iso: span.to_string(),
            due_by,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn six_months_from_the_end_of_august_is_the_end_of_february() {
        let as_of = parse_as_of("2026-08-31T10:15:30Z").unwrap();
        let schedule = Schedule::new(as_of, "6 months").unwrap();
        assert_eq!(schedule.due_by.to_string(), "2027-02-28");
        assert_eq!(schedule.interval_iso, "P6M");
        assert_eq!(schedule.as_of.to_string(), "2026-08-31T10:15:30Z");
    }

    #[test]
    fn intervals_in_several_spellings_and_refusals() {
        let as_of = parse_as_of("2026-12-03").unwrap();
        assert_eq!(as_of.to_string(), "2026-12-03T00:00:00Z");
        for (text, due) in [
            ("6mo", "2027-06-03"),
            ("1 year", "2027-12-03"),
            ("P2Y", "2028-12-03"),
            ("90 days", "2027-03-03"),
        ] {
            assert_eq!(
                Schedule::new(as_of, text).unwrap().due_by.to_string(),
                due,
                "{text}"
            );
        }
        assert!(parse_interval("0 days").is_err());
        assert!(parse_interval("-6 months").is_err());
        assert!(parse_interval("3 hours").is_err());
        assert!(parse_interval("soon").is_err());
        assert!(parse_as_of("yesterday").is_err());
    }
}
