// Real and complex FFTs on FFTW (double precision), planned once and reused.
//
// Plans are made under one process-wide mutex (FFTW's planner is not thread
// safe) with FFTW_ESTIMATE, so results repeat from run to run. Buffers are
// owned by the object and aligned by fftw_malloc; the hot path only calls
// fftw_execute on the object's own buffers and never allocates.
#pragma once

#include <complex>
#include <cstddef>
#include <span>

namespace cavitas::dsp {

/// Which directions to plan. Planning is the costly part of an FFT object for
/// large sizes (twiddle tables), so a block that only ever goes one way plans only
/// that way; calling the other direction then throws std::logic_error.
enum class FftDirections { both, forward_only, inverse_only };

/// n-point real-to-complex forward and complex-to-real inverse transform.
/// forward(): time() [size n] -> spectrum() [size n/2+1], unnormalised.
/// inverse(): spectrum() -> time(), unnormalised (a round trip scales by n).
class RealFft {
public:
    explicit RealFft(std::size_t n, FftDirections directions = FftDirections::both);
    ~RealFft();
    RealFft(RealFft&& other) noexcept;
    RealFft& operator=(RealFft&& other) noexcept;
    RealFft(const RealFft&) = delete;
    RealFft& operator=(const RealFft&) = delete;

    std::size_t size() const { return n_; }
    std::span<double> time() { return {time_, n_}; }
    std::span<const double> time() const { return {time_, n_}; }
    std::span<std::complex<double>> spectrum() { return {freq_, n_ / 2 + 1}; }
    std::span<const std::complex<double>> spectrum() const { return {freq_, n_ / 2 + 1}; }

    void forward();
    void inverse();

private:
    void release() noexcept;
    std::size_t n_ = 0;
    double* time_ = nullptr;
    std::complex<double>* freq_ = nullptr;
    void* forward_plan_ = nullptr;
    void* inverse_plan_ = nullptr;
};

/// n-point complex transform on one in-place buffer. forward() uses e^{-j...},
/// inverse() e^{+j...}; both unnormalised.
class ComplexFft {
public:
    explicit ComplexFft(std::size_t n, FftDirections directions = FftDirections::both);
    ~ComplexFft();
    ComplexFft(ComplexFft&& other) noexcept;
    ComplexFft& operator=(ComplexFft&& other) noexcept;
    ComplexFft(const ComplexFft&) = delete;
    ComplexFft& operator=(const ComplexFft&) = delete;

    std::size_t size() const { return n_; }
    std::span<std::complex<double>> data() { return {data_, n_}; }
    std::span<const std::complex<double>> data() const { return {data_, n_}; }

    void forward();
    void inverse();

private:
    void release() noexcept;
    std::size_t n_ = 0;
    std::complex<double>* data_ = nullptr;
    void* forward_plan_ = nullptr;
    void* inverse_plan_ = nullptr;
};

}  // namespace cavitas::dsp
