#include "src/text_file.hpp"

#include <filesystem>
#include <fstream>
#include <sstream>

#include "src/errors.hpp"

namespace cavitas::app {

std::string read_text_file(const std::string& path, const std::string& what, std::size_t max_bytes) {
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
    return ss.str();
}

}  // namespace cavitas::app
