#include "src/io/datetime.hpp"

#include <ctime>

#include <cctype>
#include <cstdio>

namespace cavitas::app {

std::string utc_now() {
    std::time_t t = std::time(nullptr);
    std::tm tm{};
    gmtime_r(&t, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
    return buf;
}
namespace {

// Days from 1970-01-01 to y-m-d in the proleptic Gregorian calendar (the
// civil-from-days inverse of H. Hinnant's "chrono-compatible low-level date
// algorithms").
long days_from_civil(long y, unsigned m, unsigned d) {
    y -= m <= 2;
    const long era = (y >= 0 ? y : y - 399) / 400;
    const unsigned yoe = static_cast<unsigned>(y - era * 400);
    const unsigned doy = (153 * (m > 2 ? m - 3 : m + 9) + 2) / 5 + d - 1;
    const unsigned doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + static_cast<long>(doe) - 719468;
}

void civil_from_days(long z, long& y, unsigned& m, unsigned& d) {
    z += 719468;
    const long era = (z >= 0 ? z : z - 146096) / 146097;
    const unsigned doe = static_cast<unsigned>(z - era * 146097);
    const unsigned yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
    y = static_cast<long>(yoe) + era * 400;
    const unsigned doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    const unsigned mp = (5 * doy + 2) / 153;
    d = doy - (153 * mp + 2) / 5 + 1;
    m = mp < 10 ? mp + 3 : mp - 9;
    y += m <= 2;
}

bool digits(const std::string& s, std::size_t at, std::size_t n, int& out) {
    if (at + n > s.size()) return false;
    out = 0;
    for (std::size_t k = at; k < at + n; ++k) {
        if (!std::isdigit(static_cast<unsigned char>(s[k]))) return false;
        out = out * 10 + (s[k] - '0');
    }
    return true;
}

unsigned days_in_month(int y, int m) {
    static const unsigned dm[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    const bool leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    return m == 2 && leap ? 29u : dm[m - 1];
}

}  // namespace

std::optional<Timestamp> parse_iso8601(const std::string& raw) {
    std::string s = raw;
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.pop_back();
    while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.erase(s.begin());
    int y, mo, d, h = 0, mi = 0, se = 0;
    if (!digits(s, 0, 4, y) || s.size() < 10 || s[4] != '-' || !digits(s, 5, 2, mo) || s[7] != '-' ||
        !digits(s, 8, 2, d))
        return std::nullopt;
    if (y < 1900 || y > 2200 || mo < 1 || mo > 12 || d < 1 || static_cast<unsigned>(d) > days_in_month(y, mo))
        return std::nullopt;
    std::size_t i = 10;
    bool zone = false;
    int offset_min = 0;
    if (i < s.size()) {
        if (s[i] != 'T' && s[i] != ' ') return std::nullopt;
        ++i;
        if (!digits(s, i, 2, h) || i + 2 >= s.size() || s[i + 2] != ':' || !digits(s, i + 3, 2, mi)) return std::nullopt;
        i += 5;
        if (i < s.size() && s[i] == ':') {
            if (!digits(s, i + 1, 2, se)) return std::nullopt;
            i += 3;
            if (i < s.size() && (s[i] == '.' || s[i] == ',')) {
                ++i;
                const std::size_t start = i;
                while (i < s.size() && std::isdigit(static_cast<unsigned char>(s[i]))) ++i;
                if (i == start) return std::nullopt;
            }
        }
        if (h > 23 || mi > 59 || se > 59) return std::nullopt;
        if (i < s.size()) {
            if (s[i] == 'Z' && i + 1 == s.size()) {
                zone = true;
            } else if ((s[i] == '+' || s[i] == '-') && s.size() == i + 6 && s[i + 3] == ':') {
                int oh, om;
                if (!digits(s, i + 1, 2, oh) || !digits(s, i + 4, 2, om) || oh > 14 || om > 59) return std::nullopt;
                offset_min = (s[i] == '+' ? 1 : -1) * (oh * 60 + om);
                zone = true;
            } else {
                return std::nullopt;
            }
        }
    }
    // Seconds since the epoch of the local reading, then to UTC when a zone was given.
    long long secs = static_cast<long long>(days_from_civil(y, static_cast<unsigned>(mo), static_cast<unsigned>(d))) *
                         86400LL +
                     h * 3600LL + mi * 60LL + se - offset_min * 60LL;
    Timestamp t;
    t.days = static_cast<double>(secs) / 86400.0;
    long day = static_cast<long>(secs >= 0 ? secs / 86400 : (secs - 86399) / 86400);
    long long rest = secs - static_cast<long long>(day) * 86400LL;
    long yy;
    unsigned mm, dd;
    civil_from_days(day, yy, mm, dd);
    const int hh = static_cast<int>(rest / 3600), mn = static_cast<int>((rest / 60) % 60), ss = static_cast<int>(rest % 60);
    char b[64];
    std::snprintf(b, sizeof b, "%04ld-%02u-%02uT%02d:%02d:%02d%s", yy, mm, dd, hh, mn, ss, zone ? "Z" : "");
    t.text = b;
    return t;
}

std::optional<std::string> date_after_days(const std::string& text, int days) {
    const auto t = parse_iso8601(text);
    if (!t) return std::nullopt;
    int y = 0, m = 0, d = 0;
    digits(t->text, 0, 4, y);
    digits(t->text, 5, 2, m);
    digits(t->text, 8, 2, d);
    long yy;
    unsigned mm, dd;
    civil_from_days(days_from_civil(y, static_cast<unsigned>(m), static_cast<unsigned>(d)) + days, yy, mm, dd);
    char b[32];
    std::snprintf(b, sizeof b, "%04ld-%02u-%02u", yy, mm, dd);
    return std::string(b);
}

}  // namespace cavitas::app
