// Time waveforms written as text: one row per sample, one column per channel,
// as data loggers and spreadsheets export them.
//
//   # sample_rate_hz = 12800          optional rate line (before the header)
//   time [s];accel [g];p (Pa)         optional header: names, units in [] or ()
//   0;0,0123;101325                   data rows
//
// The layout is found from the text:
// - Delimiter: ',', ';', tab or runs of spaces, judged on the first data rows
//   (and the header: it must split into as many cells as a row); or given.
// - Decimal mark: a comma when a cell holds one and the delimiter is not ','
//   (0,123;0,456); or given. A comma as both delimiter and decimal mark is
//   refused.
// - Header: the last non-comment line before the first data row gives the
//   columns' names and units ("accel [g]", "p (Pa)", "V"); earlier ones are
//   ignored. No header: the columns have no names.
// - Time column: a first column named time, Time or t, in s (or no unit) or
//   ms. Its steps give the sample rate and must be even: each step within
//   1e-6 of the time (relative) plus the rounding of the printed digits, and
//   never more than a quarter step off the mean step. The rate is taken as
//   the nearest whole hertz when the printed times cannot tell them apart.
// - Rate line, anywhere before the first data row, alone or after '#':
//   a key, '=' or ':', a number, optionally Hz or kHz. Keys, ignoring case,
//   with '_', '-' and ' ' alike: sample rate, sample rate hz, sampling rate,
//   sampling frequency, samplerate, fs, fs hz. "fs=12800",
//   "# sample_rate_hz = 12800", "Sample rate: 12.8 kHz".
// - Otherwise the rate must be given (--sample-rate); a rate the file states
//   and a rate given must agree within 1e-6 (relative).
// Lines starting with '#' and blank lines are skipped anywhere; a UTF-8
// byte-order mark and CRLF line ends are accepted.
//
// The file is read twice, as a stream of lines: once when opened (rows
// counted, row lengths and the time column checked), then block by block,
// where only the chosen column is parsed. Memory does not grow with the file
// (lines are capped at 1 MiB).
#pragma once

#include <cstddef>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

namespace cavitas::app {

/// A data column as the header names it ("" = no header).
struct CsvColumn {
    std::string name;
    std::string unit;
};

class CsvWaveformSource final : public AudioSource {
public:
    /// Opens and checks the whole file; throws InputError naming the file, the
    /// line and the problem (UsageError for a request that cannot be meant).
    CsvWaveformSource(const std::string& path, const ReadRequest& request, const Calibration& calibration);
    /// The same from bytes in memory (for fuzzing and tests); `name` stands for
    /// the file in messages. The bytes must outlive the source.
    CsvWaveformSource(std::span<const std::byte> bytes, const std::string& name, const ReadRequest& request,
                      const Calibration& calibration);
    ~CsvWaveformSource() override;
    CsvWaveformSource(const CsvWaveformSource&) = delete;
    CsvWaveformSource& operator=(const CsvWaveformSource&) = delete;

    const RecordingInfo& info() const override { return info_; }
    /// Values of the chosen column, in the file's unit times calibration.full_scale.
    /// Throws InputError naming line and column for a cell that is not a finite number.
    std::size_t read(std::span<float> out) override;
    /// The data columns (the time column not counted), in order.
    const std::vector<CsvColumn>& columns() const;

    class Lines;
    struct Layout;

private:
    void open(const ReadRequest& request);
    std::unique_ptr<Lines> lines_;
    std::unique_ptr<Layout> layout_;
    RecordingInfo info_;
    std::size_t rows_read_ = 0;
};

/// Channels (names, units, rows) and the rate if the file states one; never
/// asks for a rate.
FileSummary describe_csv_waveform(const std::string& path, const ReadRequest& request);

}  // namespace cavitas::app
