//! The date a report was made, in UTC, from seconds since the Unix epoch (no calendar crate).

/// Year, month (1–12) and day (1–31) of the proleptic Gregorian calendar for `days` since
/// 1970-01-01. The algorithm is H. Hinnant's `civil_from_days` ("chrono-Compatible Low-Level
/// Date Algorithms", 2013), which counts in 400-year eras of 146 097 days starting on 1 March.
pub fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097); // day of era, 0..=146096
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365; // year of era, 0..=399
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100); // day of year from 1 March, 0..=365
    let mp = (5 * doy + 2) / 153; // month from March, 0..=11
    let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = yoe + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

/// "2026-12-02 01:15 UTC" for `secs` seconds since the Unix epoch.
pub fn utc_stamp(secs: i64) -> String {
    let (y, m, d) = civil_from_days(secs.div_euclid(86_400));
    let s = secs.rem_euclid(86_400);
    format!("{y:04}-{m:02}-{d:02} {:02}:{:02} UTC", s / 3600, (s % 3600) / 60)
}

/// The current time as [`utc_stamp`] text (the clock is read here and nowhere else).
pub fn now_utc() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0);
    utc_stamp(secs)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_dates() {
        // Day counts of these dates: common practice (they follow from 365-day years plus leap
        // days; e.g. 2000-03-01 is 11 017 days after 1970-01-01).
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
        assert_eq!(civil_from_days(11_016), (2000, 2, 29));
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(19_782), (2024, 2, 29));
        assert_eq!(utc_stamp(951_782_400 + 3 * 3600 + 25 * 60 + 7), "2000-02-29 03:25 UTC");
    }

    #[test]
    fn consecutive_days_never_skip_or_repeat() {
        let mut prev = civil_from_days(-800_000);
        for d in -799_999..800_000 {
            let cur = civil_from_days(d);
            let next_day = (prev.0, prev.1, prev.2 + 1);
            let next_month = (prev.0, prev.1 + 1, 1);
            let next_year = (prev.0 + 1, 1, 1);
            assert!(
                cur == next_day || cur == next_month || cur == next_year,
                "{prev:?} -> {cur:?}"
            );
            if cur != next_day {
                // The day before a new month is that month's last: Gregorian month lengths.
                let leap = (prev.0 % 4 == 0 && prev.0 % 100 != 0) || prev.0 % 400 == 0;
                let len = [31, if leap { 29 } else { 28 }, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][prev.1 as usize - 1];
                assert_eq!(prev.2, len, "{prev:?} -> {cur:?}");
            }
            prev = cur;
        }
    }
}
