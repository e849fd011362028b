#include "src/io/mat_file.hpp"

#include <hdf5.h>
#include <matio.h>

#include <algorithm>
#include <array>
#include <charconv>
#include <climits>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <optional>

#include "src/io/errors.hpp"

namespace cavitas::app {

namespace {

constexpr std::size_t kBlockSamples = std::size_t{1} << 16;
constexpr std::size_t kMaxWholeSamples = std::size_t{1} << 28;
constexpr double kRateAgreement = 1e-6;                 // relative
constexpr double kMinRateHz = 100.0, kMaxRateHz = 5e6;  // as for sound files (recording.cpp)

// matio keeps its logger in a global and HDF5 (v7.3) is not thread-safe: one
// reader at a time talks to them (the route reads recordings from several threads).
std::mutex& matio_mutex() {
    static std::mutex m;
    return m;
}

// matio's complaints go here instead of stderr; the last one is quoted in errors.
std::string& matio_said() {
    static std::string s;
    return s;
}

void keep_matio_message(int, char* message) { matio_said() = message ? message : ""; }

void quiet_libraries() {
    static std::once_flag once;
    std::call_once(once, [] {
        Mat_LogInitFunc("cavitas", keep_matio_message);
        H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
    });
    matio_said().clear();
}

std::string number_text(double v) {
    std::array<char, 32> b{};
    const auto r = std::to_chars(b.data(), b.data() + b.size(), v);
    return std::string(b.data(), r.ptr);
}

bool numeric_class(matio_classes c) { return c >= MAT_C_DOUBLE && c <= MAT_C_UINT64; }

std::string class_name(matio_classes c) {
    static const std::array<const char*, 18> names = {"empty",  "cell",   "struct", "object", "char",   "sparse",
                                                      "double", "single", "int8",   "uint8",  "int16",  "uint16",
                                                      "int32",  "uint32", "int64",  "uint64", "function", "opaque"};
    const auto i = static_cast<std::size_t>(c);
    return i < names.size() ? names[i] : "unknown class";
}

struct Variable {
    std::string name;
    matio_classes cls = MAT_C_EMPTY;
    bool complex = false, logical = false, compressed = false;
    std::vector<std::size_t> dims;

    std::size_t elements() const {
        std::size_t n = dims.empty() ? 0 : 1;
        for (auto d : dims) n *= d;
        return n;
    }
    bool real_numeric() const { return numeric_class(cls) && !complex && !logical; }
    bool scalar() const { return real_numeric() && elements() == 1; }
    /// A vector or an N×C matrix with N > C.
    bool signal() const {
        return real_numeric() && dims.size() == 2 && elements() >= 2 &&
               (dims[0] == 1 || dims[1] == 1 || dims[0] > dims[1]);
    }
    std::size_t rows() const { return dims[0] == 1 ? dims[1] : dims[0]; }
    int columns() const { return dims[0] == 1 || dims[1] == 1 ? 1 : static_cast<int>(dims[1]); }
    std::string size_text() const {
        std::string s;
        for (auto d : dims) s += (s.empty() ? "" : "\xC3\x97") + std::to_string(d);  // U+00D7 multiplication sign
        return s;
    }
    std::string kind_text() const {
        return size_text() + " " + (logical ? "logical" : class_name(cls)) + (complex ? " complex" : "");
    }
};

Variable variable_of(const matvar_t* v) {
    Variable r;
    r.name = v->name ? v->name : "";
    r.cls = v->class_type;
    r.complex = v->isComplex != 0;
    r.logical = v->isLogical != 0;
    r.compressed = v->compression == MAT_COMPRESSION_ZLIB;
    for (int i = 0; i < v->rank && v->dims; ++i) r.dims.push_back(v->dims[i]);
    return r;
}

std::string matio_detail() {
    const std::string& s = matio_said();
    return s.empty() ? "" : " (libmatio: " + s.substr(0, 200) + ")";
}

}  // namespace

struct MatSource::Handle {
    mat_t* mat = nullptr;
    matvar_t* var = nullptr;
    std::string path;
    Handle() = default;
    Handle(const Handle&) = delete;
    Handle& operator=(const Handle&) = delete;
    ~Handle() {
        const std::lock_guard lock(matio_mutex());
        if (var) Mat_VarFree(var);
        if (mat) Mat_Close(mat);
    }
};

namespace {

using Handle = MatSource::Handle;

std::uint32_t u32(const unsigned char* b, bool little) {
    return little ? std::uint32_t{b[0]} | std::uint32_t{b[1]} << 8 | std::uint32_t{b[2]} << 16 | std::uint32_t{b[3]} << 24
                  : std::uint32_t{b[3]} | std::uint32_t{b[2]} << 8 | std::uint32_t{b[1]} << 16 | std::uint32_t{b[0]} << 24;
}

// libmatio reads a v5 variable cut short without a word (fread's short count
// is not checked): the top-level elements' tags (8 bytes: type, byte count;
// MathWorks, "MAT-File Format", v5 data elements) must each fit in the file.
void check_v5_extent(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::array<unsigned char, 128> header{};
    in.read(reinterpret_cast<char*>(header.data()), header.size());
    if (in.gcount() != 128) throw InputError(path + ": cut short inside its 128-byte header");
    const bool little = header[126] == 'I' && header[127] == 'M';
    const auto size = std::filesystem::file_size(path);
    std::uint64_t at = 128;
    for (int k = 1; at < size; ++k) {
        std::array<unsigned char, 8> tag{};
        in.seekg(static_cast<std::streamoff>(at));
        in.read(reinterpret_cast<char*>(tag.data()), tag.size());
        const std::uint64_t bytes = u32(tag.data() + 4, little);
        if (in.gcount() != 8 || at + 8 + bytes > size)
            throw InputError(path + ": variable " + std::to_string(k) + " promises " + std::to_string(bytes) +
                             " bytes but the file ends " + std::to_string(size - std::min(size, at + 8)) +
                             " bytes after its tag: the file was cut short (an interrupted copy or save)");
        at += 8 + bytes + (u32(tag.data(), little) == 14 ? (8 - bytes % 8) % 8 : 0);  // miMATRIX is padded to 8
    }
}

// Opens a MAT file for reading; the caller holds matio_mutex().
void open_mat(Handle& h, const std::string& path) {
    h.path = path;
    std::error_code ec;
    const auto st = std::filesystem::status(path, ec);
    if (ec || !std::filesystem::exists(st)) throw InputError(path + ": no such file");
    if (std::filesystem::is_directory(st)) throw InputError(path + ": is a directory, not a recording");
    if (!std::filesystem::is_regular_file(st)) throw InputError(path + ": is not a regular file");
    quiet_libraries();
    h.mat = Mat_Open(path.c_str(), MAT_ACC_RDONLY);
    if (!h.mat) throw InputError(path + ": not a readable MAT-file" + matio_detail());
    if (Mat_GetVersion(h.mat) == MAT_FT_MAT5) check_v5_extent(path);
}

std::vector<Variable> list_variables(Handle& h) {
    std::vector<Variable> vars;
    Mat_Rewind(h.mat);
    while (matvar_t* v = Mat_VarReadNextInfo(h.mat)) {
        vars.push_back(variable_of(v));
        Mat_VarFree(v);
    }
    return vars;
}

std::string format_of(Handle& h, bool compressed) {
    switch (Mat_GetVersion(h.mat)) {
        case MAT_FT_MAT73: return "MATLAB 7.3 MAT-file (v7.3)";
        case MAT_FT_MAT4: return "MATLAB 4 MAT-file (v4)";
        default: return std::string("MATLAB 5.0 MAT-file (") + (compressed ? "v7 compressed)" : "v5)");
    }
}

std::string listing(const std::vector<Variable>& vars, bool numeric_only) {
    std::string s;
    for (const auto& v : vars) {
        if (numeric_only && !v.real_numeric()) continue;
        s += (s.empty() ? "" : ", ") + v.name + " " + (numeric_only ? v.size_text() : v.kind_text());
    }
    return s.empty() ? "none" : s;
}

const Variable& named(const std::vector<Variable>& vars, const std::string& name, const std::string& path) {
    const auto it = std::find_if(vars.begin(), vars.end(), [&](const Variable& v) { return v.name == name; });
    if (it == vars.end())
        throw InputError(path + ": no variable '" + name + "' (the file holds: " + listing(vars, false) + ")");
    const Variable& v = *it;
    const std::string what = path + ": variable " + name + " is ";
    if (v.cls == MAT_C_SPARSE) throw InputError(what + "sparse; save it full (full(" + name + "))");
    if (!numeric_class(v.cls)) throw InputError(what + "a " + class_name(v.cls) + " array, not numbers");
    if (v.complex) throw InputError(what + "complex; a waveform is real");
    if (v.logical) throw InputError(what + "logical (true/false), not a waveform");
    if (v.dims.size() != 2) throw InputError(what + v.size_text() + ": vectors and N\xC3\x97" "C matrices are read");
    if (v.elements() == 0) throw InputError(what + "empty");
    if (v.elements() == 1) throw InputError(what + "a single value, not a waveform");
    if (!v.signal())
        throw InputError(what + "a " + v.size_text() + " matrix: channels are read from columns (N\xC3\x97" "C, N > C); "
                         "transpose it");
    return v;
}

const Variable& choose(const std::vector<Variable>& vars, const std::string& wanted, const std::string& path) {
    if (!wanted.empty()) return named(vars, wanted, path);
    std::vector<const Variable*> signals;
    std::size_t numeric = 0;
    for (const auto& v : vars) {
        if (v.signal()) signals.push_back(&v);
        numeric += v.real_numeric() ? 1 : 0;
    }
    if (signals.size() == 1) return *signals.front();
    if (signals.empty())
        throw InputError(path + ": holds no numeric vector or matrix (variables: " + listing(vars, false) + ")");
    throw InputError(path + " holds " + std::to_string(numeric) + " numeric variables (" + listing(vars, true) +
                     "); choose one with --variable");
}

bool rate_name(const std::string& name) {
    std::string s = name;
    std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
    static const std::array<const char*, 8> names = {"fs",          "fs_hz",          "sr",
                                                     "samplerate",  "sample_rate",    "sample_rate_hz",
                                                     "sampling_rate", "sampling_frequency"};
    return std::find(names.begin(), names.end(), s) != names.end();
}

double scalar_value(const matvar_t* v) {
    const void* d = v->data;
    switch (v->class_type) {
        case MAT_C_DOUBLE: return *static_cast<const double*>(d);
        case MAT_C_SINGLE: return *static_cast<const float*>(d);
        case MAT_C_INT8: return *static_cast<const std::int8_t*>(d);
        case MAT_C_UINT8: return *static_cast<const std::uint8_t*>(d);
        case MAT_C_INT16: return *static_cast<const std::int16_t*>(d);
        case MAT_C_UINT16: return *static_cast<const std::uint16_t*>(d);
        case MAT_C_INT32: return *static_cast<const std::int32_t*>(d);
        case MAT_C_UINT32: return *static_cast<const std::uint32_t*>(d);
        case MAT_C_INT64: return static_cast<double>(*static_cast<const std::int64_t*>(d));
        case MAT_C_UINT64: return static_cast<double>(*static_cast<const std::uint64_t*>(d));
        default: return std::nan("");
    }
}

struct FileRate {
    double hz = 0.0;
    std::string variable;
};

// The file's rate variable, if it has one; several must agree.
std::optional<FileRate> file_rate(Handle& h, const std::vector<Variable>& vars) {
    std::optional<FileRate> rate;
    for (const auto& v : vars) {
        if (!v.scalar() || !rate_name(v.name)) continue;
        matvar_t* m = Mat_VarRead(h.mat, v.name.c_str());
        const double hz = m && m->data ? scalar_value(m) : std::nan("");
        if (m) Mat_VarFree(m);
        if (!std::isfinite(hz) || hz <= 0.0)
            throw InputError(h.path + ": variable " + v.name + " is not a sample rate (" + number_text(hz) + ")");
        if (rate && std::abs(rate->hz - hz) > kRateAgreement * hz)
            throw InputError(h.path + ": variables " + rate->variable + " (" + number_text(rate->hz) + " Hz) and " +
                             v.name + " (" + number_text(hz) + " Hz) disagree on the sample rate");
        if (!rate) rate = FileRate{hz, v.name};
    }
    return rate;
}

double resolve_rate(const std::optional<FileRate>& stated, const ReadRequest& request, const std::string& path,
                    const std::string& variable) {
    if (!stated && !request.sample_rate_hz)
        throw InputError(path + ": variable " + variable + " has no sample rate in the file; give --sample-rate");
    if (stated && request.sample_rate_hz &&
        !(std::abs(stated->hz - *request.sample_rate_hz) <= kRateAgreement * stated->hz))
        throw InputError(path + ": variable " + stated->variable + " gives " + number_text(stated->hz) +
                         " Hz, --sample-rate " + number_text(*request.sample_rate_hz) + " Hz");
    const double fs = request.sample_rate_hz ? *request.sample_rate_hz : stated->hz;
    if (!(fs >= kMinRateHz && fs <= kMaxRateHz))
        throw InputError(path + ": sample rate " + number_text(fs) + " Hz is outside 100 Hz .. 5 MHz");
    return fs;
}

template <class T>
void convert(const std::byte* raw, std::size_t n, double scale, float* out) {
    for (std::size_t i = 0; i < n; ++i) {
        T v;
        std::memcpy(&v, raw + i * sizeof(T), sizeof(T));
        out[i] = static_cast<float>(static_cast<double>(v) * scale);
    }
}

void convert_class(matio_classes c, const std::byte* raw, std::size_t n, double scale, float* out) {
    switch (c) {
        case MAT_C_DOUBLE: return convert<double>(raw, n, scale, out);
        case MAT_C_SINGLE: return convert<float>(raw, n, scale, out);
        case MAT_C_INT8: return convert<std::int8_t>(raw, n, scale, out);
        case MAT_C_UINT8: return convert<std::uint8_t>(raw, n, scale, out);
        case MAT_C_INT16: return convert<std::int16_t>(raw, n, scale, out);
        case MAT_C_UINT16: return convert<std::uint16_t>(raw, n, scale, out);
        case MAT_C_INT32: return convert<std::int32_t>(raw, n, scale, out);
        case MAT_C_UINT32: return convert<std::uint32_t>(raw, n, scale, out);
        case MAT_C_INT64: return convert<std::int64_t>(raw, n, scale, out);
        case MAT_C_UINT64: return convert<std::uint64_t>(raw, n, scale, out);
        default: throw std::logic_error("MatSource: a class that is not numeric");
    }
}

}  // namespace

MatSource::MatSource(const std::string& path, const ReadRequest& request, const Calibration& calibration)
    : handle_(std::make_unique<Handle>()) {
    info_.path = path;
    info_.calibration = calibration;
    const std::lock_guard lock(matio_mutex());
    open_mat(*handle_, path);
    const std::vector<Variable> vars = list_variables(*handle_);
    const Variable& v = choose(vars, request.variable, path);
    if (request.channel < 0 || request.channel >= v.columns())
        throw InputError(path + ": channel " + std::to_string(request.channel) + " requested, but variable " + v.name +
                         " has " + std::to_string(v.columns()) + " channel(s) numbered 0.." +
                         std::to_string(v.columns() - 1));
    if (v.elements() > static_cast<std::size_t>(INT_MAX))
        throw InputError(path + ": variable " + v.name + " has more than 2^31 elements (libmatio reads up to 2^31 - 1)");
    info_.fs_hz = resolve_rate(file_rate(*handle_, vars), request, path, v.name);
    handle_->var = Mat_VarReadInfo(handle_->mat, v.name.c_str());
    if (!handle_->var) throw InputError(path + ": variable " + v.name + " cannot be read" + matio_detail());
    info_.channels = v.columns();
    info_.channel = request.channel;
    info_.frames = v.rows();
    info_.format = format_of(*handle_, v.compressed);
    info_.is_float = true;
    info_.channel_name = v.columns() > 1 ? v.name + ":col " + std::to_string(request.channel) : v.name;
    first_ = static_cast<std::size_t>(request.channel) * v.rows();
    whole_ = v.compressed && Mat_GetVersion(handle_->mat) != MAT_FT_MAT73;
    if (whole_ && v.rows() > kMaxWholeSamples)
        throw InputError(path + ": variable " + v.name + " is compressed and longer than 2^28 samples; save it "
                         "uncompressed (save -v6) or as v7.3 to read it block by block");
}

MatSource::~MatSource() = default;

// Reads the next samples of the column into raw_ (all of them for a compressed variable).
std::size_t MatSource::fetch(std::size_t want) {
    const std::size_t left = info_.frames - fetched_;
    const std::size_t n = whole_ ? left : std::min({want, left, kBlockSamples});
    if (n == 0) return 0;
    const std::lock_guard lock(matio_mutex());
    matvar_t* var = handle_->var;
    raw_.resize(n * Mat_SizeOfClass(var->class_type));
    matio_said().clear();
    if (Mat_VarReadDataLinear(handle_->mat, var, raw_.data(), static_cast<int>(first_ + fetched_), 1,
                              static_cast<int>(n)) != 0)
        throw InputError(info_.path + ": variable " + std::string(var->name ? var->name : "") +
                         ": samples from " + std::to_string(fetched_ + 1) + " cannot be read (damaged or cut short)" +
                         matio_detail());
    fetched_ += n;
    raw_pos_ = 0;
    raw_count_ = n;
    return n;
}

std::size_t MatSource::read(std::span<float> out) {
    std::size_t done = 0;
    while (done < out.size()) {
        if (raw_pos_ == raw_count_ && fetch(out.size() - done) == 0) break;
        const std::size_t n = std::min(out.size() - done, raw_count_ - raw_pos_);
        const auto cls = handle_->var->class_type;
        convert_class(cls, raw_.data() + raw_pos_ * Mat_SizeOfClass(cls), n, info_.calibration.full_scale,
                      out.data() + done);
        for (std::size_t i = 0; i < n; ++i)
            if (!std::isfinite(out[done + i]))
                throw InputError(info_.path + ": variable " + info_.channel_name + ", sample " +
                                 std::to_string(fetched_ - raw_count_ + raw_pos_ + i + 1) +
                                 ": not a finite number (NaN, infinity or beyond the float range)");
        raw_pos_ += n;
        done += n;
    }
    if (whole_ && fetched_ == info_.frames && raw_pos_ == raw_count_) std::vector<std::byte>().swap(raw_);
    return done;
}

FileSummary describe_mat(const std::string& path) {
    Handle h;
    const std::lock_guard lock(matio_mutex());
    open_mat(h, path);
    const std::vector<Variable> vars = list_variables(h);
    const std::optional<FileRate> rate = file_rate(h, vars);
    FileSummary s;
    s.path = path;
    bool compressed = false;
    for (const auto& v : vars) {
        compressed = compressed || v.compressed;
        if (!v.signal()) {
            s.notes.push_back(v.name + ": " + v.kind_text() + (rate && v.name == rate->variable ? " (the sample rate)" : ""));
            continue;
        }
        for (int c = 0; c < v.columns(); ++c) {
            ChannelSummary ch;
            ch.index = c;
            ch.name = v.columns() > 1 ? v.name + ":col " + std::to_string(c) : v.name;
            ch.fs_hz = rate ? rate->hz : 0.0;
            ch.frames = v.rows();
            s.channels.push_back(ch);
        }
    }
    s.format = format_of(h, compressed);
    if (!rate) s.notes.push_back("no sample rate variable: give --sample-rate");
    return s;
}

}  // namespace cavitas::app
