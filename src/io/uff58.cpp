#include "src/io/uff58.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <bit>
#include <cctype>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <iterator>
#include <optional>
#include <string_view>
#include <vector>

#include "src/io/errors.hpp"

namespace cavitas::app {
namespace {

// A UFF text line is 80 characters; a "line" this long is not UFF text.
constexpr std::size_t kMaxLineBytes = 1 << 16;
constexpr std::size_t kBlockValues = 8192;
constexpr std::int64_t kMaxValues = std::int64_t{1} << 31;
constexpr std::size_t kMaxDatasets = 65536;
constexpr double kMinRateHz = 1.0, kMaxRateHz = 10e6;

// ------------------------------------------------------------------ bytes

// Where the bytes come from: a file (pread) or memory.
class Bytes {
public:
    virtual ~Bytes() = default;
    virtual std::uint64_t size() const = 0;
    /// Copies up to n bytes from `at`; fewer only at the end. Throws InputError.
    virtual std::size_t read_at(std::uint64_t at, char* to, std::size_t n) const = 0;
};

class MemoryBytes final : public Bytes {
public:
    explicit MemoryBytes(std::span<const std::byte> bytes) : bytes_(bytes) {}
    std::uint64_t size() const override { return bytes_.size(); }
    std::size_t read_at(std::uint64_t at, char* to, std::size_t n) const override {
        if (at >= bytes_.size()) return 0;
        const auto k = static_cast<std::size_t>(std::min<std::uint64_t>(n, bytes_.size() - at));
        std::memcpy(to, bytes_.data() + at, k);
        return k;
    }

private:
    std::span<const std::byte> bytes_;
};

class FileBytes final : public Bytes {
public:
    explicit FileBytes(const std::string& path);
    ~FileBytes() override { ::close(fd_); }
    FileBytes(const FileBytes&) = delete;
    FileBytes& operator=(const FileBytes&) = delete;
    std::uint64_t size() const override { return size_; }
    std::size_t read_at(std::uint64_t at, char* to, std::size_t n) const override;

private:
    std::string path_;
    int fd_ = -1;
    std::uint64_t size_ = 0;
};

FileBytes::FileBytes(const std::string& path) : path_(path) {
    std::error_code ec;
    const auto st = std::filesystem::status(path, ec);
    if (ec || !std::filesystem::exists(st)) throw InputError(path + ": no such file");
    if (std::filesystem::is_directory(st)) throw InputError(path + ": is a directory, not a recording");
    // A FIFO, socket or device would block or never end.
    if (!std::filesystem::is_regular_file(st)) throw InputError(path + ": is not a regular file");
    fd_ = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd_ < 0) throw InputError(path + ": cannot open: " + std::strerror(errno));
    struct stat s {};
    if (::fstat(fd_, &s) != 0) {
        const int e = errno;
        ::close(fd_);
        throw InputError(path + ": cannot open: " + std::strerror(e));
    }
    size_ = static_cast<std::uint64_t>(s.st_size);
}

std::size_t FileBytes::read_at(std::uint64_t at, char* to, std::size_t n) const {
    std::size_t done = 0;
    while (done < n) {
        const ssize_t got = ::pread(fd_, to + done, n - done, static_cast<off_t>(at + done));
        if (got < 0 && errno == EINTR) continue;
        if (got < 0) throw InputError(path_ + ": read error: " + std::strerror(errno));
        if (got == 0) break;
        done += static_cast<std::size_t>(got);
    }
    return done;
}

// ------------------------------------------------------------------ text

std::string_view trim(std::string_view s) {
    while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
    while (!s.empty() && (s.back() == ' ' || s.back() == '\t' || s.back() == '\r')) s.remove_suffix(1);
    return s;
}

// `width` characters from `from`, clamped to the line (trailing blanks may be trimmed).
std::string_view column(std::string_view line, std::size_t from, std::size_t width) {
    if (from >= line.size()) return {};
    return line.substr(from, width);
}

// A line quoted in a message: at most 40 characters, control bytes as '?'.
std::string excerpt(std::string_view line) {
    std::string s(line.substr(0, 40));
    for (char& c : s)
        if (static_cast<unsigned char>(c) < 0x20 || c == 0x7F) c = '?';
    return "\"" + s + (line.size() > 40 ? "...\"" : "\"");
}

std::string num(double v) {
    std::array<char, 32> buf{};
    const auto r = std::to_chars(buf.data(), buf.data() + buf.size(), v);
    return std::string(buf.data(), r.ptr);
}

std::optional<std::int64_t> parse_int(std::string_view s) {
    s = trim(s);
    if (!s.empty() && s.front() == '+') s.remove_prefix(1);
    std::int64_t v = 0;
    const auto r = std::from_chars(s.data(), s.data() + s.size(), v);
    if (s.empty() || r.ec != std::errc() || r.ptr != s.data() + s.size()) return std::nullopt;
    return v;
}

// A Fortran real: E or D exponent, optional '+'. "inf" and "nan" parse (and
// are refused later as not finite, with their position).
std::optional<double> parse_real(std::string_view s) {
    s = trim(s);
    if (!s.empty() && s.front() == '+') s.remove_prefix(1);
    if (s.empty() || s.size() > 64) return std::nullopt;
    std::array<char, 64> buf{};
    std::copy(s.begin(), s.end(), buf.begin());
    for (std::size_t i = 0; i < s.size(); ++i)
        if (buf[i] == 'D' || buf[i] == 'd') buf[i] = 'E';
    double v = 0.0;
    const auto r = std::from_chars(buf.data(), buf.data() + s.size(), v);
    if (r.ec != std::errc() || r.ptr != buf.data() + s.size()) return std::nullopt;
    return v;
}

// A label field: trimmed, "NONE" (the layout's "empty") as "".
std::string label(std::string_view field) {
    const std::string_view t = trim(field);
    return t == "NONE" ? std::string() : std::string(t);
}

// The numbers of one line, split at blanks; when a field is not a number
// (Fortran E format fills its width, so two numbers may touch: "-1.0E+00-2.0E+00")
// split by the fixed field widths of the layout instead, cycling `widths`.
bool parse_by_blanks(std::string_view line, std::vector<double>& out) {
    std::size_t i = 0;
    while (i < line.size()) {
        while (i < line.size() && (line[i] == ' ' || line[i] == '\t')) ++i;
        std::size_t j = i;
        while (j < line.size() && line[j] != ' ' && line[j] != '\t') ++j;
        if (j == i) break;
        const auto v = parse_real(line.substr(i, j - i));
        if (!v) return false;
        out.push_back(*v);
        i = j;
    }
    return true;
}

bool parse_by_columns(std::string_view line, std::span<const std::size_t> widths, std::vector<double>& out) {
    std::size_t at = 0;
    for (std::size_t k = 0; at < line.size(); ++k) {
        const std::string_view field = column(line, at, widths[k % widths.size()]);
        at += field.size();
        if (trim(field).empty()) return trim(line.substr(at)).empty();
        const auto v = parse_real(field);
        if (!v) return false;
        out.push_back(*v);
    }
    return true;
}

bool parse_numbers(std::string_view line, std::span<const std::size_t> widths, std::vector<double>& out) {
    const std::size_t mark = out.size();
    if (parse_by_blanks(line, out)) return true;
    out.resize(mark);
    if (parse_by_columns(line, widths, out)) return true;
    out.resize(mark);
    return false;
}

// Lines of the bytes [at, end): without their line end and trailing blanks.
class LineReader {
public:
    /// `lines_before`: the number of lines before `at` (for messages).
    LineReader(const Bytes& bytes, const std::string& name, std::uint64_t at, std::uint64_t end,
               std::size_t lines_before = 0, bool lines_known = true)
        : bytes_(bytes), name_(name), buf_(2 * kMaxLineBytes), buf_at_(at), pos_(at), start_(at), end_(end),
          line_no_(lines_before), lines_known_(lines_known) {}
    std::optional<std::string_view> next();
    /// Moves to `at` (past a binary block); line numbers are then unknown.
    void seek(std::uint64_t at);
    std::uint64_t pos() const { return pos_; }
    std::uint64_t line_start() const { return start_; }
    /// "line 12" for the line last returned, or "byte 4096" after a binary block.
    std::size_t line_no() const { return line_no_; }
    bool lines_known() const { return lines_known_; }
    std::string where() const {
        return lines_known_ ? "line " + std::to_string(line_no_) : "byte " + std::to_string(start_);
    }

private:
    void refill();
    const Bytes& bytes_;
    const std::string& name_;
    std::vector<char> buf_;
    std::uint64_t buf_at_;
    std::size_t buf_len_ = 0;
    std::uint64_t pos_, start_, end_;
    std::size_t line_no_ = 0;
    bool lines_known_ = true;
};

std::optional<std::string_view> LineReader::next() {
    for (;;) {
        if (pos_ >= end_) return std::nullopt;
        const auto from = static_cast<std::size_t>(pos_ - buf_at_);
        const auto avail = static_cast<std::size_t>(std::min<std::uint64_t>(buf_len_ - from, end_ - pos_));
        const char* b = buf_.data() + from;
        const auto* nl = static_cast<const char*>(std::memchr(b, '\n', avail));
        const bool all_loaded = buf_at_ + buf_len_ >= end_;
        if (nl || (all_loaded && avail > 0)) {
            const std::size_t len = nl ? static_cast<std::size_t>(nl - b) : avail;
            start_ = pos_;
            pos_ += nl ? len + 1 : len;
            ++line_no_;
            std::string_view line(b, len);
            while (!line.empty() && (line.back() == ' ' || line.back() == '\t' || line.back() == '\r'))
                line.remove_suffix(1);
            return line;
        }
        if (avail >= kMaxLineBytes)
            throw InputError(name_ + ": line " + std::to_string(line_no_ + 1) + " is longer than " +
                             std::to_string(kMaxLineBytes) + " bytes: not the text of a UFF file");
        refill();
    }
}

void LineReader::refill() {
    const auto from = static_cast<std::size_t>(pos_ - buf_at_);
    std::memmove(buf_.data(), buf_.data() + from, buf_len_ - from);
    buf_len_ -= from;
    buf_at_ = pos_;
    const auto want = static_cast<std::size_t>(
        std::min<std::uint64_t>(buf_.size() - buf_len_, end_ - (buf_at_ + buf_len_)));
    const std::size_t got = bytes_.read_at(buf_at_ + buf_len_, buf_.data() + buf_len_, want);
    buf_len_ += got;
    if (got < want) end_ = buf_at_ + buf_len_;  // the file is shorter than it was
}

void LineReader::seek(std::uint64_t at) {
    if (at < buf_at_ || at > buf_at_ + buf_len_) {
        buf_at_ = at;
        buf_len_ = 0;
    }
    pos_ = start_ = at;
    lines_known_ = false;
}

// ------------------------------------------------------------------ datasets

struct Axis {
    std::int64_t type = 0;  ///< specific data type (17 time, 12 acceleration, ...)
    std::string label, unit;
};

struct Problem {
    int record = 0;
    std::string text;
};

struct Dataset {
    int position = 0;  ///< 1 = the file's first dataset of any type
    int channel = 0;   ///< 0 = the file's first dataset 58/58b
    bool binary = false, big_endian = false;
    std::int64_t fp_format = 2, n_bytes_stated = 0;
    std::array<std::string, 5> id;
    std::int64_t function_type = 0, node = 0, direction = 0;
    std::string entity;
    std::int64_t ordinate_type = 0, n = 0, spacing = 1;
    double x0 = 0.0, dx_s = 0.0;
    Axis abscissa, ordinate;
    std::uint64_t data_at = 0, data_end = 0;  ///< record 12: the binary block, or the text up to the closing -1
    std::size_t lines_before_data = 0;        ///< text: the lines before record 12 (0 after a binary block)
    bool lines_known = true;
    bool closed = true;                       ///< the closing -1 was there (not the end of the file)
    std::optional<Problem> problem;           ///< why it is not a time waveform cavitas reads
    bool even() const { return spacing == 1; }
    bool single() const { return ordinate_type == 2 || ordinate_type == 5; }
};

std::string at(const std::string& name, const Dataset& d, const std::string& place) {
    return name + ": dataset " + std::to_string(d.position) + " (" + (d.binary ? "58b" : "58") + ", channel " +
           std::to_string(d.channel) + ", " + place + "): ";
}

std::string record(int r) { return "record " + std::to_string(r); }

// Numbers in record 12 per abscissa point, and bytes per number in 58b.
std::int64_t numbers_per_point(const Dataset& d) {
    const bool complex = d.ordinate_type == 5 || d.ordinate_type == 6;
    return (complex ? 2 : 1) + (d.even() ? 0 : 1);
}
std::int64_t bytes_per_number(const Dataset& d) { return d.single() ? 4 : 8; }

struct IdLine {
    std::int64_t type = 0;
    bool binary = false;
    std::int64_t byte_order = 0, fp_format = 0, ascii_lines = 0, n_bytes = 0;
};

// "    58" or "    58b     1     2          11      889600     0     0           0           0":
// (I6,A1,I6,I6,I12,I12,I6,I6,I12,I12).
IdLine parse_id_line(std::string_view line, const std::string& where) {
    std::string_view t = trim(line);
    std::size_t digits = 0;
    while (digits < t.size() && std::isdigit(static_cast<unsigned char>(t[digits]))) ++digits;
    IdLine id;
    const auto type = parse_int(t.substr(0, digits));
    if (!type) throw InputError(where + "the line after the delimiter -1 is not a dataset number: " + excerpt(line));
    id.type = *type;
    t.remove_prefix(digits);
    if (t.empty() || (t.front() != 'b' && t.front() != 'B')) return id;
    id.binary = true;
    std::vector<double> f;
    std::array<std::size_t, 1> w{6};
    if (!parse_numbers(t.substr(1), w, f) || f.size() < 4)
        throw InputError(where + "the binary id line does not hold byte order, format, line and byte counts: " +
                         excerpt(line));
    // A field that is not a whole number in range counts as -1 (refused where it matters).
    auto whole = [](double v) { return v >= 0 && v < 9e18 && v == std::floor(v) ? static_cast<std::int64_t>(v) : -1; };
    id.byte_order = whole(f[0]);
    id.fp_format = whole(f[1]);
    id.ascii_lines = whole(f[2]);
    id.n_bytes = whole(f[3]);
    return id;
}

std::string_view need_line(LineReader& r, const std::string& name, const Dataset& d, int rec) {
    const auto line = r.next();
    if (!line) throw InputError(at(name, d, record(rec)) + "the file ends inside the dataset's header");
    return *line;
}

// Record 6: 2(I5,I10),2(1X,10A1,I10,I4).
void parse_record6(std::string_view line, const std::string& where, Dataset& d) {
    const auto type = parse_int(column(line, 0, 5));
    if (!type) throw InputError(where + "function type is not a number: " + excerpt(line));
    d.function_type = *type;
    d.entity = label(column(line, 31, 10));
    d.node = parse_int(column(line, 41, 10)).value_or(0);
    d.direction = parse_int(column(line, 51, 4)).value_or(0);
}

// Record 7: 3I10,3E13.5.
void parse_record7(std::string_view line, const std::string& where, Dataset& d) {
    std::vector<double> f;
    const std::array<std::size_t, 6> w{10, 10, 10, 13, 13, 13};
    if (!parse_numbers(line, w, f) || f.size() < 5)
        throw InputError(where + "data form (type, count, spacing, minimum, increment) cannot be read: " +
                         excerpt(line));
    for (double v : {f[0], f[1], f[2]})
        if (!(std::abs(v) < 9e18) || v != std::floor(v))
            throw InputError(where + "data type, count and spacing must be whole numbers: " + excerpt(line));
    d.ordinate_type = static_cast<std::int64_t>(f[0]);
    d.n = static_cast<std::int64_t>(f[1]);
    d.spacing = static_cast<std::int64_t>(f[2]);
    d.x0 = f[3];
    d.dx_s = f[4];
}

// Records 8 to 11: I10,3I5,2(1X,20A1).
Axis parse_axis(std::string_view line, const std::string& where) {
    Axis a;
    const auto type = parse_int(column(line, 0, 10));
    if (!type) throw InputError(where + "specific data type is not a number: " + excerpt(line));
    a.type = *type;
    a.label = label(column(line, 26, 20));
    a.unit = label(column(line, 47, 20));
    return a;
}

void parse_header(LineReader& r, const std::string& name, Dataset& d) {
    for (int rec = 1; rec <= 5; ++rec) d.id[static_cast<std::size_t>(rec - 1)] = label(need_line(r, name, d, rec));
    parse_record6(need_line(r, name, d, 6), at(name, d, record(6)), d);
    parse_record7(need_line(r, name, d, 7), at(name, d, record(7)), d);
    d.abscissa = parse_axis(need_line(r, name, d, 8), at(name, d, record(8)));
    d.ordinate = parse_axis(need_line(r, name, d, 9), at(name, d, record(9)));
    parse_axis(need_line(r, name, d, 10), at(name, d, record(10)));
    parse_axis(need_line(r, name, d, 11), at(name, d, record(11)));
}

const char* function_name(std::int64_t type) {
    switch (type) {
        case 0: return "general or unknown";
        case 1: return "time response";
        case 2: return "auto spectrum";
        case 3: return "cross spectrum";
        case 4: return "frequency response function";
        case 5: return "transmissibility";
        case 6: return "coherence";
        case 7: return "auto correlation";
        case 8: return "cross correlation";
        case 9: return "power spectral density";
        case 12: return "spectrum";
        case 27: return "order function";
        default: return "not a time response";
    }
}

bool is_seconds(const std::string& unit) { return unit == "s" || unit == "sec" || unit == "S"; }

std::optional<Problem> rate_problem(const Dataset& d) {
    const std::string inc = d.even() ? "abscissa increment " : "x spacing ";
    if (!std::isfinite(d.dx_s) || d.dx_s <= 0.0)
        return Problem{7, inc + num(d.dx_s) + " s: the sampling interval must be a positive number"};
    const double fs_hz = 1.0 / d.dx_s;
    if (!(fs_hz >= kMinRateHz && fs_hz <= kMaxRateHz))
        return Problem{7, inc + num(d.dx_s) + " s is a sample rate of " + num(fs_hz) +
                              " Hz, outside 1 Hz .. 10 MHz"};
    return std::nullopt;
}

// Why the dataset is not a time waveform cavitas reads, from its header.
std::optional<Problem> judge(const Dataset& d) {
    if (d.function_type != 1)
        return Problem{6, "function type " + std::to_string(d.function_type) + " (" + function_name(d.function_type) +
                              ") is not 1 (time response): cavitas reads time waveforms only"};
    if (d.ordinate_type == 5 || d.ordinate_type == 6)
        return Problem{7, "ordinate data type " + std::to_string(d.ordinate_type) + " (complex " +
                              (d.ordinate_type == 5 ? "single" : "double") + "): a complex function is not a waveform"};
    if (d.ordinate_type != 2 && d.ordinate_type != 4)
        return Problem{7, "ordinate data type " + std::to_string(d.ordinate_type) +
                              " is not one of 2 (real single), 4 (real double), 5, 6 (complex)"};
    if (d.n < 1 || d.n > kMaxValues)
        return Problem{7, "number of values " + std::to_string(d.n) + " is outside 1 .. 2^31"};
    if (d.spacing != 0 && d.spacing != 1)
        return Problem{7, "abscissa spacing " + std::to_string(d.spacing) + " is neither 0 (uneven) nor 1 (even)"};
    const bool time = d.abscissa.type == 17 || (d.abscissa.type == 0 && is_seconds(d.abscissa.unit));
    if (!time || !(d.abscissa.unit.empty() || is_seconds(d.abscissa.unit)))
        return Problem{8, "abscissa of data type " + std::to_string(d.abscissa.type) + " in unit " +
                              excerpt(d.abscissa.unit) +
                              " is not time in seconds (type 17, unit s): cavitas reads time waveforms only"};
    if (!d.even() && d.n < 2) return Problem{7, "an uneven abscissa of 1 point states no sample rate"};
    return d.even() ? rate_problem(d) : std::nullopt;
}

// The closing -1 after a dataset's text: its offset, or nullopt at the end of the file.
std::optional<std::uint64_t> scan_to_closing(LineReader& r) {
    while (const auto line = r.next())
        if (trim(*line) == "-1") return r.line_start();
    return std::nullopt;
}

// After a binary block: blank lines, then the closing -1 (or the end of the file).
bool closing_after_block(LineReader& r, const std::string& where) {
    while (const auto line = r.next()) {
        if (line->empty()) continue;
        if (trim(*line) == "-1") return true;
        throw InputError(where + "no closing -1 after the binary block, found " + excerpt(*line));
    }
    return false;
}

void locate_block(const Bytes& bytes, LineReader& r, const std::string& name, Dataset& d) {
    const std::string where = at(name, d, record(12));
    if (d.ordinate_type < 2 || d.ordinate_type > 6 || d.ordinate_type == 3 || d.n < 1 || d.n > kMaxValues ||
        (d.spacing != 0 && d.spacing != 1))
        throw InputError(at(name, d, record(7)) + "ordinate type " + std::to_string(d.ordinate_type) + ", " +
                         std::to_string(d.n) + " values and spacing " + std::to_string(d.spacing) +
                         " do not tell the length of the binary block");
    d.data_at = r.pos();
    const std::int64_t point_bytes = numbers_per_point(d) * bytes_per_number(d);
    const auto need = static_cast<std::uint64_t>(d.n * point_bytes);
    if (bytes.size() - d.data_at < need)
        throw InputError(where + "the file ends after " + std::to_string((bytes.size() - d.data_at) / point_bytes) +
                         " of the " + std::to_string(d.n) + " values stated in record 7 (the binary block is cut short)");
    d.data_end = d.data_at + need;
    r.seek(d.data_end);
    d.closed = closing_after_block(r, where);
}

Dataset index_58(const Bytes& bytes, LineReader& r, const std::string& name, const IdLine& id, int position,
                 int channel) {
    Dataset d;
    d.position = position;
    d.channel = channel;
    d.binary = id.binary;
    d.big_endian = id.byte_order == 2;
    d.fp_format = id.fp_format;
    d.n_bytes_stated = id.n_bytes;
    if (d.binary && id.ascii_lines != 11)
        throw InputError(at(name, d, "id line") + "states " + std::to_string(id.ascii_lines) +
                         " text lines before the binary block; the layout has 11");
    parse_header(r, name, d);
    if (d.binary) {
        locate_block(bytes, r, name, d);
    } else {
        d.data_at = r.pos();
        d.lines_before_data = r.line_no();
        d.lines_known = r.lines_known();
        const auto end = scan_to_closing(r);
        d.closed = end.has_value();
        d.data_end = end.value_or(r.pos());
    }
    d.problem = judge(d);
    if (!d.problem && d.binary && id.byte_order != 1 && id.byte_order != 2)
        d.problem = Problem{0, "byte order " + std::to_string(id.byte_order) + " is neither 1 (little) nor 2 (big endian)"};
    if (!d.problem && d.binary && id.fp_format != 2)
        d.problem = Problem{0, "floating-point format " + std::to_string(id.fp_format) + " is not 2 (IEEE 754)"};
    return d;
}

const char* dataset_name(std::int64_t type) {
    switch (type) {
        case 151: return "header";
        case 164: return "units";
        case 15: case 2411: return "nodes";
        case 18: case 2420: return "coordinate systems";
        case 82: return "trace lines";
        case 2412: return "elements";
        case 55: case 2414: return "data at nodes";
        case 1858: return "qualifiers of dataset 58";
        default: return "not a time response";
    }
}

// Skips a dataset that is not 58 to its closing -1; returns the note that says so.
std::string skip_dataset(LineReader& r, const std::string& name, const IdLine& id, int position) {
    const std::string where = name + ": dataset " + std::to_string(position) + " (" + std::to_string(id.type) + "): ";
    bool closed = false;
    if (id.binary) {
        if (id.ascii_lines < 0 || id.n_bytes < 0)
            throw InputError(where + "its binary id line does not state the lengths of its parts");
        for (std::int64_t i = 0; i < id.ascii_lines; ++i)
            if (!r.next()) throw InputError(where + "the file ends inside the dataset's header");
        r.seek(r.pos() + static_cast<std::uint64_t>(id.n_bytes));
        closed = closing_after_block(r, where);
    } else {
        closed = scan_to_closing(r).has_value();
    }
    return "dataset " + std::to_string(position) + " is a dataset " + std::to_string(id.type) + (id.binary ? "b" : "") +
           " (" + dataset_name(id.type) + "), skipped" + (closed ? "" : "; it has no closing -1 (end of file)");
}

struct FileIndex {
    std::vector<Dataset> datasets;
    std::vector<std::string> notes;
};

FileIndex index_file(const Bytes& bytes, const std::string& name) {
    FileIndex index;
    LineReader r(bytes, name, 0, bytes.size());
    int position = 0;
    while (const auto line = r.next()) {
        if (line->empty()) continue;
        if (trim(*line) != "-1")
            throw InputError(name + ": " + r.where() + ": expected the delimiter line -1 that opens a dataset, found " +
                             excerpt(*line));
        const auto id_line = r.next();
        if (!id_line) break;  // a last delimiter with nothing after it
        ++position;
        const IdLine id = parse_id_line(*id_line, name + ": dataset " + std::to_string(position) + " (" + r.where() + "): ");
        if (id.type != 58) {
            index.notes.push_back(skip_dataset(r, name, id, position));
            continue;
        }
        if (index.datasets.size() >= kMaxDatasets)
            throw InputError(name + ": more than " + std::to_string(kMaxDatasets) + " datasets 58");
        index.datasets.push_back(index_58(bytes, r, name, id, position, static_cast<int>(index.datasets.size())));
    }
    if (index.datasets.empty())
        throw InputError(name + ": holds no dataset 58 (function at a degree of freedom), so no time waveform, among its " +
                         std::to_string(position) + " dataset(s)");
    return index;
}

// ------------------------------------------------------------------ values

std::uint32_t swap32(std::uint32_t v) { return __builtin_bswap32(v); }
std::uint64_t swap64(std::uint64_t v) { return __builtin_bswap64(v); }

// The numbers of record 12 in file order (x, y pairs when the abscissa is uneven).
class RawValues {
public:
    RawValues(const Bytes& bytes, const Dataset& d, const std::string& name)
        : bytes_(bytes), d_(d), name_(name), pos_(d.data_at) {
        if (!d.binary) lines_.emplace(bytes, name, d.data_at, d.data_end, d.lines_before_data, d.lines_known);
        if (d.binary) raw_.resize(kBlockValues * 8);
    }
    /// Fills `out`; fewer only at the end of record 12.
    std::size_t next(std::span<double> out) { return d_.binary ? next_binary(out) : next_text(out); }
    std::string where() const { return lines_ ? "record 12, " + lines_->where() : "record 12"; }

private:
    std::size_t next_binary(std::span<double> out);
    std::size_t next_text(std::span<double> out);
    const Bytes& bytes_;
    const Dataset& d_;
    const std::string& name_;
    std::optional<LineReader> lines_;
    std::vector<double> pending_;
    std::size_t pending_at_ = 0;
    std::vector<char> raw_;
    std::uint64_t pos_;
};

std::size_t RawValues::next_binary(std::span<double> out) {
    const auto size = static_cast<std::size_t>(bytes_per_number(d_));
    const bool swap = d_.big_endian != (std::endian::native == std::endian::big);
    std::size_t done = 0;
    while (done < out.size() && pos_ < d_.data_end) {
        const std::size_t k = std::min({out.size() - done, kBlockValues, static_cast<std::size_t>((d_.data_end - pos_) / size)});
        if (k == 0) break;
        if (bytes_.read_at(pos_, raw_.data(), k * size) != k * size)
            throw InputError(at(name_, d_, "record 12") + "the file became shorter while it was read");
        for (std::size_t i = 0; i < k; ++i) {
            if (size == 4) {
                std::uint32_t u;
                std::memcpy(&u, raw_.data() + i * 4, 4);
                out[done + i] = static_cast<double>(std::bit_cast<float>(swap ? swap32(u) : u));
            } else {
                std::uint64_t u;
                std::memcpy(&u, raw_.data() + i * 8, 8);
                out[done + i] = std::bit_cast<double>(swap ? swap64(u) : u);
            }
        }
        pos_ += k * size;
        done += k;
    }
    return done;
}

std::size_t RawValues::next_text(std::span<double> out) {
    static constexpr std::array<std::size_t, 1> kSingle{13}, kDouble{20};
    static constexpr std::array<std::size_t, 2> kUnevenDouble{13, 20};
    const std::span<const std::size_t> widths = d_.single() ? std::span<const std::size_t>(kSingle)
                                                : d_.even()  ? std::span<const std::size_t>(kDouble)
                                                             : std::span<const std::size_t>(kUnevenDouble);
    std::size_t done = 0;
    while (done < out.size()) {
        if (pending_at_ < pending_.size()) {
            const std::size_t k = std::min(out.size() - done, pending_.size() - pending_at_);
            std::copy_n(pending_.begin() + static_cast<std::ptrdiff_t>(pending_at_), k, out.begin() + static_cast<std::ptrdiff_t>(done));
            pending_at_ += k;
            done += k;
            continue;
        }
        const auto line = lines_->next();
        if (!line) break;
        pending_.clear();
        pending_at_ = 0;
        if (!parse_numbers(*line, widths, pending_))
            throw InputError(at(name_, d_, where()) + "not numbers: " + excerpt(*line));
    }
    return done;
}

// One sample as read(): a single value times the full scale in float (as a
// float WAV sample), a double value times it in double, then rounded.
float to_sample(double v, const Dataset& d, double full_scale) {
    return d.single() ? static_cast<float>(v) * static_cast<float>(full_scale) : static_cast<float>(v * full_scale);
}

struct Extent {
    std::int64_t numbers = 0;
    double x_first = 0.0, x_last = 0.0;
};

// Reads every number of record 12 once: the count, each value finite as a
// sample, the first and last x of an uneven abscissa.
Extent scan_values(const Bytes& bytes, const Dataset& d, const std::string& name, double full_scale) {
    RawValues values(bytes, d, name);
    std::vector<double> buf(kBlockValues);
    const std::int64_t per_point = numbers_per_point(d), expected = d.n * per_point;
    Extent e;
    for (std::size_t got; (got = values.next(buf)) > 0;) {
        for (std::size_t i = 0; i < got; ++i, ++e.numbers) {
            if (e.numbers >= expected)
                throw InputError(at(name, d, values.where()) + "more values than the " + std::to_string(d.n) +
                                 " stated in record 7");
            const bool is_x = per_point == 2 && e.numbers % 2 == 0;
            if (is_x && e.numbers == 0) e.x_first = buf[i];
            if (is_x) e.x_last = buf[i];
            if (is_x ? std::isfinite(buf[i]) : std::isfinite(to_sample(buf[i], d, full_scale))) continue;
            throw InputError(at(name, d, values.where()) + (is_x ? "x of value " : "value ") +
                             std::to_string(e.numbers / per_point) + " (counting from 0) is " + num(buf[i]) +
                             (is_x ? "" : ", not a finite sample"));
        }
    }
    if (e.numbers < expected)
        throw InputError(at(name, d, "record 12") + "holds " + std::to_string(e.numbers / per_point) + " of the " +
                         std::to_string(d.n) + " values stated in record 7" +
                         (d.closed ? "" : " (the file ends without the closing -1: cut short?)"));
    return e;
}

// An uneven abscissa read as a sample rate: every x on the grid from the
// first to the last x within 1e-6 of the record's span, plus the rounding of
// the x values as written (1e-5 relative for text, 2^-23 for binary single).
void check_grid(const Bytes& bytes, Dataset& d, const std::string& name, const Extent& e) {
    d.x0 = e.x_first;
    d.dx_s = (e.x_last - e.x_first) / static_cast<double>(d.n - 1);
    if (auto p = rate_problem(d)) throw InputError(at(name, d, record(12)) + p->text);
    const double rounding = !d.binary ? 1e-5 : d.single() ? 1.2e-7 : 0.0;
    RawValues values(bytes, d, name);
    std::vector<double> buf(kBlockValues);
    std::int64_t k = 0;
    for (std::size_t got; (got = values.next(buf)) > 0;)
        for (std::size_t i = 0; i < got; i += 2, ++k) {
            const double grid = e.x_first + static_cast<double>(k) * d.dx_s;
            const double tol = 1e-6 * (e.x_last - e.x_first) + rounding * std::abs(buf[i]);
            if (std::abs(buf[i] - grid) <= tol) continue;
            throw InputError(at(name, d, values.where()) + "x of value " + std::to_string(k) + " is " + num(buf[i]) +
                             " s, " + num(buf[i] - grid) + " s off the even grid of " + num(d.dx_s) +
                             " s: cavitas needs evenly sampled data");
        }
}

// The checks before a dataset is read: its header, then its values.
void check_dataset(const Bytes& bytes, Dataset& d, const std::string& name, double full_scale) {
    if (d.problem) throw InputError(at(name, d, d.problem->record ? record(d.problem->record) : "id line") + d.problem->text);
    const Extent e = scan_values(bytes, d, name, full_scale);
    if (!d.even()) check_grid(bytes, d, name, e);
}

std::string direction_name(std::int64_t dir) {
    static const char* axes[] = {"X", "Y", "Z", "RX", "RY", "RZ"};
    if (dir == 0 || dir < -6 || dir > 6) return "";
    return std::string(dir > 0 ? "+" : "-") + axes[std::abs(dir) - 1];
}

std::string channel_name(const Dataset& d) {
    if (d.entity.empty()) return d.id[0];
    const std::string dir = direction_name(d.direction);
    return d.entity + ":" + std::to_string(d.node) + (dir.empty() ? "" : ":" + dir);
}

std::string format_of(const Dataset& d) {
    std::string s = d.binary ? "UFF dataset 58b (binary, " : "UFF dataset 58 (ASCII, ";
    if (d.binary) s += d.big_endian ? "big-endian, " : "little-endian, ";
    s += d.ordinate_type == 4 ? "real double" : d.ordinate_type == 2 ? "real single" : "type " + std::to_string(d.ordinate_type);
    return s + (d.even() ? ")" : ", uneven abscissa)");
}

}  // namespace

// ------------------------------------------------------------------ the source

struct Uff58Source::State {
    std::unique_ptr<Bytes> bytes;
    Dataset dataset;
    std::unique_ptr<RawValues> values;
    std::vector<double> buf;
    std::size_t delivered = 0;
};

Uff58Source::Uff58Source(const std::string& path, int channel, const Calibration& calibration)
    : state_(std::make_unique<State>()) {
    info_.path = path;
    info_.calibration = calibration;
    state_->bytes = std::make_unique<FileBytes>(path);
    open(channel);
}

Uff58Source::Uff58Source(std::span<const std::byte> bytes, const std::string& name, int channel,
                         const Calibration& calibration)
    : state_(std::make_unique<State>()) {
    info_.path = name;
    info_.calibration = calibration;
    state_->bytes = std::make_unique<MemoryBytes>(bytes);
    open(channel);
}

Uff58Source::~Uff58Source() = default;

void Uff58Source::open(int channel) {
    const std::string& name = info_.path;
    FileIndex index = index_file(*state_->bytes, name);
    const auto channels = static_cast<int>(index.datasets.size());
    if (channel < 0 || channel >= channels)
        throw InputError(name + ": channel " + std::to_string(channel) + " requested, but the file has " +
                         std::to_string(channels) + " dataset(s) 58, channels 0.." + std::to_string(channels - 1));
    Dataset& d = state_->dataset = std::move(index.datasets[static_cast<std::size_t>(channel)]);
    check_dataset(*state_->bytes, d, name, info_.calibration.full_scale);
    info_.fs_hz = 1.0 / d.dx_s;
    info_.channels = channels;
    info_.channel = channel;
    info_.frames = static_cast<std::size_t>(d.n);
    info_.format = format_of(d);
    info_.is_float = true;
    info_.pcm_bits = 0;
    info_.channel_name = channel_name(d);
    info_.stated_unit = d.ordinate.unit;
    state_->values = std::make_unique<RawValues>(*state_->bytes, d, name);
    state_->buf.resize(kBlockValues * 2);
}

std::size_t Uff58Source::read(std::span<float> out) {
    State& s = *state_;
    const Dataset& d = s.dataset;
    const auto per_point = static_cast<std::size_t>(numbers_per_point(d));
    std::size_t written = 0;
    while (written < out.size() && s.delivered < info_.frames) {
        const std::size_t want = std::min({out.size() - written, info_.frames - s.delivered, kBlockValues});
        const std::size_t got = s.values->next(std::span<double>(s.buf.data(), want * per_point)) / per_point;
        if (got == 0)
            throw InputError(at(info_.path, d, "record 12") + "ended after " + std::to_string(s.delivered) +
                             " values while it was read (the file changed?)");
        for (std::size_t i = 0; i < got; ++i)
            out[written + i] = to_sample(s.buf[i * per_point + per_point - 1], d, info_.calibration.full_scale);
        written += got;
        s.delivered += got;
    }
    return written;
}

// ------------------------------------------------------------------ describe

namespace {

// The ID lines a dataset fills: ID1 describes it, ID3 is usually its date.
std::string id_note(const Dataset& d) {
    static const char* names[] = {"ID1", "ID2", "ID3 (date)", "ID4", "ID5"};
    std::string s;
    for (std::size_t i = 0; i < d.id.size(); ++i)
        if (!d.id[i].empty()) s += (s.empty() ? "" : ", ") + std::string(names[i]) + " " + excerpt(d.id[i]);
    return s.empty() ? "" : "channel " + std::to_string(d.channel) + ": " + s;
}

void describe_dataset(const Bytes& bytes, Dataset& d, const std::string& name, FileSummary& s) {
    ChannelSummary ch;
    ch.index = d.channel;
    ch.name = channel_name(d);
    ch.unit = d.ordinate.unit;
    try {
        check_dataset(bytes, d, name, 1.0);
        ch.fs_hz = 1.0 / d.dx_s;
        ch.frames = static_cast<std::size_t>(d.n);
    } catch (const InputError& e) {
        const std::string what = e.what();
        s.notes.push_back("channel " + std::to_string(d.channel) + " cannot be read: " + what.substr(name.size() + 2));
    }
    s.channels.push_back(ch);
    if (std::string note = id_note(d); !note.empty()) s.notes.push_back(note);
    const std::int64_t derived = d.n * numbers_per_point(d) * bytes_per_number(d);
    if (d.binary && d.n_bytes_stated != derived)
        s.notes.push_back("channel " + std::to_string(d.channel) + ": the binary id line states " +
                          std::to_string(d.n_bytes_stated) + " bytes; the " + std::to_string(d.n) +
                          " values stated in record 7 take " + std::to_string(derived) + ", which were read");
    if (!d.closed) s.notes.push_back("channel " + std::to_string(d.channel) + ": no closing -1 (the file ends after its values)");
}

FileSummary describe(const Bytes& bytes, const std::string& name) {
    FileIndex index = index_file(bytes, name);
    FileSummary s;
    s.path = name;
    s.format = format_of(index.datasets.front());
    for (Dataset& d : index.datasets) {
        describe_dataset(bytes, d, name, s);
        if (format_of(d) != s.format) s.format = "UFF datasets 58/58b (mixed encodings)";
    }
    std::vector<ChannelSummary> readable;
    std::copy_if(s.channels.begin(), s.channels.end(), std::back_inserter(readable),
                 [](const ChannelSummary& c) { return c.frames > 0; });
    if (std::any_of(readable.begin(), readable.end(), [&](const ChannelSummary& c) {
            return c.fs_hz != readable[0].fs_hz || c.frames != readable[0].frames;
        }))
        s.notes.push_back("the channels differ in sample rate or length: each is read on its own");
    s.notes.insert(s.notes.end(), index.notes.begin(), index.notes.end());
    return s;
}

}  // namespace

FileSummary describe_uff58(const std::string& path) {
    const FileBytes bytes(path);
    return describe(bytes, path);
}

FileSummary describe_uff58(std::span<const std::byte> bytes, const std::string& name) {
    const MemoryBytes b(bytes);
    return describe(b, name);
}

}  // namespace cavitas::app
