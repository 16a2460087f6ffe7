//! Reading UTC times as operators and files write them. The caller passes the date to use when
//! only a time of day is given, so nothing here reads the clock.

use chrono::{DateTime, NaiveDate, NaiveDateTime, NaiveTime, Utc};

#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "time `{0}` is not a UTC time (examples: 2026-12-01 14:05, 2026-12-01T14:05:00Z, 14:05, 1405)"
)]
pub struct TimeError(pub String);

/// Parses a UTC time. Accepted: RFC 3339 with any offset (converted to UTC);
/// `YYYY-MM-DD HH:MM[:SS]` or with `T` (taken as UTC); ADIF-style `YYYYMMDD HHMM[SS]`; and a
/// time of day alone (`HH:MM[:SS]`, `HHMM`, `HHMMSS`) on `today`.
pub fn parse_utc(input: &str, today: NaiveDate) -> Result<DateTime<Utc>, TimeError> {
    let text = input.trim();
    let err = || TimeError(text.to_string());
    if text.is_empty() {
        return Err(err());
    }
    if let Ok(t) = DateTime::parse_from_rfc3339(text) {
        return Ok(t.with_timezone(&Utc));
    }
    let no_z = text.strip_suffix(['Z', 'z']).unwrap_or(text);
    for f in [
        "%Y-%m-%d %H:%M:%S",
        "%Y-%m-%d %H:%M",
        "%Y-%m-%dT%H:%M:%S",
        "%Y-%m-%dT%H:%M",
        "%Y%m%d %H%M%S",
        "%Y%m%d %H%M",
    ] {
        if let Ok(t) = NaiveDateTime::parse_from_str(no_z, f) {
            return Ok(t.and_utc());
        }
    }
    let time_formats: &[&str] = match no_z.len() {
        4 => &["%H%M"],
        6 => &["%H%M%S"],
        _ => &["%H:%M:%S", "%H:%M"],
    };
    for f in time_formats {
        if let Ok(t) = NaiveTime::parse_from_str(no_z, f) {
            return Ok(today.and_time(t).and_utc());
        }
    }
    Err(err())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn day() -> NaiveDate {
        NaiveDate::from_ymd_opt(2026, 12, 1).unwrap()
    }

    fn t(s: &str) -> String {
        parse_utc(s, day()).unwrap().to_rfc3339()
    }

    #[test]
    fn all_forms_give_utc() {
        assert_eq!(t("2026-12-01T14:05:00Z"), "2026-12-01T14:05:00+00:00");
        assert_eq!(t("2026-12-01T15:05:00+01:00"), "2026-12-01T14:05:00+00:00");
        assert_eq!(t("2026-11-30 23:59"), "2026-11-30T23:59:00+00:00");
        assert_eq!(t("20261130 2359"), "2026-11-30T23:59:00+00:00");
        assert_eq!(t("20261130 235901"), "2026-11-30T23:59:01+00:00");
        assert_eq!(t("14:05"), "2026-12-01T14:05:00+00:00");
        assert_eq!(t("1405"), "2026-12-01T14:05:00+00:00");
        assert_eq!(t("140530"), "2026-12-01T14:05:30+00:00");
    }

    #[test]
    fn bad_times_name_the_value() {
        for s in ["25:00", "2461", "yesterday", "2026-02-30 10:00", ""] {
            let e = parse_utc(s, day()).unwrap_err().to_string();
            assert!(
                e.starts_with(&format!("time `{s}` is not a UTC time")),
                "{e}"
            );
        }
    }
}
