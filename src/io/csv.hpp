// CSV as spreadsheets and collector exports write it (RFC 4180): fields
// separated by commas, a field in double quotes may hold commas, quotes ("")
// and line breaks; CRLF or LF line ends; a UTF-8 byte-order mark is skipped.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

namespace cavitas::app {

struct CsvRecord {
    std::size_t line = 0;  ///< 1-based line where the record starts
    std::vector<std::string> fields;
};

/// Every record, blank lines skipped. Throws InputError("NAME:LINE: ...") on a
/// quote left open at the end of the text.
std::vector<CsvRecord> parse_csv(const std::string& text, const std::string& name);

/// One field as CSV: quoted when it holds a comma, quote, CR or LF, or has
/// leading or trailing spaces; a text cell a spreadsheet would run as a formula
/// (first character = + - @ TAB CR LF, and not a plain number) gets a leading '.
std::string csv_field(const std::string& s);
/// A record from fields, ending in "\n".
std::string csv_line(const std::vector<std::string>& fields);

}  // namespace cavitas::app
