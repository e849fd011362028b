// Real and complex FFTs on FFTW (double or single precision), planned once and reused.
//
// Plans are made with FFTW_ESTIMATE, so results repeat from run to run, once
// per (precision, kind, size) for the whole process, under one mutex (FFTW's
// planner is not thread safe), and kept until exit: a second object of the
// same size plans nothing. Buffers are owned by each object and aligned by
// fftw_malloc; the hot path runs the shared plan on the object's own buffers
// (FFTW's new-array execute, thread safe) and never allocates.
#pragma once

#include <complex>
#include <cstddef>
#include <span>
#include <string>

namespace cavitas::dsp {

/// Which directions to plan. Planning is the costly part of an FFT object for
/// large sizes (twiddle tables), so a block that only ever goes one way plans only
/// that way; calling the other direction then throws std::logic_error.
enum class FftDirections { both, forward_only, inverse_only };

/// n-point real-to-complex forward and complex-to-real inverse transform, in
/// double (RealFft) or single precision (RealFftF, FFTW's fftwf_ plans).
/// forward(): time() [size n] -> spectrum() [size n/2+1], unnormalised; time()
///            may be overwritten (FFTW may then use faster in-place algorithms).
/// inverse(): spectrum() -> time(), unnormalised (a round trip scales by n);
///            spectrum() may be overwritten.
template <typename T>
class BasicRealFft {
public:
    explicit BasicRealFft(std::size_t n, FftDirections directions = FftDirections::both);
    ~BasicRealFft();
    BasicRealFft(BasicRealFft&& other) noexcept;
    BasicRealFft& operator=(BasicRealFft&& other) noexcept;
    BasicRealFft(const BasicRealFft&) = delete;
    BasicRealFft& operator=(const BasicRealFft&) = delete;

    std::size_t size() const { return n_; }
    std::span<T> time() { return {time_, n_}; }
    std::span<const T> time() const { return {time_, n_}; }
    std::span<std::complex<T>> spectrum() { return {freq_, n_ / 2 + 1}; }
    std::span<const std::complex<T>> spectrum() const { return {freq_, n_ / 2 + 1}; }

    void forward();
    void inverse();

private:
    void release() noexcept;
    std::size_t n_ = 0;
    T* time_ = nullptr;
    std::complex<T>* freq_ = nullptr;
    void* forward_plan_ = nullptr;
    void* inverse_plan_ = nullptr;
};

/// Where a complex transform leaves its result: in its input buffer, or apart
/// in a second one (FFTW's out-of-place plans were about 30 % faster for the
/// envelope's 72000-point inverse on the development machine; the input is
/// then overwritten).
enum class FftPlacement { in_place, apart };

/// n-point complex transform: data() -> output(). forward() uses e^{-j...},
/// inverse() e^{+j...}; both unnormalised. In place (the default), output() is
/// data(); apart, output() is a second buffer and data() is overwritten.
/// ComplexFft in double, ComplexFftF in single precision.
template <typename T>
class BasicComplexFft {
public:
    explicit BasicComplexFft(std::size_t n, FftDirections directions = FftDirections::both,
                             FftPlacement placement = FftPlacement::in_place);
    ~BasicComplexFft();
    BasicComplexFft(BasicComplexFft&& other) noexcept;
    BasicComplexFft& operator=(BasicComplexFft&& other) noexcept;
    BasicComplexFft(const BasicComplexFft&) = delete;
    BasicComplexFft& operator=(const BasicComplexFft&) = delete;

    std::size_t size() const { return n_; }
    std::span<std::complex<T>> data() { return {data_, n_}; }
    std::span<const std::complex<T>> data() const { return {data_, n_}; }
    std::span<const std::complex<T>> output() const { return {out_ ? out_ : data_, n_}; }

    void forward();
    void inverse();

private:
    void release() noexcept;
    std::size_t n_ = 0;
    std::complex<T>* data_ = nullptr;
    std::complex<T>* out_ = nullptr;  // apart only
    void* forward_plan_ = nullptr;
    void* inverse_plan_ = nullptr;
};

/// FFTW "wisdom": the plans made so far in this process, as FFTW's own text,
/// one per precision, so that an application can keep them between runs (FFTW
/// then rebuilds a plan from it in a fraction of the planning time; the plan is
/// the same one, so results are unchanged). Text only: files are the caller's.
struct FftWisdom {
    std::string single_precision, double_precision;
};
FftWisdom export_fft_wisdom();
/// Adds wisdom exported by export_fft_wisdom (an empty part is skipped).
/// Returns false when FFTW refuses a part (another FFTW version, damaged text).
bool import_fft_wisdom(const FftWisdom& wisdom);
/// How many plans this process has had to make without wisdom: while it stays
/// the same, export_fft_wisdom would give what was imported (plus nothing).
std::size_t fft_plans_made();

using RealFft = BasicRealFft<double>;
using RealFftF = BasicRealFft<float>;
using ComplexFft = BasicComplexFft<double>;
using ComplexFftF = BasicComplexFft<float>;

extern template class BasicRealFft<double>;
extern template class BasicRealFft<float>;
extern template class BasicComplexFft<double>;
extern template class BasicComplexFft<float>;

}  // namespace cavitas::dsp
