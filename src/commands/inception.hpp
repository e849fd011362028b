// cavitas inception: the acoustic NPSH test. A sweep of recordings of one
// machine, point and channel at falling suction pressure (a route manifest
// with the operating point of each row, and optionally the pump's head) read
// for where the HF level starts to rise over its plateau (NPSHi), beside the
// 3 % head-drop point (NPSH3). The maths is models/inception.hpp.
#pragma once

#include <iosfwd>
#include <optional>
#include <string>

namespace cavitas::app {

struct InceptionOptions {
    std::string sweep;                       ///< SWEEP.csv (a route manifest)
    std::optional<std::string> json_output;  ///< cavitas.inception/1
    std::optional<std::string> html, pdf;    ///< the report (the report module)
    std::string paper = "a4";
    std::optional<double> at_rpm;            ///< read the sweep at this speed
    double sensor_max_hz = 0.0;
    std::string mount;
    std::size_t replicates = 1000;           ///< bootstrap resamples
};

/// Analyses every recording of the sweep in the bands of the first row's rate,
/// groups the rows into NPSHa steps, finds NPSHi and NPSH3; an account on
/// `out`, progress on `err`, the JSON and the report when asked (each file
/// written whole or not at all). InputError names the sweep's file and line.
void run_inception(const InceptionOptions& options, std::ostream& out, std::ostream& err);

}  // namespace cavitas::app
