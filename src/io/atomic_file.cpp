#include "src/io/atomic_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "src/io/errors.hpp"

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

// The file a write lands in: the target of a symbolic link (so the link stays).
std::string write_target(const std::string& path) {
    namespace fs = std::filesystem;
    std::error_code ec;
    if (!fs::is_symlink(path, ec)) return path;
    const fs::path resolved = fs::weakly_canonical(fs::path(path), ec);
    return ec ? path : resolved.string();
}

}  // namespace

StagedFiles::~StagedFiles() {
    for (const auto& s : staged_) ::unlink(s.temporary.c_str());
}

void StagedFiles::add(const std::string& path, const std::string& contents) {
    namespace fs = std::filesystem;
    const std::string target = write_target(path);
    fs::path dir = fs::path(target).parent_path();
    if (dir.empty()) dir = ".";
    std::error_code ec;
    if (!fs::is_directory(dir, ec)) throw InputError(path + ": cannot write: folder " + dir.string() + " does not exist");
    if (fs::is_directory(target, ec)) throw InputError(path + ": cannot write: it is a directory");
    // The temporary name must fit NAME_MAX (255 bytes) whatever the target's length.
    const std::string name = fs::path(target).filename().string();
    std::string tmpl = (dir / ("." + name.substr(0, 200) + ".XXXXXX")).string();
    const int fd = mkstemp(tmpl.data());
    if (fd < 0) throw InputError(path + ": cannot write: " + std::strerror(errno));
    // mkstemp makes the file private (0600); an output is as readable as any file the user creates.
    ::fchmod(fd, 0666 & ~process_umask());
    auto fail = [&](const std::string& why) {
        ::close(fd);
        ::unlink(tmpl.c_str());
        throw InputError(path + ": cannot write: " + why);
    };
    const char* p = contents.data();
    std::size_t left = contents.size();
    while (left > 0) {
        const ssize_t w = ::write(fd, p, left);
        if (w < 0) {
            if (errno == EINTR) continue;
            fail(std::strerror(errno));
        }
        p += w;
        left -= static_cast<std::size_t>(w);
    }
    if (::fsync(fd) != 0) fail(std::strerror(errno));
    if (::close(fd) != 0) {
        const std::string why = std::strerror(errno);
        ::unlink(tmpl.c_str());
        throw InputError(path + ": cannot write: " + why);
    }
    staged_.push_back({path, target, tmpl});
}

void StagedFiles::commit() {
    for (std::size_t i = 0; i < staged_.size(); ++i) {
        const auto& s = staged_[i];
        if (std::rename(s.temporary.c_str(), s.target.c_str()) != 0) {
            const std::string why = std::strerror(errno);
            staged_.erase(staged_.begin(), staged_.begin() + static_cast<std::ptrdiff_t>(i));
            throw InputError(s.path + ": cannot write: " + why);
        }
    }
    staged_.clear();
}

StagedFolder::StagedFolder(const std::string& target) : target_(target) {
    namespace fs = std::filesystem;
    std::error_code ec;
    fs::path t = fs::path(target).lexically_normal();
    if (t.filename().empty()) t = t.parent_path();
    // A link to a folder: the folder it names is swapped, and the link stays.
    if (fs::is_symlink(t, ec)) {
        const fs::path real = fs::canonical(t, ec);
        if (!ec) t = real;
    }
    fs::path parent = t.parent_path();
    if (parent.empty()) parent = ".";
    if (!fs::is_directory(parent, ec))
        throw InputError(target + ": cannot write: folder " + parent.string() + " does not exist");
    target_ = t.string();
    std::string tmpl = (parent / ("." + t.filename().string().substr(0, 200) + ".cavitas-XXXXXX")).string();
    if (::mkdtemp(tmpl.data()) == nullptr)
        throw InputError(target + ": cannot write beside it: " + std::strerror(errno));
    ::chmod(tmpl.c_str(), 0777 & ~process_umask());
    staging_ = tmpl;
}

StagedFolder::~StagedFolder() {
    std::error_code ec;
    if (!committed_) std::filesystem::remove_all(staging_, ec);
}

void StagedFolder::commit() {
    namespace fs = std::filesystem;
    std::error_code ec;
    auto fail = [this](const std::string& why) { throw InputError(target_ + ": cannot write: " + why); };
    if (!fs::exists(fs::symlink_status(target_, ec))) {
        if (::renameat2(AT_FDCWD, staging_.c_str(), AT_FDCWD, target_.c_str(), RENAME_NOREPLACE) != 0 &&
            std::rename(staging_.c_str(), target_.c_str()) != 0)
            fail(std::strerror(errno));
        committed_ = true;
        return;
    }
    if (!fs::is_directory(target_, ec)) fail("it is not a directory");
    // What the old folder holds and the new one does not (a report, notes) moves
    // across first, and back again if the swap fails.
    std::vector<fs::path> kept;
    auto give_back = [&] {
        for (const auto& name : kept) std::rename((fs::path(staging_) / name).c_str(), (fs::path(target_) / name).c_str());
    };
    for (auto it = fs::directory_iterator(target_, ec); !ec && it != fs::directory_iterator(); it.increment(ec)) {
        const fs::path name = it->path().filename(), to = fs::path(staging_) / name;
        if (fs::exists(fs::symlink_status(to, ec))) continue;
        if (std::rename(it->path().c_str(), to.c_str()) != 0) {
            const std::string why = std::strerror(errno);
            give_back();
            fail("cannot keep " + it->path().string() + ": " + why);
        }
        kept.push_back(name);
    }
    if (::renameat2(AT_FDCWD, staging_.c_str(), AT_FDCWD, target_.c_str(), RENAME_EXCHANGE) != 0) {
        if (errno != EINVAL && errno != ENOSYS) {
            const std::string why = std::strerror(errno);
            give_back();
            fail(why);
        }
        // No atomic exchange on this file system: old aside, new in.
        const std::string aside = staging_ + ".old";
        if (std::rename(target_.c_str(), aside.c_str()) != 0) {
            const std::string why = std::strerror(errno);
            give_back();
            fail(why);
        }
        if (std::rename(staging_.c_str(), target_.c_str()) != 0) {
            const std::string why = std::strerror(errno);
            std::rename(aside.c_str(), target_.c_str());
            give_back();
            fail(why);
        }
        staging_ = aside;
    }
    committed_ = true;
    fs::remove_all(staging_, ec);  // the old run
}

void write_file_atomically(const std::string& path, const std::string& contents) {
    StagedFiles files;
    files.add(path, contents);
    files.commit();
}

}  // namespace cavitas::app
