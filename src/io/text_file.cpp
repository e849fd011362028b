#include "src/io/text_file.hpp"

#include <filesystem>
#include <algorithm>
#include <fstream>
#include <optional>
#include <sstream>

#include "src/io/errors.hpp"
#include "src/io/recording.hpp"

namespace cavitas::app {

namespace {

// UTF-16 text (as spreadsheets save "Unicode text") as UTF-8, or nullopt when the
// text is not UTF-16: a byte-order mark, or ASCII with every other byte zero.
std::optional<std::string> from_utf16(const std::string& text) {
    const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
    if (text.size() < 2) return std::nullopt;
    bool little = false;
    std::size_t start = 0;
    if (byte(0) == 0xFF && byte(1) == 0xFE) little = true, start = 2;
    else if (byte(0) == 0xFE && byte(1) == 0xFF) little = false, start = 2;
    else if (text.size() >= 4 && byte(0) != 0 && byte(1) == 0 && byte(2) != 0 && byte(3) == 0) little = true;
    else if (text.size() >= 4 && byte(0) == 0 && byte(1) != 0 && byte(2) == 0 && byte(3) != 0) little = false;
    else return std::nullopt;
    const auto unit = [&](std::size_t i) -> unsigned {
        return little ? byte(i) | (byte(i + 1) << 8) : (byte(i) << 8) | byte(i + 1);
    };
    std::string out;
    out.reserve(text.size() / 2);
    auto put = [&out](unsigned cp) {
        if (cp < 0x80) {
            out += static_cast<char>(cp);
        } else if (cp < 0x800) {
            out += static_cast<char>(0xC0 | (cp >> 6));
            out += static_cast<char>(0x80 | (cp & 0x3F));
        } else if (cp < 0x10000) {
            out += static_cast<char>(0xE0 | (cp >> 12));
            out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
            out += static_cast<char>(0x80 | (cp & 0x3F));
        } else {
            out += static_cast<char>(0xF0 | (cp >> 18));
            out += static_cast<char>(0x80 | ((cp >> 12) & 0x3F));
            out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
            out += static_cast<char>(0x80 | (cp & 0x3F));
        }
    };
    for (std::size_t i = start; i + 1 < text.size(); i += 2) {
        unsigned cp = unit(i);
        if (cp >= 0xD800 && cp <= 0xDBFF && i + 3 < text.size() && unit(i + 2) >= 0xDC00 && unit(i + 2) <= 0xDFFF) {
            cp = 0x10000 + ((cp - 0xD800) << 10) + (unit(i + 2) - 0xDC00);
            i += 2;
        } else if (cp >= 0xD800 && cp <= 0xDFFF) {
            cp = 0xFFFD;  // a lone surrogate
        }
        put(cp);
    }
    return out;
}

}  // namespace

std::string read_text_file(const std::string& path, const std::string& what, std::size_t max_bytes,
                           std::string* sha256) {
    namespace fs = std::filesystem;
    std::error_code ec;
    const fs::file_status st = fs::status(path, ec);
    if (ec || !fs::exists(st)) throw InputError(path + ": no such " + what);
    if (fs::is_directory(st)) throw InputError(path + ": is a directory, not a " + what);
    if (!fs::is_regular_file(st)) throw InputError(path + ": is not a regular file");
    const auto size = fs::file_size(path, ec);
    if (!ec && size > max_bytes)
        throw InputError(path + ": " + std::to_string(size) + " bytes is too large for a " + what + " (at most " +
                         std::to_string(max_bytes) + ")");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open " + what);
    std::stringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw InputError(path + ": cannot read " + what);
    std::string text = ss.str();
    if (sha256) *sha256 = sha256_bytes(text);
    if (auto utf8 = from_utf16(text)) text = std::move(*utf8);
    if (const auto nul = text.find('\0'); nul != std::string::npos)
        throw InputError(path + ":" + std::to_string(1 + std::count(text.begin(), text.begin() + static_cast<std::ptrdiff_t>(nul), '\n')) +
                         ": holds a NUL byte; a " + what + " is text (UTF-8)");
    return text;
}

}  // namespace cavitas::app
