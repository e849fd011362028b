// ISO 8601 dates and times as route manifests give them.
#pragma once

#include <optional>
#include <string>

namespace cavitas::app {

/// UTC now as 2026-12-01T22:07:23Z.
std::string utc_now();

struct Timestamp {
    /// Normalised: "YYYY-MM-DDTHH:MM:SS", with "Z" when the text gave a zone
    /// (converted to UTC); without a zone the time is kept as the site's own
    /// clock. Sorts as text.
    std::string text;
    /// Days since 1970-01-01 00:00 (a time without a zone counted as if UTC),
    /// for slopes over time.
    double days = 0.0;
};

/// "2026-11-02", "2026-11-02T09:05", "2026-11-02 09:05:30", "2026-11-02T09:05:30Z",
/// "2026-11-02T09:05:30+01:00", fractions of a second dropped. nullopt when the
/// text is not such a date or names an impossible one (2026-02-30, 25:00).
std::optional<Timestamp> parse_iso8601(const std::string& text);

/// The calendar date ("YYYY-MM-DD") `days` days after the date of an ISO 8601
/// text as parse_iso8601 reads it (the date as normalised: UTC when the text
/// gave a zone); nullopt when the text is not such a date.
std::optional<std::string> date_after_days(const std::string& text, int days);

}  // namespace cavitas::app
