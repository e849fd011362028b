// Text from outside (file names, manifest cells, notes) is bytes in any
// encoding; what cavitas writes is UTF-8. Invalid sequences are replaced by
// U+FFFD where text is written out (JSON, HTML, the terminal), never a crash
// at output time; on the terminal, control characters from such text are
// shown escaped (\x1B) so a file name cannot drive the terminal.
#pragma once

#include <cstddef>
#include <memory>
#include <ostream>
#include <streambuf>
#include <string>
#include <string_view>

#include <nlohmann/json.hpp>

namespace cavitas::app {

/// The text with every byte that is not part of a well-formed UTF-8 sequence
/// (overlong forms, surrogates and code points above U+10FFFF included)
/// replaced by U+FFFD.
std::string valid_utf8(std::string_view text);

/// At most `max_bytes` of the text, cut at a character boundary, with "..."
/// when cut.
std::string shortened(std::string_view text, std::size_t max_bytes);

/// Valid UTF-8 with the C0 controls other than LF, CR and TAB, DEL and the C1
/// controls written as \xNN: safe to print on a terminal.
std::string for_terminal(std::string_view text);

/// A JSON document as text (indent < 0: one line); strings that are not UTF-8
/// are written with U+FFFD in place of their bad bytes.
std::string json_text(const nlohmann::json& j, int indent = -1);
std::string json_text(const nlohmann::ordered_json& j, int indent = -1);

/// Puts for_terminal() between a stream and its terminal, a line at a time
/// (and whatever is flushed): install() on std::cout and std::cerr in main.
class TerminalText : public std::streambuf {
public:
    explicit TerminalText(std::ostream& stream);
    ~TerminalText() override;
    TerminalText(const TerminalText&) = delete;
    TerminalText& operator=(const TerminalText&) = delete;

protected:
    int_type overflow(int_type c) override;
    std::streamsize xsputn(const char* s, std::streamsize n) override;
    int sync() override;

private:
    void pass_on();
    std::ostream& stream_;
    std::streambuf* target_;
    std::string pending_;
};

}  // namespace cavitas::app
