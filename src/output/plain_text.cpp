#include "src/output/plain_text.hpp"

#include <algorithm>
#include <cstdio>

namespace cavitas::app {

namespace {

constexpr std::string_view kReplacement = "\xEF\xBF\xBD";  // U+FFFD

// The length of the well-formed UTF-8 sequence at text[i], or 0 (RFC 3629,
// Unicode 15 table 3-7).
std::size_t sequence_length(std::string_view text, std::size_t i) {
    const auto b = [&](std::size_t k) { return static_cast<unsigned char>(text[i + k]); };
    const std::size_t left = text.size() - i;
    const unsigned char c = b(0);
    if (c < 0x80) return 1;
    auto cont = [&](std::size_t k, unsigned char lo = 0x80, unsigned char hi = 0xBF) {
        return k < left && b(k) >= lo && b(k) <= hi;
    };
    if (c >= 0xC2 && c <= 0xDF) return cont(1) ? 2 : 0;
    if (c == 0xE0) return cont(1, 0xA0) && cont(2) ? 3 : 0;
    if ((c >= 0xE1 && c <= 0xEC) || c == 0xEE || c == 0xEF) return cont(1) && cont(2) ? 3 : 0;
    if (c == 0xED) return cont(1, 0x80, 0x9F) && cont(2) ? 3 : 0;
    if (c == 0xF0) return cont(1, 0x90) && cont(2) && cont(3) ? 4 : 0;
    if (c >= 0xF1 && c <= 0xF3) return cont(1) && cont(2) && cont(3) ? 4 : 0;
    if (c == 0xF4) return cont(1, 0x80, 0x8F) && cont(2) && cont(3) ? 4 : 0;
    return 0;
}

}  // namespace

std::string valid_utf8(std::string_view text) {
    std::string out;
    out.reserve(text.size());
    for (std::size_t i = 0; i < text.size();) {
        const std::size_t n = sequence_length(text, i);
        if (n == 0) {
            out += kReplacement;
            ++i;
        } else {
            out.append(text.substr(i, n));
            i += n;
        }
    }
    return out;
}

std::string shortened(std::string_view text, std::size_t max_bytes) {
    if (text.size() <= max_bytes) return std::string(text);
    std::size_t end = 0;
    const std::size_t room = max_bytes > 3 ? max_bytes - 3 : 0;
    for (std::size_t i = 0; i < text.size();) {
        const std::size_t n = std::max<std::size_t>(1, sequence_length(text, i));
        if (i + n > room) break;
        i += n;
        end = i;
    }
    return std::string(text.substr(0, end)) + "...";
}

std::string for_terminal(std::string_view text) {
    const std::string valid = valid_utf8(text);
    std::string out;
    out.reserve(valid.size());
    char hex[8];
    for (std::size_t i = 0; i < valid.size(); ++i) {
        const auto c = static_cast<unsigned char>(valid[i]);
        const bool c0 = (c < 0x20 && c != '\n' && c != '\r' && c != '\t') || c == 0x7F;
        // C1 controls U+0080..U+009F are C2 80..C2 9F in UTF-8.
        const bool c1 = c == 0xC2 && i + 1 < valid.size() && static_cast<unsigned char>(valid[i + 1]) <= 0x9F &&
                        static_cast<unsigned char>(valid[i + 1]) >= 0x80;
        if (c0) {
            std::snprintf(hex, sizeof hex, "\\x%02X", c);
            out += hex;
        } else if (c1) {
            std::snprintf(hex, sizeof hex, "\\x%02X", static_cast<unsigned char>(valid[i + 1]));
            out += hex;
            ++i;
        } else {
            out += static_cast<char>(c);
        }
    }
    return out;
}

std::string json_text(const nlohmann::json& j, int indent) {
    return j.dump(indent, ' ', false, nlohmann::json::error_handler_t::replace);
}

std::string json_text(const nlohmann::ordered_json& j, int indent) {
    return j.dump(indent, ' ', false, nlohmann::ordered_json::error_handler_t::replace);
}

TerminalText::TerminalText(std::ostream& stream) : stream_(stream), target_(stream.rdbuf(this)) {}

TerminalText::~TerminalText() {
    pass_on();
    stream_.rdbuf(target_);
}

void TerminalText::pass_on() {
    if (pending_.empty()) return;
    const std::string text = for_terminal(pending_);
    target_->sputn(text.data(), static_cast<std::streamsize>(text.size()));
    pending_.clear();
}

TerminalText::int_type TerminalText::overflow(int_type c) {
    if (traits_type::eq_int_type(c, traits_type::eof())) return traits_type::not_eof(c);
    pending_ += traits_type::to_char_type(c);
    if (c == '\n') pass_on();
    return c;
}

std::streamsize TerminalText::xsputn(const char* s, std::streamsize n) {
    pending_.append(s, static_cast<std::size_t>(n));
    if (pending_.find('\n') != std::string::npos) {
        // Whole lines go on; a sequence cut at the end waits for the rest.
        const std::size_t cut = pending_.rfind('\n') + 1;
        const std::string rest = pending_.substr(cut);
        pending_.resize(cut);
        pass_on();
        pending_ = rest;
    }
    return n;
}

int TerminalText::sync() {
    pass_on();
    return target_->pubsync();
}

}  // namespace cavitas::app
