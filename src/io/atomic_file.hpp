// Write whole files or nothing: each text goes to a temporary file in its
// target's folder and is flushed; only when every one is written are they
// renamed over their targets, so an interrupted or failed run (a full disk)
// leaves the old files or the new ones, never a fragment or half a set.
#pragma once

#include <string>
#include <vector>

namespace cavitas::app {

/// Files written together: add() writes each to a temporary file (throws
/// InputError naming the path on failure, e.g. a full disk); commit() renames
/// them all into place. Destroyed uncommitted, it removes its temporary files
/// and no target is touched. A target that is a symbolic link is written
/// through it (the link stays a link).
class StagedFiles {
public:
    StagedFiles() = default;
    StagedFiles(const StagedFiles&) = delete;
    StagedFiles& operator=(const StagedFiles&) = delete;
    ~StagedFiles();
    void add(const std::string& path, const std::string& contents);
    void commit();

private:
    struct Staged {
        std::string path, target, temporary;
    };
    std::vector<Staged> staged_;
};

/// A folder written as one (a route's --out): its files are written into a
/// fresh hidden folder beside the target (path()), and commit() swaps the two
/// in one step (renameat2 RENAME_EXCHANGE; two renames on a file system
/// without it), keeps the entries of the old folder the new one lacks (a
/// report written there), and removes the old one. Destroyed uncommitted, it
/// removes what it wrote and the target stays as it was. A run killed midway
/// leaves a hidden folder .NAME.cavitas-XXXXXX beside the target, never a mix.
class StagedFolder {
public:
    /// Throws InputError naming the target when the staging folder cannot be made.
    explicit StagedFolder(const std::string& target);
    StagedFolder(const StagedFolder&) = delete;
    StagedFolder& operator=(const StagedFolder&) = delete;
    ~StagedFolder();
    const std::string& path() const { return staging_; }
    void commit();

private:
    std::string target_, staging_;
    bool committed_ = false;
};

/// One file alone (a StagedFiles of one).
void write_file_atomically(const std::string& path, const std::string& contents);

}  // namespace cavitas::app
