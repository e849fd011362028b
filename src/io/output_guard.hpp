// One check for every file a command writes, made before any work starts: an
// output may never be an input of the same run (the recording, a baseline, a
// sidecar, an NPSH3 curve, a manifest, the store, a route summary), a device
// or other special file, a folder, or another output of the same command.
// Files are compared by identity (device and inode), so a second name, a hard
// link or a symbolic link to an input is caught as surely as the same spelling.
#pragma once

#include <string>
#include <utility>
#include <vector>

namespace cavitas::app {

class OutputGuard {
public:
    /// A file or folder the command reads. Paths that do not exist are ignored
    /// (the command's own reader names them). `role` is said in the refusal.
    void input(const std::string& path, const std::string& role);
    /// The results store (SQLite) with the journal files SQLite keeps beside it.
    void input_store(const std::string& path);
    /// A file the command will write: throws InputError naming the path and the
    /// reason when it may not be written. Checks its folder exists, its name
    /// fits the file system, and it is not an input, a device, a folder or an
    /// output already named.
    void output(const std::string& path);
    /// A folder whose contents the command replaces (a route's --out): no input
    /// may lie inside it, and it may not be the working folder or above it.
    void output_folder(const std::string& path);

private:
    struct Identity {
        unsigned long long device = 0, inode = 0;
        bool operator==(const Identity&) const = default;
    };
    struct Known {
        std::string path;   // as given, for messages
        std::string where;  // absolute, lexically normal, symbolic links resolved
        std::string role;
        bool exists = false;
        Identity id;
    };
    static Known locate(const std::string& path, const std::string& role);
    std::vector<Known> inputs_;
    std::vector<Known> outputs_;
    std::vector<Known> folders_;
};

}  // namespace cavitas::app
