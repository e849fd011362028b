#include "src/io/point_limits.hpp"


#include <cmath>
#include <filesystem>
#include <set>
#include <sstream>

#include "src/io/errors.hpp"
#include "src/io/toml_text.hpp"
#include "src/io/text_file.hpp"

namespace cavitas::app {

namespace fs = std::filesystem;

namespace {

constexpr std::size_t kReasonMaxBytes = 300;

[[noreturn]] void refuse(const std::string& path, const std::string& key, const std::string& what) {
    throw InputError(path + ": " + key + " " + what);
}

void read_limit(const toml::table& t, const std::string& path, const char* key, double& into) {
    const toml::node* n = t.get(key);
    if (!n) return;
    const std::optional<double> v = n->value<double>();
    if (!n->is_number() || !v) refuse(path, key, "must be a number of dB re baseline, e.g. " + std::string(key) + " = 5");
    if (!std::isfinite(*v) || *v < kLimitMinDb || *v > kLimitMaxDb)
        refuse(path, key, "= " + shown_number(*v) + " must lie within 0.5-40 dB re baseline");
    into = *v;
}

std::string fixed1(double v) {
    char b[32];
    std::snprintf(b, sizeof b, "%+.1f", v);
    return b;
}

}  // namespace

models::ClassifierConfig PointLimits::applied_to(models::ClassifierConfig c) const {
    c.hf_alert_db = hf_alert_db;
    c.hf_developed_db = hf_developed_db;
    c.lf_alert_db = lf_alert_db;
    return c;
}

std::string PointLimits::words() const {
    return "HF alert " + fixed1(hf_alert_db) + " dB, developed " + fixed1(hf_developed_db) + " dB, LF alert " +
           fixed1(lf_alert_db) + " dB re baseline (" +
           (source.empty() ? std::string("cavitas defaults") : source + ": " + reason) + ")";
}

std::string limits_path_beside(const std::string& baseline_path) {
    fs::path p(baseline_path);
    if (p.extension() == ".json") p.replace_extension();
    return p.string() + ".limits.toml";
}

PointLimits parse_point_limits(const std::string& text, const std::string& path) {
    const toml::table t = parse_toml_text(text, path);
    static const std::set<std::string> known{"reason", "hf_alert_db", "hf_developed_db", "lf_alert_db"};
    for (auto&& [k, node] : t)
        if (!known.count(std::string(k.str())))
            refuse(path, std::string(k.str()),
                   "is not a limits key (known: reason, hf_alert_db, hf_developed_db, lf_alert_db)");
    PointLimits l;
    l.source = path;
    const toml::node* r = t.get("reason");
    if (!r || !r->is_string()) refuse(path, "reason", "is missing: say why this point has its own limits");
    l.reason = *r->value<std::string>();
    if (l.reason.find_first_not_of(" \t") == std::string::npos)
        refuse(path, "reason", "is empty: say why this point has its own limits");
    if (l.reason.size() > kReasonMaxBytes)
        refuse(path, "reason", "is " + std::to_string(l.reason.size()) + " bytes long; at most " +
                                   std::to_string(kReasonMaxBytes) + " are kept");
    for (unsigned char c : l.reason)
        if (c < 0x20 || c == 0x7f) refuse(path, "reason", "holds a control character");
    read_limit(t, path, "hf_alert_db", l.hf_alert_db);
    read_limit(t, path, "hf_developed_db", l.hf_developed_db);
    read_limit(t, path, "lf_alert_db", l.lf_alert_db);
    if (!(l.hf_developed_db > l.hf_alert_db))
        refuse(path, "hf_developed_db", "= " + shown_number(l.hf_developed_db) + " must be above hf_alert_db = " +
                                            shown_number(l.hf_alert_db));
    return l;
}

PointLimits point_limits(const std::optional<std::string>& explicit_path, const std::string& baseline_path) {
    std::string path;
    if (explicit_path) {
        path = *explicit_path;
    } else {
        path = limits_path_beside(baseline_path);
        std::error_code ec;
        if (!fs::exists(path, ec)) return {};
    }
    return parse_point_limits(read_text_file(path, "point limits file", 64u << 10), path);
}

}  // namespace cavitas::app
