#include "signal/fft.hpp"

#include <fftw3.h>

#include <cstdlib>
#include <map>
#include <mutex>
#include <new>
#include <stdexcept>
#include <string>
#include <tuple>
#include <utility>

namespace cavitas::dsp {
namespace {

// FFTW's double (fftw_) and single precision (fftwf_) interfaces under one name.
template <typename T>
struct Fftw;
template <>
struct Fftw<double> {
    using plan = fftw_plan;
    using cpx = fftw_complex;
    static constexpr int precision = 2;
    static void* malloc(std::size_t bytes) { return fftw_malloc(bytes); }
    static void free(void* p) { fftw_free(p); }
    static plan r2c(int n, double* in, cpx* out, unsigned f) { return fftw_plan_dft_r2c_1d(n, in, out, f); }
    static plan c2r(int n, cpx* in, double* out, unsigned f) { return fftw_plan_dft_c2r_1d(n, in, out, f); }
    static plan dft(int n, cpx* in, cpx* out, int sign, unsigned f) { return fftw_plan_dft_1d(n, in, out, sign, f); }
    static void run_r2c(void* p, double* in, std::complex<double>* out) {
        fftw_execute_dft_r2c(static_cast<plan>(p), in, reinterpret_cast<cpx*>(out));
    }
    static void run_c2r(void* p, std::complex<double>* in, double* out) {
        fftw_execute_dft_c2r(static_cast<plan>(p), reinterpret_cast<cpx*>(in), out);
    }
    static void run_dft(void* p, std::complex<double>* in, std::complex<double>* out) {
        fftw_execute_dft(static_cast<plan>(p), reinterpret_cast<cpx*>(in), reinterpret_cast<cpx*>(out));
    }
    static void destroy(void* p) { fftw_destroy_plan(static_cast<plan>(p)); }
};
template <>
struct Fftw<float> {
    using plan = fftwf_plan;
    using cpx = fftwf_complex;
    static constexpr int precision = 1;
    static void* malloc(std::size_t bytes) { return fftwf_malloc(bytes); }
    static void free(void* p) { fftwf_free(p); }
    static plan r2c(int n, float* in, cpx* out, unsigned f) { return fftwf_plan_dft_r2c_1d(n, in, out, f); }
    static plan c2r(int n, cpx* in, float* out, unsigned f) { return fftwf_plan_dft_c2r_1d(n, in, out, f); }
    static plan dft(int n, cpx* in, cpx* out, int sign, unsigned f) { return fftwf_plan_dft_1d(n, in, out, sign, f); }
    static void run_r2c(void* p, float* in, std::complex<float>* out) {
        fftwf_execute_dft_r2c(static_cast<plan>(p), in, reinterpret_cast<cpx*>(out));
    }
    static void run_c2r(void* p, std::complex<float>* in, float* out) {
        fftwf_execute_dft_c2r(static_cast<plan>(p), reinterpret_cast<cpx*>(in), out);
    }
    static void run_dft(void* p, std::complex<float>* in, std::complex<float>* out) {
        fftwf_execute_dft(static_cast<plan>(p), reinterpret_cast<cpx*>(in), reinterpret_cast<cpx*>(out));
    }
    static void destroy(void* p) { fftwf_destroy_plan(static_cast<plan>(p)); }
};

// One plan per (precision, kind, size) for the whole process, made on first
// use under one mutex (FFTW's planner is not thread safe) and kept until exit.
// Every transform object runs the shared plan on its own buffers through
// FFTW's new-array execute functions, which are thread safe; fftw_malloc gives
// every buffer the same alignment, which those functions require. Keeping the
// plans keeps their twiddle tables: the second recording of a route, or a
// second analyzer in the same process, plans nothing.
enum class Kind { r2c, c2r, forward, backward, forward_apart, backward_apart };

class PlanCache {
public:
    static PlanCache& instance() {
        static PlanCache cache;
        return cache;
    }
    template <typename T, typename Make>
    void* get(Kind kind, std::size_t n, Make make) {
        std::lock_guard<std::mutex> lock(mutex_);
        const auto key = std::make_tuple(Fftw<T>::precision, static_cast<int>(kind), n);
        auto it = plans_.find(key);
        if (it != plans_.end()) return it->second;
        // From wisdom when FFTW has it for this transform (imported from an
        // earlier run); otherwise planned, and counted as new.
        void* p = make(FFTW_WISDOM_ONLY);
        if (p == nullptr) {
            p = make(0u);
            if (p != nullptr) ++searched_;
        }
        if (p != nullptr) plans_.emplace(key, p);
        return p;
    }
    std::size_t searched() {
        std::lock_guard<std::mutex> lock(mutex_);
        return searched_;
    }
    /// Runs f under the planner's mutex (FFTW's wisdom functions are no more
    /// thread safe than its planner).
    template <typename F>
    auto locked(F f) {
        std::lock_guard<std::mutex> lock(mutex_);
        return f();
    }
    ~PlanCache() {
        for (auto& [key, p] : plans_) {
            if (std::get<0>(key) == Fftw<double>::precision)
                Fftw<double>::destroy(p);
            else
                Fftw<float>::destroy(p);
        }
    }

private:
    PlanCache() = default;
    std::mutex mutex_;
    std::map<std::tuple<int, int, std::size_t>, void*> plans_;
    std::size_t searched_ = 0;
};

template <typename T, typename E>
E* aligned_alloc_n(std::size_t n) {
    void* p = Fftw<T>::malloc(sizeof(E) * n);
    if (p == nullptr) throw std::bad_alloc();
    return static_cast<E*>(p);
}

void check_size(std::size_t n, const char* what) {
    if (n < 2 || n > (std::size_t{1} << 30))
        throw std::invalid_argument(std::string(what) + " size = " + std::to_string(n) +
                                    " is outside 2 .. 2^30");
}

}  // namespace

template <typename T>
BasicRealFft<T>::BasicRealFft(std::size_t n, FftDirections directions) : n_(n) {
    check_size(n, "RealFft");
    time_ = aligned_alloc_n<T, T>(n);
    freq_ = aligned_alloc_n<T, std::complex<T>>(n / 2 + 1);
    const int ni = static_cast<int>(n);
    auto* f = reinterpret_cast<typename Fftw<T>::cpx*>(freq_);
    auto& cache = PlanCache::instance();
    if (directions != FftDirections::inverse_only)
        forward_plan_ = cache.get<T>(Kind::r2c, n, [&](unsigned extra) {
            return static_cast<void*>(Fftw<T>::r2c(ni, time_, f, FFTW_ESTIMATE | FFTW_DESTROY_INPUT | extra));
        });
    if (directions != FftDirections::forward_only)
        inverse_plan_ = cache.get<T>(Kind::c2r, n, [&](unsigned extra) {
            return static_cast<void*>(Fftw<T>::c2r(ni, f, time_, FFTW_ESTIMATE | FFTW_DESTROY_INPUT | extra));
        });
    if ((directions != FftDirections::inverse_only && forward_plan_ == nullptr) ||
        (directions != FftDirections::forward_only && inverse_plan_ == nullptr)) {
        release();
        throw std::runtime_error("FFTW could not plan a real transform of size " + std::to_string(n));
    }
}

template <typename T>
BasicRealFft<T>::~BasicRealFft() { release(); }

template <typename T>
void BasicRealFft<T>::release() noexcept {
    forward_plan_ = inverse_plan_ = nullptr;  // the plans belong to the cache
    if (time_) Fftw<T>::free(time_);
    if (freq_) Fftw<T>::free(freq_);
    time_ = nullptr;
    freq_ = nullptr;
    n_ = 0;
}

template <typename T>
BasicRealFft<T>::BasicRealFft(BasicRealFft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      time_(std::exchange(o.time_, nullptr)),
      freq_(std::exchange(o.freq_, nullptr)),
      forward_plan_(std::exchange(o.forward_plan_, nullptr)),
      inverse_plan_(std::exchange(o.inverse_plan_, nullptr)) {}

template <typename T>
BasicRealFft<T>& BasicRealFft<T>::operator=(BasicRealFft&& o) noexcept {
    if (this != &o) {
        release();
        n_ = std::exchange(o.n_, 0);
        time_ = std::exchange(o.time_, nullptr);
        freq_ = std::exchange(o.freq_, nullptr);
        forward_plan_ = std::exchange(o.forward_plan_, nullptr);
        inverse_plan_ = std::exchange(o.inverse_plan_, nullptr);
    }
    return *this;
}

template <typename T>
void BasicRealFft<T>::forward() {
    if (!forward_plan_) throw std::logic_error("RealFft planned for the inverse only: forward() called");
    Fftw<T>::run_r2c(forward_plan_, time_, freq_);
}
template <typename T>
void BasicRealFft<T>::inverse() {
    if (!inverse_plan_) throw std::logic_error("RealFft planned for the forward only: inverse() called");
    Fftw<T>::run_c2r(inverse_plan_, freq_, time_);
}

template <typename T>
BasicComplexFft<T>::BasicComplexFft(std::size_t n, FftDirections directions, FftPlacement placement) : n_(n) {
    check_size(n, "ComplexFft");
    data_ = aligned_alloc_n<T, std::complex<T>>(n);
    if (placement == FftPlacement::apart) {
        try {
            out_ = aligned_alloc_n<T, std::complex<T>>(n);
        } catch (...) {
            release();
            throw;
        }
    }
    const int ni = static_cast<int>(n);
    auto* d = reinterpret_cast<typename Fftw<T>::cpx*>(data_);
    auto* o = out_ ? reinterpret_cast<typename Fftw<T>::cpx*>(out_) : d;
    const bool apart = out_ != nullptr;
    // Apart: the input may be overwritten (as for the real transforms).
    const unsigned flags = FFTW_ESTIMATE | (apart ? FFTW_DESTROY_INPUT : 0u);
    auto& cache = PlanCache::instance();
    if (directions != FftDirections::inverse_only)
        forward_plan_ = cache.get<T>(apart ? Kind::forward_apart : Kind::forward, n, [&](unsigned extra) {
            return static_cast<void*>(Fftw<T>::dft(ni, d, o, FFTW_FORWARD, flags | extra));
        });
    if (directions != FftDirections::forward_only)
        inverse_plan_ = cache.get<T>(apart ? Kind::backward_apart : Kind::backward, n, [&](unsigned extra) {
            return static_cast<void*>(Fftw<T>::dft(ni, d, o, FFTW_BACKWARD, flags | extra));
        });
    if ((directions != FftDirections::inverse_only && forward_plan_ == nullptr) ||
        (directions != FftDirections::forward_only && inverse_plan_ == nullptr)) {
        release();
        throw std::runtime_error("FFTW could not plan a complex transform of size " + std::to_string(n));
    }
}

template <typename T>
BasicComplexFft<T>::~BasicComplexFft() { release(); }

template <typename T>
void BasicComplexFft<T>::release() noexcept {
    forward_plan_ = inverse_plan_ = nullptr;  // the plans belong to the cache
    if (data_) Fftw<T>::free(data_);
    if (out_) Fftw<T>::free(out_);
    data_ = nullptr;
    out_ = nullptr;
    n_ = 0;
}

template <typename T>
BasicComplexFft<T>::BasicComplexFft(BasicComplexFft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      data_(std::exchange(o.data_, nullptr)),
      out_(std::exchange(o.out_, nullptr)),
      forward_plan_(std::exchange(o.forward_plan_, nullptr)),
      inverse_plan_(std::exchange(o.inverse_plan_, nullptr)) {}

template <typename T>
BasicComplexFft<T>& BasicComplexFft<T>::operator=(BasicComplexFft&& o) noexcept {
    if (this != &o) {
        release();
        n_ = std::exchange(o.n_, 0);
        data_ = std::exchange(o.data_, nullptr);
        out_ = std::exchange(o.out_, nullptr);
        forward_plan_ = std::exchange(o.forward_plan_, nullptr);
        inverse_plan_ = std::exchange(o.inverse_plan_, nullptr);
    }
    return *this;
}

template <typename T>
void BasicComplexFft<T>::forward() {
    if (!forward_plan_) throw std::logic_error("ComplexFft planned for the inverse only: forward() called");
    Fftw<T>::run_dft(forward_plan_, data_, out_ ? out_ : data_);
}
template <typename T>
void BasicComplexFft<T>::inverse() {
    if (!inverse_plan_) throw std::logic_error("ComplexFft planned for the forward only: inverse() called");
    Fftw<T>::run_dft(inverse_plan_, data_, out_ ? out_ : data_);
}

template class BasicRealFft<double>;
template class BasicRealFft<float>;
template class BasicComplexFft<double>;
template class BasicComplexFft<float>;

namespace {

std::string take_string(char* text, void (*release)(void*)) {
    std::string s = text ? text : "";
    if (text) release(text);
    return s;
}

}  // namespace

FftWisdom export_fft_wisdom() {
    return PlanCache::instance().locked([] {
        FftWisdom w;
        w.single_precision = take_string(fftwf_export_wisdom_to_string(), ::free);
        w.double_precision = take_string(fftw_export_wisdom_to_string(), ::free);
        return w;
    });
}

std::size_t fft_plans_made() { return PlanCache::instance().searched(); }

bool import_fft_wisdom(const FftWisdom& wisdom) {
    return PlanCache::instance().locked([&] {
        bool ok = true;
        if (!wisdom.single_precision.empty()) ok = fftwf_import_wisdom_from_string(wisdom.single_precision.c_str()) != 0 && ok;
        if (!wisdom.double_precision.empty()) ok = fftw_import_wisdom_from_string(wisdom.double_precision.c_str()) != 0 && ok;
        return ok;
    });
}

}  // namespace cavitas::dsp
