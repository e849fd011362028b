// MATLAB MAT-files (v4, v5, v7 compressed, v7.3 HDF5), read with libmatio.
//
// - Variable: ReadRequest::variable, or "" for the file's only numeric real
//   vector or matrix (scalars, such as a rate or a speed, do not count).
// - A vector (N×1 or 1×N) is one channel; an N×C matrix with N > C holds C
//   channels in its columns, channel k being column k (0-based, as --channel
//   counts). A C×N matrix is refused: transpose it.
// - Classes double, single and the integer classes are read as numbers (their
//   values, not scaled to a full scale); complex, sparse, logical, char, cell,
//   struct and object variables are refused with their class named.
// - Sample rate: ReadRequest::sample_rate_hz, or a real numeric scalar in the
//   file named, ignoring case, fs, fs_hz, sr, samplerate, sample_rate,
//   sample_rate_hz, sampling_rate or sampling_frequency. Both: they must
//   agree within 1e-6 (relative).
// - Memory: uncompressed variables (v4, v5, v7.3) are read in blocks of the
//   chosen column. matio reads a block of a zlib-compressed v7 variable by
//   inflating it from its start, so block by block would take time growing
//   with the square of its length; a compressed variable's column is read
//   whole instead, and refused beyond 2^28 samples.
// MAT files state no unit: stated_unit is "".
#pragma once

#include <cstddef>
#include <memory>
#include <string>
#include <vector>

#include "src/io/recording.hpp"
#include "src/io/sources.hpp"

namespace cavitas::app {

class MatSource final : public AudioSource {
public:
    /// Opens and checks; throws InputError naming the file, the variable and the problem.
    MatSource(const std::string& path, const ReadRequest& request, const Calibration& calibration);
    ~MatSource() override;
    MatSource(const MatSource&) = delete;
    MatSource& operator=(const MatSource&) = delete;

    const RecordingInfo& info() const override { return info_; }
    /// Values of the chosen column times calibration.full_scale; throws
    /// InputError for a value that is not finite.
    std::size_t read(std::span<float> out) override;

    struct Handle;

private:
    std::size_t fetch(std::size_t want);
    std::unique_ptr<Handle> handle_;
    RecordingInfo info_;
    std::size_t first_ = 0;    ///< linear index of the column's first element
    std::size_t fetched_ = 0;  ///< samples of the column fetched so far
    std::vector<std::byte> raw_;
    std::size_t raw_pos_ = 0, raw_count_ = 0;  ///< in samples
    bool whole_ = false;       ///< the column was read whole (compressed)
};

/// Every variable: numeric vectors and matrices as channels (one per column),
/// the others in notes; the rate from the file's rate variable if it has one.
FileSummary describe_mat(const std::string& path);

}  // namespace cavitas::app
