// Universal File Format dataset 58 (ASCII) and 58b (binary): function type 1,
// time response, read as recordings.
//
// The record layout is the SDRL description as transcribed in the project's
// methods notes (A8). Each dataset 58 or 58b of a file is one channel, in file
// order; other datasets (151 header, 164 units, 2411 nodes, ...) are skipped
// and listed in describe_uff58's notes. The file is indexed once (a line scan
// for the text parts, a seek past each binary block); the chosen dataset's
// values are then read once to check them (their count, that each is finite,
// that an uneven abscissa is in fact even) and again, block by block, by
// read(): memory stays constant whatever the file's size.
//
// Values are the file's values in the unit record 9 states: stated_unit is the
// ordinate's units label ("" for "NONE" or blank) and calibration.full_scale
// multiplies each value. A real single value (type 2) becomes the float it
// was written as (text: parsed as a double, then rounded to float) times the
// full scale in single precision, as a float WAV sample is; a real double
// value (type 4) is multiplied in double precision, then rounded.
//
// channel_name: "ENTITY:NODE:DIR" from record 6's response entity name, node
// and direction (DIR one of +X, -X, +Y, ... +RZ; left out for a scalar, 0);
// ID line 1 when the entity name is blank or "NONE".
#pragma once

#include <cstddef>
#include <memory>
#include <span>
#include <string>

#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

namespace cavitas::app {

class Uff58Source final : public AudioSource {
public:
    /// Opens dataset number `channel` (0 = the file's first dataset 58 or
    /// 58b). Throws InputError naming the file, the dataset and the problem.
    Uff58Source(const std::string& path, int channel, const Calibration& calibration);
    /// The same from bytes in memory (fuzzing, tests); `name` stands for the
    /// file in messages. The bytes must outlive the source.
    Uff58Source(std::span<const std::byte> bytes, const std::string& name, int channel,
                const Calibration& calibration);
    ~Uff58Source() override;
    Uff58Source(const Uff58Source&) = delete;
    Uff58Source& operator=(const Uff58Source&) = delete;
    const RecordingInfo& info() const override { return info_; }
    std::size_t read(std::span<float> out) override;

    struct State;

private:
    void open(int channel);
    std::unique_ptr<State> state_;
    RecordingInfo info_;
};

/// Every dataset 58/58b of the file as a channel (name, unit, rate, length);
/// notes for skipped datasets, ID lines, datasets that cannot be read and
/// header fields that were taken as advisory. Throws InputError when the
/// file's structure cannot be followed.
FileSummary describe_uff58(const std::string& path);
FileSummary describe_uff58(std::span<const std::byte> bytes, const std::string& name);

}  // namespace cavitas::app
