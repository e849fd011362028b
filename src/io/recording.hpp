// Reading recordings block by block.
//
// AudioSource is the seam between the analysis and the file system: the
// analysis asks for blocks of one channel in engineering units. SndfileSource
// reads any format libsndfile knows (WAV PCM 16/24/32, float, FLAC, ...);
// the readers of the formats collectors and acquisition systems export (UFF
// dataset 58, CSV waveforms, MATLAB files) live beside it in src/io/, and
// sources.hpp opens whichever a file is. MemorySource serves samples from
// memory for tests.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <cmath>
#include <string>
#include <string_view>
#include <vector>

#include "src/io/units.hpp"

struct SF_INFO;  // libsndfile's, kept out of this header

namespace cavitas::app {

struct RecordingInfo {
    std::string path;
    double fs_hz = 0.0;
    int channels = 0;
    int channel = 0;
    std::size_t frames = 0;       ///< as stated in the header
    std::string format;           ///< e.g. "WAV PCM 16-bit"
    bool is_float = false;        ///< float/double file: no fixed full scale
    int pcm_bits = 0;             ///< bits of a linear integer encoding (8, 16, 24, 32); 0 = float, companded or lossy
    std::string channel_name;     ///< as the file names it ("" = none)
    /// The unit the file states for its values ("" = none stated; "FS" for
    /// a sound file's samples, which are fractions of full scale).
    std::string stated_unit;
    /// calibration.full_scale is the engineering value of one unit of the
    /// file's samples (of full scale for a sound file, of stated_unit else).
    Calibration calibration;
    double duration_s() const { return fs_hz > 0.0 ? static_cast<double>(frames) / fs_hz : 0.0; }
    /// |x| of a full-scale sample in engineering units (0 for float files).
    double full_scale_value() const { return is_float ? 0.0 : calibration.full_scale; }
    /// One step of the integer scale in engineering units (0 when not a linear integer encoding).
    double quantum() const { return pcm_bits > 0 ? calibration.full_scale / std::ldexp(1.0, pcm_bits - 1) : 0.0; }
};

class AudioSource {
public:
    virtual ~AudioSource() = default;
    virtual const RecordingInfo& info() const = 0;
    /// Fill up to out.size() samples of the chosen channel, in engineering units.
    /// Returns the number written; 0 at the end.
    virtual std::size_t read(std::span<float> out) = 0;
    /// SHA-256 of the whole file (hex); throws InputError on a read error.
    virtual std::string sha256();
};

class SndfileSource final : public AudioSource {
public:
    /// Opens and validates; throws InputError naming the file and the problem.
    SndfileSource(const std::string& path, int channel, const Calibration& calibration);
    /// The same from bytes in memory (for fuzzing and tests); `name` stands for
    /// the file in messages. The bytes must outlive the source.
    SndfileSource(std::span<const std::byte> bytes, const std::string& name, int channel,
                  const Calibration& calibration);
    ~SndfileSource() override;
    SndfileSource(const SndfileSource&) = delete;
    SndfileSource& operator=(const SndfileSource&) = delete;
    const RecordingInfo& info() const override { return info_; }
    std::size_t read(std::span<float> out) override;
    /// SHA-256 of the whole file (hex), for a source opened from a path: the
    /// bytes were hashed as the decoder read them, and what it skipped or had
    /// not reached yet is read and hashed now, so the file is read about once.
    /// Throws InputError on a read error, std::logic_error for a source in memory.
    std::string sha256() override;

    struct Memory;
    struct HashingFile;

private:
    void adopt(void* handle, const ::SF_INFO& info, int channel);
    void* file_ = nullptr;  // SNDFILE*
    std::unique_ptr<Memory> memory_;
    std::unique_ptr<HashingFile> hashing_;
    RecordingInfo info_;
    std::vector<float> interleaved_;
    // 16-bit PCM in a little-endian container (WAV): read as raw samples and
    // scaled here, as libsndfile would (x / 32768), without its float buffer.
    bool raw16_ = false;
    std::vector<std::int16_t> raw_;
    std::size_t read_frames_ = 0;
};

class MemorySource final : public AudioSource {
public:
    MemorySource(std::vector<float> samples, double fs_hz, const Calibration& calibration = {});
    const RecordingInfo& info() const override { return info_; }
    std::size_t read(std::span<float> out) override;

private:
    std::vector<float> samples_;
    std::size_t pos_ = 0;
    RecordingInfo info_;
};

/// Throws InputError unless `path` is a regular file ("no such file", "is a
/// directory", "is not a regular file": a FIFO or device would block).
/// Every reader calls it before opening.
void require_recording_file(const std::string& path);

/// SHA-256 of a file's bytes as 64 lowercase hex digits; throws InputError.
std::string sha256_file(const std::string& path);
/// SHA-256 of bytes already read (a baseline or a finding as parsed), 64 lowercase hex digits.
std::string sha256_bytes(std::string_view bytes);

}  // namespace cavitas::app
