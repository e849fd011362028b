// A route manifest: one row per recording, as a collector export or a
// spreadsheet writes it (CSV with a header row, columns in any order).
//
// Required columns: file (relative to the manifest), machine, point, channel,
// datetime (ISO 8601), rpm, vanes. Optional: the operating-point keys of a
// sidecar file (suction_pressure, temperature, flow, ...; see
// operating_point_io.hpp), the sensor columns full_scale (50g), sensitivity
// (100mV/g; one per channel of a row naming several: 100.2mV/g;98.7mV/g;101.5mV/g), gain (10 or 20dB), unit (of a file's values when it states none),
// mount, sensor_max_hz, and the reading hints variable (a MATLAB file's) and
// sample_rate_hz (of a file that states none), reference (a sister machine's
// baseline file, relative to the manifest, judged against instead of the
// point's own: a machine with no known-good state yet), and event: a repair or change
// ("impeller replaced") recorded for the row's machine and point at the row's
// datetime; a row with an event and an empty file cell is an event only (its
// point may be empty: every point of the machine). Any other column is kept and passed through to the outputs.
// The channel cell may name several channels (0,1,2) or all.
// Empty cells: channel 0, rpm estimated near the baseline's, vanes from the
// baseline, operating-point fields not stated.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "src/io/calibration.hpp"
#include "src/io/datetime.hpp"
#include "src/io/sources.hpp"
#include "src/io/operating_point_io.hpp"

namespace cavitas::app {

struct ManifestRow {
    std::size_t line = 0;   ///< 1-based line of the manifest
    std::size_t index = 0;  ///< 0-based position among the data rows
    std::string file;       ///< as written
    std::string path;       ///< resolved against the manifest's folder
    std::string machine;
    std::string point;
    int channel = 0;        ///< the first channel named (the only one unless `channels` says more)
    /// The channel cell: one channel, a list (0,1,2: a triaxial point) or
    /// all; the route makes one row per channel of it.
    ChannelSelection channels;
    /// Set on a row the route made from a cell naming several channels (its finding's name says the channel).
    bool one_of_several = false;
    std::string datetime;   ///< as written
    Timestamp when;
    std::optional<double> rpm;
    std::optional<int> vanes;
    CalibrationText calibration;
    std::string variable;
    std::optional<double> sample_rate_hz;
    std::string mount;
    double sensor_max_hz = 0.0;
    OperatingPointText operating;                              ///< operating-point columns (non-empty cells)
    std::vector<std::pair<std::string, std::string>> extra;    ///< unknown columns, in header order
    std::string event;      ///< the event cell (empty: none)
    /// The reference cell: a sister machine's baseline to judge this row
    /// against instead of BASELINES/MACHINE/POINT.json, as `analyze --reference`
    /// does (empty: the point's own); reference_path is it resolved against the manifest's folder.
    std::string reference, reference_path;
    std::string error;      ///< non-empty: what is wrong with this row (it is not analysed)
};

/// How a row's file is read: its channel, a MATLAB file's variable, a stated rate.
ReadRequest read_request_of(const ManifestRow& row);

/// A maintenance event a manifest row records (the `event` column).
struct ManifestEvent {
    std::size_t line = 0;
    std::string machine;
    std::string point;      ///< empty: every point of the machine
    Timestamp when;
    std::string what;
};

struct Manifest {
    std::string path;
    std::string dir;
    std::string sha256;                    ///< of the file's bytes
    std::vector<std::string> extra_columns;  ///< unknown columns, in header order
    /// The rows to analyse (and those that fail); an event-only row without
    /// a problem is not among them.
    std::vector<ManifestRow> rows;
    std::vector<ManifestEvent> events;     ///< of every row without a problem, in manifest order
};

/// Reads and checks the manifest. File-level problems (missing, unreadable,
/// no header, a required column missing, a column named twice) throw
/// InputError; a bad row keeps its line number and the reason in `error`.
Manifest read_manifest(const std::string& path);
/// The same from text (no sha256); `path` names the file in errors and sets the folder.
Manifest parse_manifest(const std::string& text, const std::string& path);

/// Whether a machine or point tag can name a file of the baseline library
/// (DIR/MACHINE/POINT.json): not empty, not "." or "..", no '/', '\\' or
/// control characters. Returns the reason when it cannot.
std::optional<std::string> unusable_as_file_name(const std::string& tag);

}  // namespace cavitas::app
