#include "src/io/output_guard.hpp"

#include <sys/stat.h>

#include <filesystem>

#include "src/io/errors.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;

namespace {

// The longest file name Linux file systems take (NAME_MAX), in bytes.
constexpr std::size_t kNameMaxBytes = 255;

bool inside(const std::string& path, const std::string& folder) {
    if (folder == "/") return path != "/";
    return path.size() > folder.size() && path.compare(0, folder.size(), folder) == 0 && path[folder.size()] == '/';
}

std::string kind_of(mode_t mode) {
    if (S_ISCHR(mode)) return "a character device";
    if (S_ISBLK(mode)) return "a block device";
    if (S_ISFIFO(mode)) return "a pipe (FIFO)";
    if (S_ISSOCK(mode)) return "a socket";
    return "not a regular file";
}

}  // namespace

OutputGuard::Known OutputGuard::locate(const std::string& path, const std::string& role) {
    Known k;
    k.path = path;
    k.role = role;
    std::error_code ec;
    fs::path abs = fs::absolute(path, ec);
    if (ec) abs = fs::path(path);
    const fs::path where = fs::weakly_canonical(abs.lexically_normal(), ec);
    k.where = (ec ? abs.lexically_normal() : where).string();
    while (k.where.size() > 1 && k.where.back() == '/') k.where.pop_back();
    struct stat st {};
    if (::stat(path.c_str(), &st) == 0) {
        k.exists = true;
        k.id = {static_cast<unsigned long long>(st.st_dev), static_cast<unsigned long long>(st.st_ino)};
    }
    return k;
}

void OutputGuard::input(const std::string& path, const std::string& role) {
    if (path.empty()) return;
    Known in = locate(path, role);
    if (!in.exists) return;
    for (const auto& out : outputs_)
        if (out.exists && out.id == in.id)
            throw InputError(out.path + ": is the " + role + " this command reads; refusing to overwrite it (choose "
                             "another output path)");
    for (const auto& dir : folders_)
        if (inside(in.where, dir.where) || in.where == dir.where)
            throw InputError(dir.path + ": holds " + path + ", the " + role + " this command reads; the output folder's "
                             "contents are replaced, so choose a folder that holds no input");
    inputs_.push_back(std::move(in));
}

void OutputGuard::input_store(const std::string& path) {
    input(path, "results store");
    for (const char* suffix : {"-journal", "-wal", "-shm"}) input(path + suffix, "results store's journal");
}

void OutputGuard::output(const std::string& path) {
    if (path.empty()) throw UsageError("an output path is empty; name a file");
    const fs::path p(path);
    const std::string name = p.filename().string();
    if (name.empty() || name == "." || name == "..") throw InputError(path + ": names a folder, not a file");
    if (name.size() > kNameMaxBytes)
        throw InputError(path + ": the file name is " + std::to_string(name.size()) + " bytes long; file systems take " +
                         std::to_string(kNameMaxBytes) + " at most");
    std::error_code ec;
    fs::path dir = p.parent_path();
    if (dir.empty()) dir = ".";
    if (!fs::is_directory(dir, ec)) throw InputError(path + ": cannot write: folder " + dir.string() + " does not exist");
    Known out = locate(path, "output");
    struct stat st {};
    if (::stat(path.c_str(), &st) == 0) {
        if (S_ISDIR(st.st_mode)) throw InputError(path + ": cannot write: it is a directory");
        if (!S_ISREG(st.st_mode))
            throw InputError(path + ": cannot write: it is " + kind_of(st.st_mode) +
                             "; cavitas writes whole files only (leave the option out to skip this output)");
    }
    for (const auto& in : inputs_)
        if (out.exists && out.id == in.id)
            throw InputError(path + ": is the " + in.role + " this command reads" +
                             (in.path == path ? std::string() : " (" + in.path + ")") +
                             "; refusing to overwrite it (choose another output path)");
    for (const auto& other : outputs_)
        if (other.where == out.where || (out.exists && other.exists && other.id == out.id))
            throw InputError(path + ": is named twice as an output" +
                             (other.path == path ? std::string() : " (also as " + other.path + ")") +
                             "; each output needs a file of its own");
    for (const auto& dir_out : folders_)
        if (inside(out.where, dir_out.where))
            throw InputError(path + ": lies inside " + dir_out.path + ", whose contents this command replaces");
    outputs_.push_back(std::move(out));
}

void OutputGuard::output_folder(const std::string& path) {
    if (path.empty()) throw UsageError("the output folder is empty; name a folder");
    Known dir = locate(path, "output folder");
    std::error_code ec;
    if (dir.exists && !fs::is_directory(path, ec)) throw InputError(path + ": is not a folder");
    const fs::path cwd = fs::current_path(ec);
    const std::string here = ec ? std::string() : fs::weakly_canonical(cwd, ec).string();
    if (dir.where == "/" || (!here.empty() && (here == dir.where || inside(here, dir.where))))
        throw InputError(path + ": is the working folder or holds it; its contents are replaced as one, so name a "
                         "folder below it (e.g. --out route-output)");
    if (dir.exists) {
        struct stat self {}, parent {};
        const std::string up = fs::path(dir.where).parent_path().string();
        if (::stat(path.c_str(), &self) == 0 && ::stat(up.c_str(), &parent) == 0 && self.st_dev != parent.st_dev)
            throw InputError(path + ": is a mount point; its contents are replaced as one folder, so name a folder "
                             "inside it");
    }
    for (const auto& in : inputs_)
        if (inside(in.where, dir.where) || in.where == dir.where)
            throw InputError(path + ": holds " + in.path + ", the " + in.role + " this command reads; the output "
                             "folder's contents are replaced, so choose a folder that holds no input");
    for (const auto& out : outputs_)
        if (inside(out.where, dir.where))
            throw InputError(out.path + ": lies inside " + path + ", whose contents this command replaces");
    folders_.push_back(std::move(dir));
}

}  // namespace cavitas::app
