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

template <typename T>
T* aligned_alloc_n(std::size_t n) {
    void* p = fftw_malloc(sizeof(T) * n);
    if (p == nullptr) throw std::bad_alloc();
    return static_cast<T*>(p);
}

void check_size(std::size_t n, const char* what) {
    if (n < 2 || n > (std::size_t{1} << 30))
        throw std::invalid_argument(std::string(what) + " size = " + std::to_string(n) +
                                    " is outside 2 .. 2^30");
}

}  // namespace

RealFft::RealFft(std::size_t n, FftDirections directions) : n_(n) {
    check_size(n, "RealFft");
    time_ = aligned_alloc_n<double>(n);
    freq_ = aligned_alloc_n<std::complex<double>>(n / 2 + 1);
    std::lock_guard<std::mutex> lock(planner_mutex());
    const int ni = static_cast<int>(n);
    auto* f = reinterpret_cast<fftw_complex*>(freq_);
    if (directions != FftDirections::inverse_only) forward_plan_ = fftw_plan_dft_r2c_1d(ni, time_, f, FFTW_ESTIMATE);
    if (directions != FftDirections::forward_only)
        inverse_plan_ = fftw_plan_dft_c2r_1d(ni, f, time_, FFTW_ESTIMATE | FFTW_DESTROY_INPUT);
    if ((directions != FftDirections::inverse_only && forward_plan_ == nullptr) ||
        (directions != FftDirections::forward_only && inverse_plan_ == nullptr)) {
        release();
        throw std::runtime_error("FFTW could not plan a real transform of size " + std::to_string(n));
    }
}

RealFft::~RealFft() { release(); }

void RealFft::release() noexcept {
    {
        std::lock_guard<std::mutex> lock(planner_mutex());
        if (forward_plan_) fftw_destroy_plan(static_cast<fftw_plan>(forward_plan_));
        if (inverse_plan_) fftw_destroy_plan(static_cast<fftw_plan>(inverse_plan_));
    }
    forward_plan_ = inverse_plan_ = nullptr;
    if (time_) fftw_free(time_);
    if (freq_) fftw_free(freq_);
    time_ = nullptr;
    freq_ = nullptr;
    n_ = 0;
}

RealFft::RealFft(RealFft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      time_(std::exchange(o.time_, nullptr)),
      freq_(std::exchange(o.freq_, nullptr)),
      forward_plan_(std::exchange(o.forward_plan_, nullptr)),
      inverse_plan_(std::exchange(o.inverse_plan_, nullptr)) {}

RealFft& RealFft::operator=(RealFft&& o) noexcept {
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

void RealFft::forward() {
    if (!forward_plan_) throw std::logic_error("RealFft planned for the inverse only: forward() called");
    fftw_execute(static_cast<fftw_plan>(forward_plan_));
}
void RealFft::inverse() {
    if (!inverse_plan_) throw std::logic_error("RealFft planned for the forward only: inverse() called");
    fftw_execute(static_cast<fftw_plan>(inverse_plan_));
}

ComplexFft::ComplexFft(std::size_t n, FftDirections directions) : n_(n) {
    check_size(n, "ComplexFft");
    data_ = aligned_alloc_n<std::complex<double>>(n);
    std::lock_guard<std::mutex> lock(planner_mutex());
    const int ni = static_cast<int>(n);
    auto* d = reinterpret_cast<fftw_complex*>(data_);
    if (directions != FftDirections::inverse_only) forward_plan_ = fftw_plan_dft_1d(ni, d, d, FFTW_FORWARD, FFTW_ESTIMATE);
    if (directions != FftDirections::forward_only) inverse_plan_ = fftw_plan_dft_1d(ni, d, d, FFTW_BACKWARD, FFTW_ESTIMATE);
    if ((directions != FftDirections::inverse_only && forward_plan_ == nullptr) ||
        (directions != FftDirections::forward_only && inverse_plan_ == nullptr)) {
        release();
        throw std::runtime_error("FFTW could not plan a complex transform of size " + std::to_string(n));
    }
}

ComplexFft::~ComplexFft() { release(); }

void ComplexFft::release() noexcept {
    {
        std::lock_guard<std::mutex> lock(planner_mutex());
        if (forward_plan_) fftw_destroy_plan(static_cast<fftw_plan>(forward_plan_));
        if (inverse_plan_) fftw_destroy_plan(static_cast<fftw_plan>(inverse_plan_));
    }
    forward_plan_ = inverse_plan_ = nullptr;
    if (data_) fftw_free(data_);
    data_ = nullptr;
    n_ = 0;
}

ComplexFft::ComplexFft(ComplexFft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      data_(std::exchange(o.data_, nullptr)),
      forward_plan_(std::exchange(o.forward_plan_, nullptr)),
      inverse_plan_(std::exchange(o.inverse_plan_, nullptr)) {}

ComplexFft& ComplexFft::operator=(ComplexFft&& o) noexcept {
    if (this != &o) {
        release();
        n_ = std::exchange(o.n_, 0);
        data_ = std::exchange(o.data_, nullptr);
        forward_plan_ = std::exchange(o.forward_plan_, nullptr);
        inverse_plan_ = std::exchange(o.inverse_plan_, nullptr);
    }
    return *this;
}

void ComplexFft::forward() {
    if (!forward_plan_) throw std::logic_error("ComplexFft planned for the inverse only: forward() called");
    fftw_execute(static_cast<fftw_plan>(forward_plan_));
}
void ComplexFft::inverse() {
    if (!inverse_plan_) throw std::logic_error("ComplexFft planned for the forward only: inverse() called");
    fftw_execute(static_cast<fftw_plan>(inverse_plan_));
}

}  // namespace cavitas::dsp
