// Running the real cavitas binary from a test: exit status, stdout, stderr.
#pragma once

#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace cavitas::test {

struct Run {
    int status = -1;
    std::string out, err;
};

inline std::string slurp(const std::filesystem::path& p) {
    std::ifstream in(p, std::ios::binary);
    std::stringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

/// A path quoted for the shell.
inline std::string q(const std::filesystem::path& p) { return "'" + p.string() + "'"; }

/// `binary args` through the shell; its output captured in files under `scratch`.
inline Run run_binary(const std::string& binary, const std::string& args, const std::filesystem::path& scratch) {
    const auto o = scratch / "stdout.txt", e = scratch / "stderr.txt";
    const std::string cmd = "'" + binary + "' " + args + " >'" + o.string() + "' 2>'" + e.string() + "'";
    const int rc = std::system(cmd.c_str());
    Run r;
    r.status = WIFEXITED(rc) ? WEXITSTATUS(rc) : -1;
    r.out = slurp(o);
    r.err = slurp(e);
    return r;
}

}  // namespace cavitas::test
