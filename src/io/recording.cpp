#include "src/io/recording.hpp"

#include <fcntl.h>
#include <openssl/evp.h>
#include <sndfile.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <bit>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <memory>

#include "signal/clones.hpp"
#include "src/io/errors.hpp"

namespace cavitas::app {
namespace {

constexpr std::size_t kBlockFrames = 8192;

std::string describe_format(int format) {
    std::string major;
    switch (format & SF_FORMAT_TYPEMASK) {
        case SF_FORMAT_WAV: major = "WAV"; break;
        case SF_FORMAT_WAVEX: major = "WAVE_EXTENSIBLE"; break;
        case SF_FORMAT_AIFF: major = "AIFF"; break;
        case SF_FORMAT_FLAC: major = "FLAC"; break;
        case SF_FORMAT_OGG: major = "OGG"; break;
        case SF_FORMAT_W64: major = "W64"; break;
        case SF_FORMAT_RF64: major = "RF64"; break;
        case SF_FORMAT_CAF: major = "CAF"; break;
        case SF_FORMAT_AU: major = "AU"; break;
        default: major = "audio"; break;
    }
    std::string sub;
    switch (format & SF_FORMAT_SUBMASK) {
        case SF_FORMAT_PCM_S8: sub = "PCM 8-bit"; break;
        case SF_FORMAT_PCM_U8: sub = "PCM 8-bit unsigned"; break;
        case SF_FORMAT_PCM_16: sub = "PCM 16-bit"; break;
        case SF_FORMAT_PCM_24: sub = "PCM 24-bit"; break;
        case SF_FORMAT_PCM_32: sub = "PCM 32-bit"; break;
        case SF_FORMAT_FLOAT: sub = "float 32-bit"; break;
        case SF_FORMAT_DOUBLE: sub = "float 64-bit"; break;
        case SF_FORMAT_VORBIS: sub = "Vorbis"; break;
        default: sub = "other encoding"; break;
    }
    return major + " " + sub;
}

}  // namespace

namespace {

// out[i] = x[i * stride] / 32768 * gain: libsndfile's conversion of 16-bit
// PCM to normalised float (the sample times 1/32768 in single precision),
// then the calibration, in the same order, so the values are the same bit
// for bit as through sf_readf_float.
CAVITAS_CLONED void scale_pcm16(const std::int16_t* x, std::size_t stride, std::size_t n, float gain, float* out) {
    constexpr float kNorm = 1.0f / 32768.0f;
    if (stride == 1) {
        for (std::size_t i = 0; i < n; ++i) out[i] = static_cast<float>(x[i]) * kNorm * gain;
    } else {
        for (std::size_t i = 0; i < n; ++i) out[i] = static_cast<float>(x[i * stride]) * kNorm * gain;
    }
}

}  // namespace

struct SndfileSource::Memory {
    std::span<const std::byte> bytes;
    sf_count_t pos = 0;
};

namespace {

sf_count_t mem_length(void* user) {
    return static_cast<sf_count_t>(static_cast<SndfileSource::Memory*>(user)->bytes.size());
}
sf_count_t mem_seek(sf_count_t offset, int whence, void* user) {
    auto* m = static_cast<SndfileSource::Memory*>(user);
    const auto size = static_cast<sf_count_t>(m->bytes.size());
    sf_count_t to = offset;
    if (whence == SEEK_CUR) to = m->pos + offset;
    if (whence == SEEK_END) to = size + offset;
    if (to < 0 || to > size) return -1;
    m->pos = to;
    return m->pos;
}
sf_count_t mem_read(void* ptr, sf_count_t count, void* user) {
    auto* m = static_cast<SndfileSource::Memory*>(user);
    const auto size = static_cast<sf_count_t>(m->bytes.size());
    const sf_count_t n = std::max<sf_count_t>(0, std::min(count, size - m->pos));
    if (n > 0) std::memcpy(ptr, m->bytes.data() + m->pos, static_cast<std::size_t>(n));
    m->pos += n;
    return n;
}
sf_count_t mem_write(const void*, sf_count_t, void*) { return 0; }
sf_count_t mem_tell(void* user) { return static_cast<SndfileSource::Memory*>(user)->pos; }

std::string hex_of(const unsigned char* md, unsigned int len) {
    static const char* hex = "0123456789abcdef";
    std::string s;
    for (unsigned int i = 0; i < len; ++i) {
        s += hex[md[i] >> 4];
        s += hex[md[i] & 15];
    }
    return s;
}

}  // namespace

// The file behind a SndfileSource opened from a path, read through libsndfile's
// virtual I/O so that every byte can be hashed in file order as it passes:
// `hashed` is how far the hash has got; a read that starts beyond it first
// hashes the gap, and bytes before it are not hashed again.
struct SndfileSource::HashingFile {
    int fd = -1;
    sf_count_t size = 0, pos = 0, hashed = 0;
    bool failed = false;  // a read error while hashing: reported by sha256()
    std::string digest;   // hex, once final
    std::unique_ptr<EVP_MD_CTX, decltype(&EVP_MD_CTX_free)> ctx{EVP_MD_CTX_new(), &EVP_MD_CTX_free};
    ~HashingFile() {
        if (fd >= 0) ::close(fd);
    }
    // pread until count bytes or the end; -1 on an error.
    sf_count_t read_at(void* ptr, sf_count_t count, sf_count_t at) const {
        sf_count_t done = 0;
        while (done < count) {
            const ssize_t got = ::pread(fd, static_cast<char*>(ptr) + done, static_cast<std::size_t>(count - done),
                                        static_cast<off_t>(at + done));
            if (got < 0) {
                if (errno == EINTR) continue;
                return -1;
            }
            if (got == 0) break;
            done += got;
        }
        return done;
    }
    void hash_up_to(sf_count_t end) {
        std::vector<unsigned char> buf(1 << 16);
        while (!failed && hashed < end) {
            const sf_count_t want = std::min<sf_count_t>(static_cast<sf_count_t>(buf.size()), end - hashed);
            const sf_count_t got = read_at(buf.data(), want, hashed);
            if (got <= 0) {
                failed = true;
                break;
            }
            EVP_DigestUpdate(ctx.get(), buf.data(), static_cast<std::size_t>(got));
            hashed += got;
        }
    }
};

namespace {

sf_count_t file_length(void* user) { return static_cast<SndfileSource::HashingFile*>(user)->size; }
sf_count_t file_seek(sf_count_t offset, int whence, void* user) {
    auto* h = static_cast<SndfileSource::HashingFile*>(user);
    sf_count_t to = offset;
    if (whence == SEEK_CUR) to = h->pos + offset;
    if (whence == SEEK_END) to = h->size + offset;
    if (to < 0) return -1;
    h->pos = to;
    return h->pos;
}
sf_count_t file_read(void* ptr, sf_count_t count, void* user) {
    auto* h = static_cast<SndfileSource::HashingFile*>(user);
    if (count <= 0) return 0;
    if (h->pos > h->hashed) h->hash_up_to(std::min(h->pos, h->size));
    const sf_count_t got = h->read_at(ptr, count, h->pos);
    if (got < 0) return 0;  // libsndfile then reports a short read
    const sf_count_t end = h->pos + got;
    if (!h->failed && h->pos <= h->hashed && end > h->hashed) {
        EVP_DigestUpdate(h->ctx.get(), static_cast<const unsigned char*>(ptr) + (h->hashed - h->pos),
                         static_cast<std::size_t>(end - h->hashed));
        h->hashed = end;
    }
    h->pos = end;
    return got;
}
sf_count_t file_write(const void*, sf_count_t, void*) { return 0; }
sf_count_t file_tell(void* user) { return static_cast<SndfileSource::HashingFile*>(user)->pos; }

}  // namespace

SndfileSource::SndfileSource(const std::string& path, int channel, const Calibration& calibration) {
    info_.path = path;
    info_.calibration = calibration;
    require_recording_file(path);
    hashing_ = std::make_unique<HashingFile>();
    hashing_->fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (hashing_->fd < 0) throw InputError(path + ": cannot open: " + std::strerror(errno));
    struct stat fst {};
    if (::fstat(hashing_->fd, &fst) != 0) throw InputError(path + ": cannot open: " + std::strerror(errno));
    hashing_->size = static_cast<sf_count_t>(fst.st_size);
    if (!hashing_->ctx || EVP_DigestInit_ex(hashing_->ctx.get(), EVP_sha256(), nullptr) != 1)
        throw InputError(path + ": SHA-256 unavailable");
    static SF_VIRTUAL_IO io{file_length, file_seek, file_read, file_write, file_tell};
    SF_INFO sfi{};
    SNDFILE* f = sf_open_virtual(&io, SFM_READ, &sfi, hashing_.get());
    if (!f) throw InputError(path + ": not a readable recording (" + sf_strerror(nullptr) + ")");
    adopt(f, sfi, channel);
}

SndfileSource::SndfileSource(std::span<const std::byte> bytes, const std::string& name, int channel,
                             const Calibration& calibration)
    : memory_(std::make_unique<Memory>()) {
    info_.path = name;
    info_.calibration = calibration;
    memory_->bytes = bytes;
    static SF_VIRTUAL_IO io{mem_length, mem_seek, mem_read, mem_write, mem_tell};
    SF_INFO sfi{};
    SNDFILE* f = sf_open_virtual(&io, SFM_READ, &sfi, memory_.get());
    if (!f) throw InputError(name + ": not a readable recording (" + sf_strerror(nullptr) + ")");
    adopt(f, sfi, channel);
}

void SndfileSource::adopt(void* handle, const SF_INFO& sfi, int channel) {
    auto* f = static_cast<SNDFILE*>(handle);
    file_ = f;
    const std::string& path = info_.path;
    auto fail = [&](const std::string& why) {
        sf_close(f);
        file_ = nullptr;
        throw InputError(path + ": " + why);
    };
    // 100 Hz .. 5 MHz covers every vibration, hydrophone and acoustic-emission
    // collector we know of; outside it the header is damaged (and a 1 s segment
    // at 10^9 Hz would need gigabytes).
    if (sfi.samplerate < 100 || sfi.samplerate > 5000000)
        fail("sample rate " + std::to_string(sfi.samplerate) + " Hz in the header is outside 100 Hz .. 5 MHz");
    if (sfi.channels <= 0 || sfi.channels > 1024)
        fail(std::to_string(sfi.channels) + " channels in the header is not valid (1..1024 accepted)");
    if (sfi.frames <= 0) fail("holds no samples");
    // A header that promises more than the file holds means the file was cut
    // short (an interrupted copy or recording): libsndfile quietly reads what is
    // there. Its parse log says so for every container it reads, in one of two
    // forms: "LABEL : CLAIMED (should be PRESENT)" (WAV data, AIFF SSND, W64 and
    // RF64 riff sizes, AU data size) and, for RF64, "Calculated frame count
    // PRESENT does not match value from 'ds64' chunk of CLAIMED". The
    // placeholders 0 and 0xFFFFFFFF of streamed files ("length unknown") are not
    // a promise and pass; a file longer than promised (trailing chunks) passes.
    {
        char log[8192] = {0};
        sf_command(f, SFC_GET_LOG_INFO, log, sizeof log - 1);
        std::istringstream lines(log);
        for (std::string line; std::getline(lines, line);) {
            unsigned long long claimed = 0, present = 0;
            const auto colon = line.find(" : "), should = line.find("(should be ");
            bool cut = false;
            if (colon != std::string::npos && should != std::string::npos && should > colon &&
                std::sscanf(line.c_str() + colon + 3, "%llu", &claimed) == 1 &&
                std::sscanf(line.c_str() + should + 11, "%llu", &present) == 1)
                cut = present < claimed && claimed != 0xFFFFFFFFull && claimed != 0;
            else if (std::sscanf(line.c_str(), "*** Calculated frame count %llu does not match value from 'ds64' chunk of %llu",
                                 &present, &claimed) == 2)
                cut = present < claimed;
            if (!cut) continue;
            std::string label = colon != std::string::npos && line.rfind("***", 0) != 0 ? line.substr(0, colon)
                                                                                        : std::string("ds64 frame count");
            label.erase(0, label.find_first_not_of(' '));
            label.erase(label.find_last_not_of(' ') + 1);
            fail("its header promises " + std::to_string(claimed) + " (" + label + ") but the file holds " +
                 std::to_string(present) + ": the file was cut short (interrupted copy or recording); copy it again "
                 "from the collector");
        }
    }
    if (channel < 0 || channel >= sfi.channels)
        fail("channel " + std::to_string(channel) + " requested, but the file has " + std::to_string(sfi.channels) +
             " channel(s) numbered 0.." + std::to_string(sfi.channels - 1));
    info_.fs_hz = static_cast<double>(sfi.samplerate);
    info_.channels = sfi.channels;
    info_.channel = channel;
    info_.frames = static_cast<std::size_t>(sfi.frames);
    info_.format = describe_format(sfi.format);
    info_.stated_unit = "FS";
    const int sub = sfi.format & SF_FORMAT_SUBMASK;
    info_.is_float = sub == SF_FORMAT_FLOAT || sub == SF_FORMAT_DOUBLE;
    switch (sub) {
        case SF_FORMAT_PCM_S8: case SF_FORMAT_PCM_U8: info_.pcm_bits = 8; break;
        case SF_FORMAT_PCM_16: info_.pcm_bits = 16; break;
        case SF_FORMAT_PCM_24: info_.pcm_bits = 24; break;
        case SF_FORMAT_PCM_32: info_.pcm_bits = 32; break;
        default: info_.pcm_bits = 0; break;
    }
    interleaved_.resize(kBlockFrames * static_cast<std::size_t>(sfi.channels));
    const int major = sfi.format & SF_FORMAT_TYPEMASK, endian = sfi.format & SF_FORMAT_ENDMASK;
    raw16_ = sub == SF_FORMAT_PCM_16 && (major == SF_FORMAT_WAV || major == SF_FORMAT_WAVEX) &&
             (endian == SF_ENDIAN_FILE || endian == SF_ENDIAN_LITTLE) && std::endian::native == std::endian::little;
    if (raw16_) raw_.resize(kBlockFrames * static_cast<std::size_t>(sfi.channels));
}

SndfileSource::~SndfileSource() {
    if (file_) sf_close(static_cast<SNDFILE*>(file_));
}

std::size_t SndfileSource::read(std::span<float> out) {
    auto* f = static_cast<SNDFILE*>(file_);
    const auto ch = static_cast<std::size_t>(info_.channels);
    std::size_t written = 0;
    const float gain = static_cast<float>(info_.calibration.full_scale);
    if (raw16_) {
        const std::size_t frame_bytes = 2 * ch;
        while (written < out.size()) {
            const std::size_t want = std::min(kBlockFrames, out.size() - written);
            const sf_count_t got_bytes = sf_read_raw(f, raw_.data(), static_cast<sf_count_t>(want * frame_bytes));
            if (got_bytes < 0) throw InputError(info_.path + ": read error: " + sf_strerror(f));
            const auto got = static_cast<std::size_t>(got_bytes) / frame_bytes;
            if (got == 0) {
                if (sf_error(f) != SF_ERR_NO_ERROR) throw InputError(info_.path + ": read error: " + sf_strerror(f));
                break;
            }
            scale_pcm16(raw_.data() + info_.channel, ch, got, gain, out.data() + written);
            written += got;
            read_frames_ += got;
            if (got < want) break;
        }
        return written;
    }
    while (written < out.size()) {
        const std::size_t want = std::min(kBlockFrames, out.size() - written);
        const sf_count_t got = sf_readf_float(f, interleaved_.data(), static_cast<sf_count_t>(want));
        if (got < 0) throw InputError(info_.path + ": read error: " + sf_strerror(f));
        if (got == 0) {
            const int err = sf_error(f);
            if (err != SF_ERR_NO_ERROR) throw InputError(info_.path + ": read error: " + sf_strerror(f));
            break;
        }
        for (sf_count_t i = 0; i < got; ++i)
            out[written + static_cast<std::size_t>(i)] =
                interleaved_[static_cast<std::size_t>(i) * ch + static_cast<std::size_t>(info_.channel)] * gain;
        written += static_cast<std::size_t>(got);
        read_frames_ += static_cast<std::size_t>(got);
        if (static_cast<std::size_t>(got) < want) break;
    }
    return written;
}

std::string SndfileSource::sha256() {
    if (!hashing_) throw std::logic_error("SndfileSource::sha256: a source in memory has no file to hash");
    HashingFile& h = *hashing_;
    if (!h.digest.empty()) return h.digest;
    h.hash_up_to(h.size);
    if (h.failed) throw InputError(info_.path + ": read error while hashing");
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int len = 0;
    EVP_DigestFinal_ex(h.ctx.get(), md, &len);
    h.digest = hex_of(md, len);
    return h.digest;
}

MemorySource::MemorySource(std::vector<float> samples, double fs_hz, const Calibration& calibration)
    : samples_(std::move(samples)) {
    info_.path = "(memory)";
    info_.fs_hz = fs_hz;
    info_.channels = 1;
    info_.frames = samples_.size();
    info_.format = "memory float";
    info_.is_float = true;
    info_.calibration = calibration;
}

std::size_t MemorySource::read(std::span<float> out) {
    const std::size_t n = std::min(out.size(), samples_.size() - pos_);
    std::copy_n(samples_.begin() + static_cast<std::ptrdiff_t>(pos_), n, out.begin());
    pos_ += n;
    return n;
}

void require_recording_file(const std::string& path) {
    std::error_code ec;
    const auto st = std::filesystem::status(path, ec);
    if (ec || !std::filesystem::exists(st)) throw InputError(path + ": no such file");
    if (std::filesystem::is_directory(st)) throw InputError(path + ": is a directory, not a recording");
    // A FIFO, socket or device would block or never end: only regular files are recordings.
    if (!std::filesystem::is_regular_file(st)) throw InputError(path + ": is not a regular file");
}

std::string AudioSource::sha256() { return sha256_file(info().path); }

std::string sha256_bytes(std::string_view bytes) {
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int len = 0;
    if (EVP_Digest(bytes.data(), bytes.size(), md, &len, EVP_sha256(), nullptr) != 1)
        throw InputError("SHA-256 unavailable");
    return hex_of(md, len);
}

std::string sha256_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open for hashing: " + std::strerror(errno));
    std::unique_ptr<EVP_MD_CTX, decltype(&EVP_MD_CTX_free)> ctx(EVP_MD_CTX_new(), &EVP_MD_CTX_free);
    if (!ctx || EVP_DigestInit_ex(ctx.get(), EVP_sha256(), nullptr) != 1)
        throw InputError(path + ": SHA-256 unavailable");
    std::vector<char> buf(1 << 16);
    while (in) {
        in.read(buf.data(), static_cast<std::streamsize>(buf.size()));
        const auto got = in.gcount();
        if (got > 0) EVP_DigestUpdate(ctx.get(), buf.data(), static_cast<std::size_t>(got));
    }
    if (in.bad()) throw InputError(path + ": read error while hashing");
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int len = 0;
    EVP_DigestFinal_ex(ctx.get(), md, &len);
    return hex_of(md, len);
}

}  // namespace cavitas::app
