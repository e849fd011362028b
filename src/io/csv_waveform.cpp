#include "src/io/csv_waveform.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <optional>
#include <string_view>
#include <tuple>

#include "src/io/errors.hpp"
#include "src/io/units.hpp"

namespace cavitas::app {

namespace {

constexpr std::size_t kMaxLineBytes = std::size_t{1} << 20;
constexpr std::size_t kFileBlockBytes = std::size_t{1} << 16;
constexpr std::size_t kDetectRows = 8;
constexpr double kRateAgreement = 1e-6;  // relative
constexpr double kMinRateHz = 100.0, kMaxRateHz = 5e6;  // as for sound files (recording.cpp)

std::string_view trim(std::string_view s, std::string_view blanks = " \t") {
    const auto b = s.find_first_not_of(blanks);
    if (b == std::string_view::npos) return {};
    return s.substr(b, s.find_last_not_of(blanks) - b + 1);
}

std::string lower(std::string_view s) {
    std::string r(s);
    for (char& c : r) c = static_cast<char>(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c);
    return r;
}

// A cell for a message: quoted, at most 32 characters, control bytes shown as '?'.
std::string cell_text(std::string_view cell) {
    std::string s(cell.substr(0, 32));
    for (char& c : s)
        if (static_cast<unsigned char>(c) < 0x20 || c == 0x7F) c = '?';
    return "'" + s + (cell.size() > 32 ? "...'" : "'");
}

std::string number_text(double v) {
    std::array<char, 32> b{};
    const auto r = std::to_chars(b.data(), b.data() + b.size(), v);
    return std::string(b.data(), r.ptr);
}

std::string delimiter_name(char d) {
    if (d == '\t') return "tab";
    if (d == ' ') return "space";
    return std::string("'") + d + "'";
}

bool non_finite_word(std::string_view cell) {
    std::string s = lower(cell);
    if (!s.empty() && (s[0] == '+' || s[0] == '-')) s.erase(0, 1);
    return s.starts_with("nan") || s.starts_with("inf");
}

enum class Cell { number, not_number, not_finite };

// A cell as a number: [+-]digits[.digits][e[+-]digits] with `decimal` as the
// mark (units.hpp's is_decimal judges the text; std::from_chars reads it,
// whatever the locale).
Cell parse_cell(std::string_view cell, char decimal, double& value) {
    if (non_finite_word(cell)) return Cell::not_finite;
    std::array<char, 128> b{};
    if (cell.empty() || cell.size() >= b.size()) return Cell::not_number;
    std::size_t n = 0;
    for (char c : cell) {
        if (c == '.' && decimal == ',') return Cell::not_number;
        b[n++] = c == decimal ? '.' : c;
    }
    const std::string_view text(b.data(), n);
    if (!is_decimal(text)) return Cell::not_number;
    const char* first = b.data() + (b[0] == '+' ? 1 : 0);
    const auto r = std::from_chars(first, b.data() + n, value);
    if (r.ec == std::errc::result_out_of_range) {
        // Below the smallest double: zero; above the largest: not finite.
        const auto e = text.find_first_of("eE");
        if (e == std::string_view::npos || text[e + 1] != '-') return Cell::not_finite;
        value = b[0] == '-' ? -0.0 : 0.0;
    }
    return std::isfinite(value) ? Cell::number : Cell::not_finite;
}

// Half a unit of the last digit printed ("1.99992188" -> 5e-9, "7.8125e-05" -> 5e-10).
double printed_resolution(std::string_view cell) {
    const auto e = cell.find_first_of("eE");
    const std::string_view mantissa = cell.substr(0, e);
    int exponent = 0;
    if (e != std::string_view::npos) {
        std::string_view ex = cell.substr(e + 1);
        if (!ex.empty() && ex[0] == '+') ex.remove_prefix(1);
        std::from_chars(ex.data(), ex.data() + ex.size(), exponent);
    }
    const auto dot = mantissa.find_first_of(".,");
    const int decimals = dot == std::string_view::npos ? 0 : static_cast<int>(mantissa.size() - dot - 1);
    return 0.5 * std::pow(10.0, exponent - decimals);
}

void split(std::string_view line, char delimiter, std::vector<std::string_view>& cells) {
    cells.clear();
    if (delimiter == ' ') {
        std::size_t i = 0;
        while (true) {
            i = line.find_first_not_of(" \t", i);
            if (i == std::string_view::npos) return;
            const auto end = std::min(line.find_first_of(" \t", i), line.size());
            cells.push_back(line.substr(i, end - i));
            i = end;
        }
    }
    const std::string_view blanks = delimiter == '\t' ? " " : " \t";
    for (std::size_t i = 0;;) {
        const auto end = std::min(line.find(delimiter, i), line.size());
        cells.push_back(trim(line.substr(i, end - i), blanks));
        if (end == line.size()) return;
        i = end + 1;
    }
}

bool starts_like_number(std::string_view t) {
    const char c = t.front();
    return (c >= '0' && c <= '9') || c == '+' || c == '-' || c == '.' || non_finite_word(t);
}

// "name [unit]" or "name (unit)"; quotes around the cell dropped.
CsvColumn parse_header_cell(std::string_view cell) {
    if (cell.size() >= 2 && cell.front() == '"' && cell.back() == '"') cell = trim(cell.substr(1, cell.size() - 2));
    for (const auto& [open, close] : {std::pair{'[', ']'}, std::pair{'(', ')'}}) {
        if (cell.empty() || cell.back() != close) continue;
        const auto o = cell.rfind(open);
        if (o == std::string_view::npos) continue;
        return {std::string(trim(cell.substr(0, o))), std::string(trim(cell.substr(o + 1, cell.size() - o - 2)))};
    }
    return {std::string(cell), ""};
}

}  // namespace

// ---------------------------------------------------------------------------
// Lines: a text file or bytes in memory, one line at a time.

class CsvWaveformSource::Lines {
public:
    Lines(std::span<const std::byte> bytes, std::string name) : name_(std::move(name)), mem_(bytes) {}
    explicit Lines(const std::string& path) : name_(path), from_file_(true) {
        std::error_code ec;
        const auto st = std::filesystem::status(path, ec);
        if (ec || !std::filesystem::exists(st)) throw InputError(path + ": no such file");
        if (std::filesystem::is_directory(st)) throw InputError(path + ": is a directory, not a recording");
        if (!std::filesystem::is_regular_file(st)) throw InputError(path + ": is not a regular file");
        file_.open(path, std::ios::binary);
        if (!file_) throw InputError(path + ": cannot open: " + std::strerror(errno));
        buf_.resize(kFileBlockBytes);
    }
    const std::string& name() const { return name_; }
    std::size_t number() const { return number_; }
    /// "NAME:LINE: " for messages about the line last returned.
    std::string where() const { return name_ + ":" + std::to_string(number_) + ": "; }

    /// The next line without its end (CR dropped, a byte-order mark dropped
    /// from line 1); false at the end.
    bool next(std::string_view& line) {
        if (!(from_file_ ? next_file(line) : next_memory(line))) return false;
        ++number_;
        if (number_ == 1) check_start(line);
        if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
        if (line.find('\0') != std::string_view::npos)
            throw InputError(where() + "holds a NUL byte: binary data, not a text table");
        return true;
    }

    void rewind() {
        number_ = 0;
        mem_pos_ = 0;
        if (!from_file_) return;
        file_.clear();
        file_.seekg(0);
        buf_pos_ = buf_end_ = 0;
        if (!file_) throw InputError(name_ + ": cannot read it again from the start");
    }

private:
    void check_start(std::string_view& line) {
        if (line.starts_with("\xEF\xBB\xBF")) line.remove_prefix(3);
        if (line.starts_with("\xFF\xFE") || line.starts_with("\xFE\xFF"))
            throw InputError(where() + "UTF-16 text; save the table as UTF-8 (or plain ASCII)");
    }

    bool next_memory(std::string_view& line) {
        if (mem_pos_ >= mem_.size()) return false;
        const std::string_view all(reinterpret_cast<const char*>(mem_.data()), mem_.size());
        const auto nl = all.find('\n', mem_pos_);
        const auto end = nl == std::string_view::npos ? all.size() : nl;
        line = all.substr(mem_pos_, end - mem_pos_);
        mem_pos_ = end + 1;
        if (line.size() > kMaxLineBytes) throw too_long();
        return true;
    }

    bool next_file(std::string_view& line) {
        line_.clear();
        bool any = false;
        while (true) {
            if (buf_pos_ == buf_end_ && !fill()) break;
            any = true;
            const char* start = buf_.data() + buf_pos_;
            const auto avail = buf_end_ - buf_pos_;
            const auto* nl = static_cast<const char*>(std::memchr(start, '\n', avail));
            const std::size_t n = nl ? static_cast<std::size_t>(nl - start) : avail;
            line_.append(start, n);
            buf_pos_ += n + (nl ? 1 : 0);
            if (line_.size() > kMaxLineBytes) throw too_long();
            if (nl) break;
        }
        line = line_;
        return any;
    }

    bool fill() {
        file_.read(buf_.data(), static_cast<std::streamsize>(buf_.size()));
        buf_pos_ = 0;
        buf_end_ = static_cast<std::size_t>(file_.gcount());
        if (file_.bad()) throw InputError(name_ + ": read error: " + std::strerror(errno));
        return buf_end_ > 0;
    }

    InputError too_long() const {
        return InputError(name_ + ":" + std::to_string(number_ + 1) + ": a line longer than 1 MiB: not a waveform table");
    }

    std::string name_;
    std::span<const std::byte> mem_;
    std::size_t mem_pos_ = 0;
    bool from_file_ = false;
    std::ifstream file_;
    std::vector<char> buf_;
    std::size_t buf_pos_ = 0, buf_end_ = 0;
    std::string line_;
    std::size_t number_ = 0;
};

// ---------------------------------------------------------------------------
// Layout: what the first pass found.

struct CsvWaveformSource::Layout {
    char delimiter = ',';
    char decimal = '.';
    std::vector<CsvColumn> columns;  ///< data columns
    std::size_t cells = 0;           ///< per row, the time column included
    bool time_column = false;
    double time_to_s = 1.0;
    std::optional<double> time_fs_hz;
    std::optional<double> line_fs_hz;
    std::size_t rate_line = 0;
    std::size_t first_data_line = 0;
    std::size_t rows = 0;
};

namespace {

using Lines = CsvWaveformSource::Lines;
using Layout = CsvWaveformSource::Layout;

// "fs=12800", "sample rate: 12.8 kHz", "sample_rate_hz = 12800" -> Hz; nullopt
// when the line is not a rate line; throws when it is one with a bad value.
std::optional<double> rate_line(std::string_view text, const Lines& lines) {
    const auto sep = text.find_first_of("=:");
    if (sep == std::string_view::npos) return std::nullopt;
    std::string key = lower(trim(text.substr(0, sep)));
    std::replace_if(key.begin(), key.end(), [](char c) { return c == '_' || c == '-'; }, ' ');
    static const std::array<std::string_view, 8> keys = {"sample rate", "sample rate hz", "sampling rate",
                                                         "sampling frequency", "samplerate", "fs", "fs hz",
                                                         "sampling rate hz"};
    if (std::find(keys.begin(), keys.end(), key) == keys.end()) return std::nullopt;
    const std::string_view rest = trim(text.substr(sep + 1));
    const auto unit_at = std::min(rest.find_first_not_of("0123456789.+-eE"), rest.size());
    const std::string unit = lower(trim(rest.substr(unit_at)));
    double v = 0.0;
    if (parse_cell(trim(rest.substr(0, unit_at)), '.', v) != Cell::number || !(v > 0.0) ||
        (unit != "" && unit != "hz" && unit != "khz"))
        throw InputError(lines.where() + "rate line " + cell_text(text) + ": expected a rate in Hz, e.g. fs=12800");
    return unit == "khz" ? v * 1e3 : v;
}

struct Prefix {
    std::optional<std::pair<std::string, std::size_t>> header;  // text and line
    std::vector<std::string> rows;                             // the first data rows
};

void note_rate(Layout& layout, double hz, const Lines& lines) {
    if (layout.line_fs_hz && *layout.line_fs_hz != hz)
        throw InputError(lines.where() + "a second rate line (" + number_text(hz) + " Hz) against line " +
                         std::to_string(layout.rate_line) + " (" + number_text(*layout.line_fs_hz) + " Hz)");
    layout.line_fs_hz = hz;
    layout.rate_line = lines.number();
}

// Comments, rate lines and header lines up to the first data row; then the
// first few data rows, for the delimiter.
Prefix read_prefix(Lines& lines, Layout& layout) {
    Prefix p;
    std::string_view line;
    while (p.rows.size() < kDetectRows && lines.next(line)) {
        const std::string_view t = trim(line);
        if (t.empty()) continue;
        if (t[0] == '#') {
            if (p.rows.empty())
                if (auto hz = rate_line(trim(t.substr(1)), lines)) note_rate(layout, *hz, lines);
            continue;
        }
        if (!p.rows.empty() || starts_like_number(t)) {
            if (p.rows.empty()) layout.first_data_line = lines.number();
            p.rows.emplace_back(t);
        } else if (auto hz = rate_line(t, lines)) {
            note_rate(layout, *hz, lines);
        } else {
            p.header = {std::string(t), lines.number()};
        }
    }
    if (lines.number() == 0) throw InputError(lines.name() + ": is empty");
    if (p.rows.empty()) throw InputError(lines.name() + ": no data rows (no line starting with a number)");
    return p;
}

// How well `delimiter` splits the first rows, best first: every cell a number,
// the header splits into as many cells as the first row, the header's cells,
// the rows agree, the cells of the first row.
using Score = std::tuple<bool, bool, std::size_t, bool, std::size_t>;

char decimal_for(char delimiter, char given, const Prefix& p) {
    if (given) return given;
    if (delimiter == ',') return '.';
    for (const auto& r : p.rows)
        if (r.find(',') != std::string::npos) return ',';
    return '.';
}

Score score(const Prefix& p, char delimiter, char decimal) {
    std::vector<std::string_view> cells;
    std::size_t n = 0;
    bool agree = true, numbers = true;
    for (const auto& r : p.rows) {
        split(r, delimiter, cells);
        if (n == 0) n = cells.size();
        agree = agree && cells.size() == n;
        for (auto c : cells) {
            double v = 0.0;
            numbers = numbers && parse_cell(c, decimal, v) != Cell::not_number;
        }
    }
    bool header = false;
    std::size_t header_cells = 0;
    if (p.header) {
        split(p.header->first, delimiter, cells);
        header = cells.size() == n;
        header_cells = cells.size();
    }
    return {numbers, header, header_cells, agree, n};
}

void choose_delimiter(const Prefix& p, const ReadRequest& request, Layout& layout) {
    std::optional<Score> best;
    for (char d : {'\t', ';', ',', ' '}) {
        if (request.csv_delimiter && d != request.csv_delimiter) continue;
        const char decimal = decimal_for(d, request.csv_decimal, p);
        if (d == ',' && decimal == ',') continue;
        const Score s = score(p, d, decimal);
        if (!best || s > *best) {
            best = s;
            layout.delimiter = d;
            layout.decimal = decimal;
        }
    }
}

void check_request(const ReadRequest& r) {
    const std::string_view delimiters(",;\t ", 4);
    if (r.csv_delimiter && delimiters.find(r.csv_delimiter) == std::string_view::npos)
        throw UsageError("--csv-delimiter: one of ',', ';', tab or space");
    if (r.csv_decimal && r.csv_decimal != '.' && r.csv_decimal != ',')
        throw UsageError("--csv-decimal: '.' or ','");
    if (r.csv_delimiter == ',' && r.csv_decimal == ',')
        throw UsageError("--csv-delimiter ',' with --csv-decimal ',': a decimal comma cannot be told from the delimiter");
}

void adopt_header(const Prefix& p, Layout& layout, const std::string& name) {
    std::vector<std::string_view> cells;
    split(p.rows.front(), layout.delimiter, cells);
    layout.cells = cells.size();
    if (!p.header) {
        layout.columns.assign(layout.cells, CsvColumn{});
        return;
    }
    const std::string where = name + ":" + std::to_string(p.header->second) + ": ";
    split(p.header->first, layout.delimiter, cells);
    if (cells.size() != layout.cells)
        throw InputError(where + "the header has " + std::to_string(cells.size()) + " columns, the data rows " +
                         std::to_string(layout.cells) + " (" + delimiter_name(layout.delimiter) + " delimited)");
    for (auto c : cells) layout.columns.push_back(parse_header_cell(c));
    const std::string first = lower(layout.columns.front().name);
    if (first != "time" && first != "t") return;
    const std::string unit = layout.columns.front().unit;
    if (unit != "" && unit != "s" && unit != "ms")
        throw InputError(where + "time column in " + cell_text(unit) + ": s or ms accepted");
    layout.time_column = true;
    layout.time_to_s = unit == "ms" ? 1e-3 : 1.0;
    layout.columns.erase(layout.columns.begin());
}

// Every step of the time column against the mean step before it.
class TimeCheck {
public:
    void add(std::string_view cell, const Lines& lines, const Layout& layout) {
        double t = 0.0;
        const Cell k = parse_cell(cell, layout.decimal, t);
        if (k != Cell::number)
            throw InputError(lines.where() + "column 1 (time): " + cell_text(cell) +
                             (k == Cell::not_finite ? " is not a finite number" : " is not a number"));
        const double res = printed_resolution(cell);
        unit_ = layout.time_to_s == 1.0 ? " s" : " ms";
        if (n_ == 0) {
            t0_ = t;
            res0_ = res;
        } else if (n_ == 1 && !(t > t0_)) {
            throw InputError(lines.where() + "the time column does not increase (" + cell_text(cell) + " after " +
                             number_text(t0_) + ")");
        } else if (n_ >= 2) {
            step(t, res, lines);
        }
        prev_ = t;
        res_prev_ = res;
        ++n_;
    }

    /// 1 / mean step, the nearest whole hertz when the printed times cannot tell them apart.
    double rate_hz(double to_s) const {
        const double span = prev_ - t0_;
        const double fs = static_cast<double>(n_ - 1) / (span * to_s);
        const double uncertainty = fs * ((res0_ + res_prev_) / span + 1e-12);
        return std::abs(fs - std::round(fs)) <= uncertainty ? std::round(fs) : fs;
    }

private:
    void step(double t, double res, const Lines& lines) const {
        const double mean = (prev_ - t0_) / static_cast<double>(n_ - 1);
        const double step = t - prev_;
        const double tol = std::min(0.25 * mean, 1e-6 * std::abs(t) + 2.0 * (res + res_prev_));
        if (std::abs(step - mean) > tol)
            throw InputError(lines.where() + "the time column is not evenly spaced: a step of " + number_text(step) +
                             unit_ + " after a mean step of " + number_text(mean) + unit_ +
                             " (a gap, a jump or a restart in the record); cut the table there or give the rate with "
                             "--sample-rate and no time column");
    }

    std::string unit_;
    std::size_t n_ = 0;
    double t0_ = 0.0, prev_ = 0.0, res0_ = 0.0, res_prev_ = 0.0;
};

// Skips lines up to the first data row.
void seek_data(Lines& lines, const Layout& layout) {
    lines.rewind();
    std::string_view line;
    while (lines.number() + 1 < layout.first_data_line && lines.next(line)) {
    }
}

bool skipped(std::string_view line) {
    const std::string_view t = trim(line);
    return t.empty() || t[0] == '#';
}

std::string column_label(const Layout& layout, std::size_t cell) {
    std::string s = "column " + std::to_string(cell + 1);
    const std::size_t data = cell - (layout.time_column ? 1 : 0);
    if (layout.time_column && cell == 0) return s + " (time)";
    if (data < layout.columns.size() && !layout.columns[data].name.empty())
        s += " (" + layout.columns[data].name + ")";
    return s;
}

void check_row_length(const std::vector<std::string_view>& cells, const Lines& lines, const Layout& layout) {
    if (cells.size() == layout.cells) return;
    throw InputError(lines.where() + (cells.size() < layout.cells ? "a short row: " : "a long row: ") +
                     std::to_string(cells.size()) + " cells where line " + std::to_string(layout.first_data_line) +
                     " has " + std::to_string(layout.cells) + " (" + delimiter_name(layout.delimiter) + " delimited)");
}

// Counts the data rows; checks row lengths and the time column.
void count_rows(Lines& lines, Layout& layout) {
    seek_data(lines, layout);
    std::vector<std::string_view> cells;
    TimeCheck time;
    std::string_view line;
    while (lines.next(line)) {
        if (skipped(line)) continue;
        split(trim(line), layout.delimiter, cells);
        check_row_length(cells, lines, layout);
        if (layout.time_column) time.add(cells[0], lines, layout);
        ++layout.rows;
    }
    if (!layout.time_column) return;
    if (layout.rows < 2) throw InputError(lines.name() + ": one data row: a time column needs two to give a rate");
    layout.time_fs_hz = time.rate_hz(layout.time_to_s);
}

Layout scan(Lines& lines, const ReadRequest& request) {
    check_request(request);
    Layout layout;
    const Prefix p = read_prefix(lines, layout);
    choose_delimiter(p, request, layout);
    adopt_header(p, layout, lines.name());
    if (layout.columns.empty())
        throw InputError(lines.name() + ": only a time column; no channel to read");
    count_rows(lines, layout);
    if (layout.time_fs_hz && layout.line_fs_hz &&
        std::abs(*layout.time_fs_hz - *layout.line_fs_hz) > kRateAgreement * *layout.line_fs_hz)
        throw InputError(lines.name() + ": the time column gives " + number_text(*layout.time_fs_hz) +
                         " Hz, the rate line (line " + std::to_string(layout.rate_line) + ") " +
                         number_text(*layout.line_fs_hz) + " Hz");
    return layout;
}

std::optional<double> stated_rate(const Layout& layout) {
    return layout.time_fs_hz ? layout.time_fs_hz : layout.line_fs_hz;
}

std::string stated_where(const Layout& layout) {
    return layout.time_fs_hz ? "its time column" : "its rate line (line " + std::to_string(layout.rate_line) + ")";
}

double resolve_rate(const Layout& layout, const ReadRequest& request, const std::string& name) {
    const std::optional<double> stated = stated_rate(layout);
    if (!stated && !request.sample_rate_hz) throw InputError(name + ": no time column or rate line; give --sample-rate");
    if (stated && request.sample_rate_hz &&
        !(std::abs(*stated - *request.sample_rate_hz) <= kRateAgreement * *stated))
        throw InputError(name + ": " + stated_where(layout) + " gives " + number_text(*stated) + " Hz, --sample-rate " +
                         number_text(*request.sample_rate_hz) + " Hz");
    const double fs = request.sample_rate_hz ? *request.sample_rate_hz : *stated;
    if (!(fs >= kMinRateHz && fs <= kMaxRateHz))
        throw InputError(name + ": sample rate " + number_text(fs) + " Hz is outside 100 Hz .. 5 MHz");
    return fs;
}

std::string format_of(const Layout& layout) {
    const std::size_t n = layout.columns.size();
    return "CSV waveform (" + delimiter_name(layout.delimiter) + " delimited, " +
           (layout.decimal == ',' ? "decimal comma, " : "decimal point, ") + std::to_string(n) +
           (n == 1 ? " channel)" : " channels)");
}

}  // namespace

// ---------------------------------------------------------------------------

CsvWaveformSource::CsvWaveformSource(const std::string& path, const ReadRequest& request,
                                     const Calibration& calibration)
    : lines_(std::make_unique<Lines>(path)) {
    info_.path = path;
    info_.calibration = calibration;
    open(request);
}

CsvWaveformSource::CsvWaveformSource(std::span<const std::byte> bytes, const std::string& name,
                                     const ReadRequest& request, const Calibration& calibration)
    : lines_(std::make_unique<Lines>(bytes, name)) {
    info_.path = name;
    info_.calibration = calibration;
    open(request);
}

CsvWaveformSource::~CsvWaveformSource() = default;

const std::vector<CsvColumn>& CsvWaveformSource::columns() const { return layout_->columns; }

void CsvWaveformSource::open(const ReadRequest& request) {
    layout_ = std::make_unique<Layout>(scan(*lines_, request));
    const int channels = static_cast<int>(layout_->columns.size());
    if (request.channel < 0 || request.channel >= channels)
        throw InputError(info_.path + ": channel " + std::to_string(request.channel) + " requested, but the file has " +
                         std::to_string(channels) + " channel(s) numbered 0.." + std::to_string(channels - 1));
    info_.fs_hz = resolve_rate(*layout_, request, info_.path);
    info_.channels = channels;
    info_.channel = request.channel;
    info_.frames = layout_->rows;
    info_.format = format_of(*layout_);
    info_.is_float = true;
    info_.pcm_bits = 0;
    const CsvColumn& column = layout_->columns[static_cast<std::size_t>(request.channel)];
    info_.channel_name = column.name;
    info_.stated_unit = column.unit;
    seek_data(*lines_, *layout_);
}

std::size_t CsvWaveformSource::read(std::span<float> out) {
    const Layout& layout = *layout_;
    const std::size_t cell = static_cast<std::size_t>(info_.channel) + (layout.time_column ? 1 : 0);
    std::vector<std::string_view> cells;
    std::string_view line;
    std::size_t n = 0;
    while (n < out.size() && rows_read_ < layout.rows) {
        if (!lines_->next(line)) throw InputError(info_.path + ": ended early: the file changed while it was read");
        if (skipped(line)) continue;
        split(trim(line), layout.delimiter, cells);
        check_row_length(cells, *lines_, layout);
        double v = 0.0;
        const Cell k = parse_cell(cells[cell], layout.decimal, v);
        const auto x = static_cast<float>(v * info_.calibration.full_scale);
        if (k != Cell::number || !std::isfinite(x))
            throw InputError(lines_->where() + column_label(layout, cell) + ": " + cell_text(cells[cell]) +
                             (k == Cell::not_number ? " is not a number" : " is not a finite number (as a float)"));
        out[n++] = x;
        ++rows_read_;
    }
    return n;
}

FileSummary describe_csv_waveform(const std::string& path, const ReadRequest& request) {
    CsvWaveformSource::Lines lines(path);
    const CsvWaveformSource::Layout layout = scan(lines, request);
    FileSummary s;
    s.path = path;
    s.format = format_of(layout);
    const std::optional<double> fs = stated_rate(layout);
    for (std::size_t c = 0; c < layout.columns.size(); ++c) {
        ChannelSummary ch;
        ch.index = static_cast<int>(c);
        ch.name = layout.columns[c].name;
        ch.unit = layout.columns[c].unit;
        ch.fs_hz = fs.value_or(0.0);
        ch.frames = layout.rows;
        s.channels.push_back(ch);
    }
    if (fs) s.notes.push_back("sample rate from " + stated_where(layout));
    else s.notes.push_back("the file states no sample rate: give --sample-rate");
    return s;
}

}  // namespace cavitas::app
