#include "src/io/plan_store.hpp"

#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <sstream>
#include <system_error>

#include "signal/fft.hpp"
#include "src/io/atomic_file.hpp"

namespace cavitas::app {

namespace {

namespace fs = std::filesystem;

constexpr std::size_t kMaxWisdomBytes = 1u << 20;  // a few kB in practice

struct State {
    std::once_flag once;
    std::mutex mutex;
    bool loaded = false;
    std::string folder, key;
    dsp::FftWisdom at_load;     // the text read (empty when refused or absent)
    std::size_t plans_at_load = 0;  // dsp::fft_plans_made() then
};

State& state() {
    static State s;
    return s;
}

// FNV-1a, 64 bit: a short, stable name for the processor.
std::string fnv1a_hex(const std::string& s) {
    std::uint64_t h = 1469598103934665603ull;
    for (unsigned char c : s) {
        h ^= c;
        h *= 1099511628211ull;
    }
    static const char* hex = "0123456789abcdef";
    std::string out(16, '0');
    for (int i = 15; i >= 0; --i, h >>= 4) out[static_cast<std::size_t>(i)] = hex[h & 15];
    return out;
}

// The processor's model name and flags (Linux); "unknown" elsewhere.
std::string processor_key() {
    std::ifstream in("/proc/cpuinfo");
    std::string line, model, flags;
    while (std::getline(in, line) && (model.empty() || flags.empty())) {
        if (model.empty() && line.rfind("model name", 0) == 0) model = line;
        if (flags.empty() && (line.rfind("flags", 0) == 0 || line.rfind("Features", 0) == 0)) flags = line;
    }
    return fnv1a_hex(model + "\n" + flags + (model.empty() && flags.empty() ? "unknown" : ""));
}

std::string read_small(const fs::path& p) {
    std::error_code ec;
    const auto size = fs::file_size(p, ec);
    if (ec || size > kMaxWisdomBytes) return {};
    std::ifstream in(p, std::ios::binary);
    std::string s(static_cast<std::size_t>(size), '\0');
    if (!in || !in.read(s.data(), static_cast<std::streamsize>(s.size()))) return {};
    return s;
}

}  // namespace

std::string plan_cache_folder() {
    if (const char* d = std::getenv("CAVITAS_CACHE_DIR")) return d[0] ? (fs::path(d)).string() : std::string();
    if (const char* x = std::getenv("XDG_CACHE_HOME"); x && x[0] == '/') return (fs::path(x) / "cavitas").string();
    if (const char* h = std::getenv("HOME"); h && h[0] == '/') return (fs::path(h) / ".cache" / "cavitas").string();
    return {};
}

void load_saved_fft_plans() noexcept {
    State& st = state();
    std::call_once(st.once, [&st] {
        try {
            const std::string folder = plan_cache_folder();
            if (folder.empty()) return;
            const std::string key = processor_key();
            dsp::FftWisdom w;
            w.single_precision = read_small(fs::path(folder) / ("fftw-" + key + ".single"));
            w.double_precision = read_small(fs::path(folder) / ("fftw-" + key + ".double"));
            // Refused text (another FFTW, a damaged file) is simply not used; the
            // next save replaces it.
            if (!dsp::import_fft_wisdom(w)) w = {};
            std::lock_guard<std::mutex> lock(st.mutex);
            st.folder = folder;
            st.key = key;
            st.at_load = std::move(w);
            st.plans_at_load = dsp::fft_plans_made();
            st.loaded = true;
        } catch (...) {
        }
    });
}

void save_fft_plans() noexcept {
    try {
        State& st = state();
        std::lock_guard<std::mutex> lock(st.mutex);
        if (!st.loaded) return;
        // Every plan came from the wisdom read: nothing to add (and no export,
        // which costs about as much as reading).
        if (dsp::fft_plans_made() == st.plans_at_load) return;
        const dsp::FftWisdom now = dsp::export_fft_wisdom();
        if (now.single_precision == st.at_load.single_precision && now.double_precision == st.at_load.double_precision)
            return;
        std::error_code ec;
        fs::create_directories(st.folder, ec);
        if (!fs::is_directory(st.folder, ec)) return;
        const fs::path base = fs::path(st.folder) / ("fftw-" + st.key);
        if (now.single_precision != st.at_load.single_precision)
            write_file_atomically(base.string() + ".single", now.single_precision);
        if (now.double_precision != st.at_load.double_precision)
            write_file_atomically(base.string() + ".double", now.double_precision);
        st.at_load = now;
        st.plans_at_load = dsp::fft_plans_made();
    } catch (...) {
    }
}

}  // namespace cavitas::app
