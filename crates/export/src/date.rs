//! Dates for title blocks and messages, in UTC, from the system clock: days since 1970 to the civil
//! (proleptic Gregorian) calendar by H. Hinnant's algorithm ("chrono-Compatible Low-Level Date
//! Algorithms").

/// `YYYY-MM-DD`, and `YYYY-MM-DD HH:MM` when `with_time`, for `secs` seconds after 1970-01-01 00:00 UTC.
pub fn utc_text(secs: u64, with_time: bool) -> String {
    let z = (secs / 86_400) as i64 + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    let date = format!("{year:04}-{month:02}-{day:02}");
    if with_time { format!("{date} {:02}:{:02}", secs % 86_400 / 3600, secs % 3600 / 60) } else { date }
}

/// Today's date in UTC as `YYYY-MM-DD`, from the system clock.
pub fn today_utc() -> String {
    let secs = std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map_or(0, |d| d.as_secs());
    utc_text(secs, false)
}

#[cfg(test)]
mod tests {
    use super::utc_text;

    /// Known instants, their seconds taken from an independent calendar (Python's `datetime` in UTC): the
    /// epoch, the leap day 2000-02-29 (951 782 400 s) and 2026-12-02 21:49 (1 796 248 140 s).
    #[test]
    fn known_instants() {
        assert_eq!(utc_text(0, true), "1970-01-01 00:00");
        assert_eq!(utc_text(951_782_400, false), "2000-02-29");
        assert_eq!(utc_text(1_796_248_140, true), "2026-12-02 21:49");
    }
}
