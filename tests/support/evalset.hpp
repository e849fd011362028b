// The evaluation set's manifest.csv (made by `cavitas-synth eval`), read by its
// header's column names; shared by the evaluation and fidelity programs.
#pragma once

#include <algorithm>
#include <array>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

namespace cavitas::test {

struct EvalRow {
    std::string file, machine, role, label, kind;
    double rpm = 0;
    int vanes = 0;
    double full_scale_g = 50;
    // The field set's columns (cavitas-synth field); defaults elsewhere.
    std::string group;          ///< the baseline a row belongs to or is judged against
    bool rpm_given = true;      ///< whether the evaluator passes the true speed
    std::string expect;         ///< the verdict due (label when absent)
    std::string hazard = "none";
};

inline std::vector<EvalRow> read_eval_manifest(const std::string& path) {
    std::ifstream in(path);
    if (!in) throw std::runtime_error(path + ": cannot open manifest");
    auto split = [](const std::string& line) {
        std::vector<std::string> f;
        std::stringstream ss(line);
        std::string cell;
        while (std::getline(ss, cell, ',')) f.push_back(cell);
        return f;
    };
    std::string line;
    std::getline(in, line);
    const auto header = split(line);
    auto col = [&](const char* name) {
        const auto it = std::find(header.begin(), header.end(), name);
        if (it == header.end()) throw std::runtime_error(path + ": no column '" + name + "'");
        return static_cast<std::size_t>(it - header.begin());
    };
    const std::size_t c_file = col("file"), c_machine = col("machine"), c_role = col("role"), c_label = col("label"),
                      c_kind = col("kind"), c_rpm = col("rpm"), c_vanes = col("vanes"), c_fs = col("full_scale");
    std::vector<EvalRow> rows;
    while (std::getline(in, line)) {
        if (line.empty()) continue;
        const auto f = split(line);
        if (f.size() != header.size()) throw std::runtime_error(path + ": short row: " + line);
        EvalRow r;
        r.file = f[c_file];
        r.machine = f[c_machine];
        r.role = f[c_role];
        r.label = f[c_label];
        r.kind = f[c_kind];
        r.rpm = std::stod(f[c_rpm]);
        r.vanes = std::stoi(f[c_vanes]);
        r.full_scale_g = std::stod(f[c_fs]);  // "50g": stod stops at the unit
        r.expect = r.label;
        auto optional = [&](const char* name, auto set) {
            const auto it = std::find(header.begin(), header.end(), name);
            if (it != header.end()) set(f[static_cast<std::size_t>(it - header.begin())]);
        };
        optional("group", [&](const std::string& v) { r.group = v; });
        optional("rpm_given", [&](const std::string& v) { r.rpm_given = v == "1"; });
        optional("expect", [&](const std::string& v) { r.expect = v; });
        optional("hazard", [&](const std::string& v) { r.hazard = v; });
        rows.push_back(r);
    }
    return rows;
}

/// Verdict word -> row/column of a confusion matrix (0 normal .. 3 indeterminate).
inline int verdict_index(const std::string& verdict) {
    if (verdict == "normal") return 0;
    if (verdict == "incipient") return 1;
    if (verdict == "developed") return 2;
    return 3;  // indeterminate
}

/// The first `rows` rows of a confusion matrix (rows: what is due, columns: the verdict given).
inline void print_confusion(const std::array<std::array<int, 4>, 4>& m, std::size_t rows, const char* title) {
    const char* names[] = {"normal", "incipient", "developed", "indeterm."};
    std::printf("\n%s\n%-12s", title, "");
    for (const char* n : names) std::printf("%11s", n);
    std::printf("\n");
    for (std::size_t t = 0; t < rows; ++t) {
        std::printf("%-12s", names[t]);
        for (int v : m[t]) std::printf("%11d", v);
        std::printf("\n");
    }
}

}  // namespace cavitas::test
