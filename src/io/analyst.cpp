#include "src/io/analyst.hpp"

#include <pwd.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>

#include "src/io/errors.hpp"

namespace cavitas::app {

namespace {

bool has_control(const std::string& s) {
    return std::any_of(s.begin(), s.end(), [](char c) {
        const auto u = static_cast<unsigned char>(c);
        return u < 0x20 || u == 0x7f;
    });
}

std::string host_name() {
    char buf[256] = {};
    if (::gethostname(buf, sizeof buf - 1) != 0 || buf[0] == '\0') return "unknown";
    return buf;
}

}  // namespace

Analyst identify_analyst(const std::optional<std::string>& given) {
    Analyst a;
    a.host = host_name();
    if (given) {
        if (given->find_first_not_of(" \t") == std::string::npos)
            throw UsageError("--analyst: the name is empty; give the analyst's name, e.g. --analyst \"R. Okafor\"");
        if (given->size() > kAnalystMaxBytes)
            throw UsageError("--analyst: " + std::to_string(given->size()) + " characters; a name takes at most " +
                             std::to_string(kAnalystMaxBytes));
        if (has_control(*given)) throw UsageError("--analyst: the name holds a control character (a line break?)");
        a.name = *given;
        a.source = "--analyst";
        return a;
    }
    for (const char* var : {"USER", "LOGNAME"}) {
        const char* v = std::getenv(var);
        if (v && *v && std::string(v).size() <= kAnalystMaxBytes && !has_control(v)) {
            a.name = v;
            a.source = var;
            return a;
        }
    }
    // No login name in the environment (a service, a container): the account's.
    passwd entry{};
    passwd* pw = nullptr;
    char buf[4096];
    if (::getpwuid_r(::geteuid(), &entry, buf, sizeof buf, &pw) == 0 && pw && pw->pw_name && *pw->pw_name &&
        !has_control(pw->pw_name)) {
        a.name = pw->pw_name;
        a.source = "account";
        return a;
    }
    a.name = "unknown";
    a.source = "unknown";
    return a;
}

}  // namespace cavitas::app
