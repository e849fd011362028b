#include "src/atomic_file.hpp"

#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <string>

#include "src/errors.hpp"

namespace cavitas::app {

namespace {

// The process's umask, read without changing it (umask(2) would race with other
// threads creating files): Linux reports it in /proc/self/status; 022 otherwise.
mode_t process_umask() {
    static const mode_t mask = [] {
        std::ifstream in("/proc/self/status");
        std::string line;
        while (std::getline(in, line))
            if (line.rfind("Umask:", 0) == 0) return static_cast<mode_t>(std::stoul(line.substr(6), nullptr, 8));
        return static_cast<mode_t>(022);
    }();
    return mask;
}

}  // namespace

void write_file_atomically(const std::string& path, const std::string& contents) {
    namespace fs = std::filesystem;
    const fs::path target(path);
    fs::path dir = target.parent_path();
    if (dir.empty()) dir = ".";
    std::error_code ec;
    if (!fs::is_directory(dir, ec)) throw InputError(path + ": cannot write: folder " + dir.string() + " does not exist");
    if (fs::is_directory(target, ec)) throw InputError(path + ": cannot write: it is a directory");
    std::string tmpl = (dir / ("." + target.filename().string() + ".XXXXXX")).string();
    const int fd = mkstemp(tmpl.data());
    if (fd < 0) throw InputError(path + ": cannot write: " + std::strerror(errno));
    // mkstemp makes the file private (0600); an output is as readable as any file the user creates.
    ::fchmod(fd, 0666 & ~process_umask());
    const char* p = contents.data();
    std::size_t left = contents.size();
    while (left > 0) {
        const ssize_t w = ::write(fd, p, left);
        if (w < 0) {
            if (errno == EINTR) continue;
            const std::string why = std::strerror(errno);
            ::close(fd);
            ::unlink(tmpl.c_str());
            throw InputError(path + ": cannot write: " + why);
        }
        p += w;
        left -= static_cast<std::size_t>(w);
    }
    if (::fsync(fd) != 0 || ::close(fd) != 0) {
        const std::string why = std::strerror(errno);
        ::unlink(tmpl.c_str());
        throw InputError(path + ": cannot write: " + why);
    }
    if (std::rename(tmpl.c_str(), path.c_str()) != 0) {
        const std::string why = std::strerror(errno);
        ::unlink(tmpl.c_str());
        throw InputError(path + ": cannot write: " + why);
    }
}

}  // namespace cavitas::app
