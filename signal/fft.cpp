#include "signal/fft.hpp"

#include <fftw3.h>

#include <mutex>
#include <new>
#include <stdexcept>
#include <string>
#include <utility>

namespace cavitas::dsp {
namespace {

std::mutex& planner_mutex() {
    static std::mutex m;
    return m;
}

// FFTW's double (fftw_) and single precision (fftwf_) interfaces under one name.
template <typename T>
struct Fftw;
template <>
struct Fftw<double> {
    using plan = fftw_plan;
    using cpx = fftw_complex;
    static void* malloc(std::size_t bytes) { return fftw_malloc(bytes); }
    static void free(void* p) { fftw_free(p); }
    static plan r2c(int n, double* in, cpx* out, unsigned f) { return fftw_plan_dft_r2c_1d(n, in, out, f); }
    static plan c2r(int n, cpx* in, double* out, unsigned f) { return fftw_plan_dft_c2r_1d(n, in, out, f); }
    static plan dft(int n, cpx* d, int sign, unsigned f) { return fftw_plan_dft_1d(n, d, d, sign, f); }
    static void execute(void* p) { fftw_execute(static_cast<plan>(p)); }
    static void destroy(void* p) { fftw_destroy_plan(static_cast<plan>(p)); }
};
template <>
struct Fftw<float> {
    using plan = fftwf_plan;
    using cpx = fftwf_complex;
    static void* malloc(std::size_t bytes) { return fftwf_malloc(bytes); }
    static void free(void* p) { fftwf_free(p); }
    static plan r2c(int n, float* in, cpx* out, unsigned f) { return fftwf_plan_dft_r2c_1d(n, in, out, f); }
    static plan c2r(int n, cpx* in, float* out, unsigned f) { return fftwf_plan_dft_c2r_1d(n, in, out, f); }
    static plan dft(int n, cpx* d, int sign, unsigned f) { return fftwf_plan_dft_1d(n, d, d, sign, f); }
    static void execute(void* p) { fftwf_execute(static_cast<plan>(p)); }
    static void destroy(void* p) { fftwf_destroy_plan(static_cast<plan>(p)); }
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
    std::lock_guard<std::mutex> lock(planner_mutex());
    const int ni = static_cast<int>(n);
    auto* f = reinterpret_cast<typename Fftw<T>::cpx*>(freq_);
    if (directions != FftDirections::inverse_only) forward_plan_ = Fftw<T>::r2c(ni, time_, f, FFTW_ESTIMATE);
    if (directions != FftDirections::forward_only)
        inverse_plan_ = Fftw<T>::c2r(ni, f, time_, FFTW_ESTIMATE | FFTW_DESTROY_INPUT);
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
    {
        std::lock_guard<std::mutex> lock(planner_mutex());
        if (forward_plan_) Fftw<T>::destroy(forward_plan_);
        if (inverse_plan_) Fftw<T>::destroy(inverse_plan_);
    }
    forward_plan_ = inverse_plan_ = nullptr;
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
    Fftw<T>::execute(forward_plan_);
}
template <typename T>
void BasicRealFft<T>::inverse() {
    if (!inverse_plan_) throw std::logic_error("RealFft planned for the forward only: inverse() called");
    Fftw<T>::execute(inverse_plan_);
}

template <typename T>
BasicComplexFft<T>::BasicComplexFft(std::size_t n, FftDirections directions) : n_(n) {
    check_size(n, "ComplexFft");
    data_ = aligned_alloc_n<T, std::complex<T>>(n);
    std::lock_guard<std::mutex> lock(planner_mutex());
    const int ni = static_cast<int>(n);
    auto* d = reinterpret_cast<typename Fftw<T>::cpx*>(data_);
    if (directions != FftDirections::inverse_only) forward_plan_ = Fftw<T>::dft(ni, d, FFTW_FORWARD, FFTW_ESTIMATE);
    if (directions != FftDirections::forward_only) inverse_plan_ = Fftw<T>::dft(ni, d, FFTW_BACKWARD, FFTW_ESTIMATE);
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
    {
        std::lock_guard<std::mutex> lock(planner_mutex());
        if (forward_plan_) Fftw<T>::destroy(forward_plan_);
        if (inverse_plan_) Fftw<T>::destroy(inverse_plan_);
    }
    forward_plan_ = inverse_plan_ = nullptr;
    if (data_) Fftw<T>::free(data_);
    data_ = nullptr;
    n_ = 0;
}

template <typename T>
BasicComplexFft<T>::BasicComplexFft(BasicComplexFft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      data_(std::exchange(o.data_, nullptr)),
      forward_plan_(std::exchange(o.forward_plan_, nullptr)),
      inverse_plan_(std::exchange(o.inverse_plan_, nullptr)) {}

template <typename T>
BasicComplexFft<T>& BasicComplexFft<T>::operator=(BasicComplexFft&& o) noexcept {
    if (this != &o) {
        release();
        n_ = std::exchange(o.n_, 0);
        data_ = std::exchange(o.data_, nullptr);
        forward_plan_ = std::exchange(o.forward_plan_, nullptr);
        inverse_plan_ = std::exchange(o.inverse_plan_, nullptr);
    }
    return *this;
}

template <typename T>
void BasicComplexFft<T>::forward() {
    if (!forward_plan_) throw std::logic_error("ComplexFft planned for the inverse only: forward() called");
    Fftw<T>::execute(forward_plan_);
}
template <typename T>
void BasicComplexFft<T>::inverse() {
    if (!inverse_plan_) throw std::logic_error("ComplexFft planned for the forward only: inverse() called");
    Fftw<T>::execute(inverse_plan_);
}

template class BasicRealFft<double>;
template class BasicRealFft<float>;
template class BasicComplexFft<double>;
template class BasicComplexFft<float>;

}  // namespace cavitas::dsp
