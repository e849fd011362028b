// Text from outside made safe where it is written out (src/plain_text).
// Well-formedness follows the Unicode Standard 15.0, table 3-7 ("Well-Formed
// UTF-8 Byte Sequences"); the sequences below are its boundary cases.
#include <catch2/catch.hpp>

#include <algorithm>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "src/output/plain_text.hpp"

using cavitas::app::for_terminal;
using cavitas::app::json_text;
using cavitas::app::shortened;
using cavitas::app::valid_utf8;

namespace {
const std::string kFffd = "\xEF\xBF\xBD";
}

TEST_CASE("valid_utf8 keeps well-formed text and replaces each bad byte (Unicode table 3-7)", "[text]") {
    // Well-formed: ASCII, 2-, 3- and 4-byte forms at the table's edges.
    for (const std::string ok : {"pump OW-P101", "\xC2\x80", "\xDF\xBF", "\xE0\xA0\x80", "\xED\x9F\xBF", "\xEE\x80\x80",
                                 "\xEF\xBF\xBF", "\xF0\x90\x80\x80", "\xF4\x8F\xBF\xBF", "caf\xC3\xA9"})
        CHECK(valid_utf8(ok) == ok);
    // Ill-formed: Latin-1, overlong forms, surrogates, beyond U+10FFFF, a cut sequence, a lone continuation.
    CHECK(valid_utf8("caf\xE9") == "caf" + kFffd);
    CHECK(valid_utf8("\xC0\xAF") == kFffd + kFffd);          // overlong '/'
    CHECK(valid_utf8("\xE0\x80\xAF") == kFffd + kFffd + kFffd);  // overlong, three bytes
    CHECK(valid_utf8("\xED\xA0\x80") == kFffd + kFffd + kFffd);  // U+D800, a surrogate
    CHECK(valid_utf8("\xF4\x90\x80\x80") == kFffd + kFffd + kFffd + kFffd);  // U+110000
    CHECK(valid_utf8("\xE2\x82") == kFffd + kFffd);          // the euro sign cut short
    CHECK(valid_utf8("\x80x") == kFffd + "x");
    CHECK(valid_utf8("\xF5\xFF") == kFffd + kFffd);
}

TEST_CASE("shortened cuts at a character boundary, never inside one", "[text]") {
    const std::string note = "sump drawn down 4 m, \xE2\x82\xAC 1200 strainer";  // a euro sign at bytes 21..23
    CHECK(shortened(note, 100) == note);
    for (std::size_t max = 4; max < note.size(); ++max) {
        const std::string s = shortened(note, max);
        INFO(max);
        CHECK(s.size() <= max);
        CHECK(s.substr(s.size() - 3) == "...");
        CHECK(valid_utf8(s) == s);
    }
}

TEST_CASE("for_terminal escapes control characters and keeps line breaks and text", "[text]") {
    CHECK(for_terminal("n\x1B[31mo.wav") == "n\\x1B[31mo.wav");
    CHECK(for_terminal("bell\x07 del\x7F") == "bell\\x07 del\\x7F");
    CHECK(for_terminal("line\nnext\tcol\r") == "line\nnext\tcol\r");
    CHECK(for_terminal("csi \xC2\x9B" "31m") == "csi \\x9B31m");  // the C1 control CSI, as UTF-8
    CHECK(for_terminal("caf\xC3\xA9 \xE9") == "caf\xC3\xA9 " + kFffd);
}

TEST_CASE("json_text writes text that is not UTF-8 with replacements instead of failing", "[text]") {
    nlohmann::json j;
    j["file"] = "caf\xE9.wav";
    CHECK_THROWS(j.dump());  // what the JSON library does on its own
    CHECK(json_text(j) == "{\"file\":\"caf" + kFffd + ".wav\"}");
    CHECK(nlohmann::json::parse(json_text(j, 2))["file"] == "caf" + kFffd + ".wav");
}

