#include "src/io/csv.hpp"

#include "src/io/units.hpp"

#include "src/io/errors.hpp"

namespace cavitas::app {

std::vector<CsvRecord> parse_csv(const std::string& text, const std::string& name) {
    std::vector<CsvRecord> out;
    std::size_t i = 0, line = 1;
    if (text.rfind("\xEF\xBB\xBF", 0) == 0) i = 3;
    const std::size_t n = text.size();
    while (i < n) {
        CsvRecord rec;
        rec.line = line;
        std::string field;
        bool any = false;  // the record has content (not a blank line)
        for (;;) {
            if (i < n && text[i] == '"') {
                any = true;
                const std::size_t open_line = line;
                ++i;
                for (;;) {
                    if (i >= n)
                        throw InputError(name + ":" + std::to_string(open_line) +
                                         ": a quoted field is never closed (a \" is missing)");
                    const char c = text[i++];
                    if (c == '"') {
                        if (i < n && text[i] == '"') {
                            field += '"';
                            ++i;
                        } else {
                            break;
                        }
                    } else {
                        if (c == '\n') ++line;
                        field += c;
                    }
                }
            }
            // Unquoted part (or what follows a closing quote, kept as written).
            while (i < n && text[i] != ',' && text[i] != '\n' && text[i] != '\r') {
                field += text[i++];
                any = true;
            }
            rec.fields.push_back(std::move(field));
            field.clear();
            if (i < n && text[i] == ',') {
                ++i;
                any = true;
                continue;
            }
            // End of record: CRLF, LF, CR or end of text.
            if (i < n && text[i] == '\r') ++i;
            if (i < n && text[i] == '\n') ++i;
            ++line;
            break;
        }
        if (any) out.push_back(std::move(rec));
    }
    return out;
}

std::string csv_field(const std::string& given) {
    // Spreadsheet safety (OWASP, CSV injection): a text cell that begins with
    // = + - @ TAB CR or LF is a formula to a spreadsheet; a leading apostrophe
    // keeps it text. Numbers stay numbers (methods review A9).
    const bool formula = !given.empty() && std::string("=+-@\t\r\n").find(given.front()) != std::string::npos &&
                         !is_decimal(given);
    const std::string s = formula ? "'" + given : given;
    const bool quote = s.find_first_of(",\"\r\n") != std::string::npos ||
                       (!s.empty() && (s.front() == ' ' || s.back() == ' '));
    if (!quote) return s;
    std::string q = "\"";
    for (char c : s) {
        if (c == '"') q += '"';
        q += c;
    }
    return q + '"';
}

std::string csv_line(const std::vector<std::string>& fields) {
    std::string l;
    for (std::size_t k = 0; k < fields.size(); ++k) {
        if (k) l += ',';
        l += csv_field(fields[k]);
    }
    return l + "\n";
}

}  // namespace cavitas::app
