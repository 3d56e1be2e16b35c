//! Timestamps for log rows: RFC 3339 UTC text with millisecond precision, from the system clock.
//!
//! Owns: the conversion from `SystemTime` to civil UTC date and time.
//! Must not: read time zones or locale; the log is always UTC.

use std::time::{SystemTime, UNIX_EPOCH};

/// Now, as `YYYY-MM-DDTHH:MM:SS.mmmZ`.
pub fn now_text() -> String {
    let since_epoch = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .unwrap_or_default();
    format_unix_millis(since_epoch.as_millis() as i64)
}

/// Milliseconds since the Unix epoch as RFC 3339 UTC text.
pub fn format_unix_millis(millis: i64) -> String {
    let seconds = millis.div_euclid(1000);
    let milli = millis.rem_euclid(1000);
    let days = seconds.div_euclid(86_400);
    let second_of_day = seconds.rem_euclid(86_400);
    let (year, month, day) = civil_from_days(days);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}.{milli:03}Z",
        second_of_day / 3600,
        (second_of_day / 60) % 60,
        second_of_day % 60
    )
}

/// Days since 1970-01-01 to (year, month, day) in the proleptic Gregorian calendar
/// (Howard Hinnant's `civil_from_days`, written here from memory of the published algorithm).
fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let shifted = days + 719_468;
    let era = shifted.div_euclid(146_097);
    let day_of_era = shifted.rem_euclid(146_097);
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let month_index = (5 * day_of_year + 2) / 153;
    let day = (day_of_year - (153 * month_index + 2) / 5 + 1) as u32;
    let month = if month_index < 10 {
        month_index + 3
    } else {
        month_index - 9
    } as u32;
    let year = year_of_era + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_instants_format_as_published() {
        // Reference instants: the Unix epoch, and 2000-03-01 (951868800 s, as `date -u -d @951868800` prints).
        assert_eq!(format_unix_millis(0), "1970-01-01T00:00:00.000Z");
        assert_eq!(
            format_unix_millis(951_868_800_000),
            "2000-03-01T00:00:00.000Z"
        );
        assert_eq!(
            format_unix_millis(1_709_251_199_999),
            "2024-02-29T23:59:59.999Z"
        );
    }
}
