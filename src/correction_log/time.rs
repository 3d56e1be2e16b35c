//! Timestamps for log rows: RFC 3339 UTC text with millisecond precision, from the system clock, formatted
//! by the `humantime` crate.
//!
//! Owns: the text form of "now" the log's rows carry.
//! Must not: read time zones or locale; the log is always UTC.

use std::time::SystemTime;

/// Now, as `YYYY-MM-DDTHH:MM:SS.mmmZ`.
pub fn now_text() -> String {
    humantime::format_rfc3339_millis(SystemTime::now()).to_string()
}

#[cfg(test)]
mod tests {
    use std::time::{Duration, UNIX_EPOCH};

    /// Milliseconds since the Unix epoch as the log's text, as `now_text` formats an instant.
    fn format_unix_millis(millis: u64) -> String {
        humantime::format_rfc3339_millis(UNIX_EPOCH + Duration::from_millis(millis)).to_string()
    }

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
