// Antoni's fast kurtogram: the (level, band) of a 1/3-binary filter-bank tree
// whose complex envelope is most impulsive.
//
// Reference: J. Antoni, "Fast computation of the kurtogram for the detection of
// transient faults", Mech. Syst. Signal Process. 21(1) (2007) 108-124.
// Levels are 0, 1, 1.585, 2, 2.585, ... , levels; level k has bandwidth
// fs * 2^-(k+1) and fs / (2 * bandwidth) bands, band i centred at (i + 0.5) * bandwidth.
// Kurtosis of a complex envelope c: mean|c|^4 / (mean|c|^2)^2 - 2 (0 for complex
// Gaussian noise, -1 for a pure tone), negative values clipped to 0. Level 0 is
// the real input itself and takes the real excess kurtosis m4 / m2^2 - 3, so that
// it too reads 0 for Gaussian noise (as in the reference code published with the
// paper). The first split of a real input is not circular (E c^2 != 0), so for
// Gaussian noise the two level-1 bands and the outer two of level log2(3) read
// |sum h^2|^2 / (sum |h|^2)^2 = 0.18 with the paper's filters, not 0.
#pragma once

#include <array>
#include <cstddef>
#include <span>
#include <vector>

namespace cavitas::dsp {

struct KurtogramConfig {
    int levels = 6;              ///< tree depth; must satisfy levels <= log2(segment_size) - 7
    double min_center_hz = 0.0;  ///< ignore bands centred below this in the selection (e.g. above BPF harmonics)
};

struct KurtogramBand {
    double kurtosis = 0.0;      ///< spectral kurtosis of the band's complex envelope (>= 0)
    double level = 0.0;         ///< tree level (0, 1, 1.585, 2, ...)
    double center_hz = 0.0;     ///< band centre
    double bandwidth_hz = 0.0;  ///< band width
    double low_hz() const { return center_hz - 0.5 * bandwidth_hz; }
    double high_hz() const { return center_hz + 0.5 * bandwidth_hz; }
};

/// Built once per (config, fs, segment size); process() reuses its buffers.
class FastKurtogram {
public:
    FastKurtogram(const KurtogramConfig& config, double fs_hz, std::size_t segment_size);

    /// Kurtogram of one segment (x.size() must equal segment_size). The map of this
    /// segment replaces the last one and is added to the running mean.
    void process(std::span<const float> x);

    /// Number of rows (levels) in the map: 2 * levels. The accessors below throw
    /// std::out_of_range for r >= rows() or b >= row_bands(r).
    std::size_t rows() const;
    /// Level value of row r (0, 1, 1.585, 2, 2.585, ...).
    double row_level(std::size_t r) const;
    /// Number of bands in row r.
    std::size_t row_bands(std::size_t r) const;
    /// Band width of row r: fs * 2^-(level + 1).
    double row_bandwidth_hz(std::size_t r) const;
    /// Centre of band b in row r: (b + 0.5) * row_bandwidth_hz(r).
    double center_hz(std::size_t r, std::size_t b) const;
    std::size_t segment_size() const { return n_; }
    /// Kurtosis of band b in row r of the last processed segment.
    double last(std::size_t r, std::size_t b) const;
    /// Mean over all processed segments (0 before the first).
    double mean(std::size_t r, std::size_t b) const;

    KurtogramBand best_last() const;  ///< maximum of the last segment's map
    KurtogramBand best_mean() const;  ///< maximum of the mean map
    std::size_t segments() const { return segments_; }
    void reset();

private:
    // The filter bank runs in single precision (4 lanes per SSE register);
    // the kurtosis sums over each band are in double.
    using Sample = float;
    struct Row {
        double level;
        std::size_t bands;
        std::size_t offset;  // first cell of the row in last_ / sum_
    };
    // Polyphase views of the analysis filters (see kurtogram.cpp).
    struct BinaryTaps {
        std::array<Sample, 9> a_odd;   // lower branch on the odd-phase stream
        std::array<Sample, 8> a_even;  // lower branch on the even-phase stream
        std::array<Sample, 8> d_odd;   // upper branch, real part of its taps
        std::array<Sample, 8> d_even;  // upper branch, imaginary part of its taps
    };
    struct TernaryTaps {
        std::array<Sample, 5> t0;  // phases r = 0 .. 5 of the 25-tap prototype, k = 6q + r
        std::array<Sample, 4> t1, t2, t3, t4, t5;
    };

    void split(const Sample* xr, const Sample* xi, std::size_t len, Sample* ar, Sample* ai, Sample* dr,
               Sample* di);
    void ternary(const Sample* xr, const Sample* xi, std::size_t len);
    void visit(std::size_t depth, std::size_t node, const Sample* xr, const Sample* xi, std::size_t len);
    void check_cell(std::size_t r, std::size_t b) const;
    KurtogramBand best_of(const std::vector<double>& map, double scale) const;

    KurtogramConfig config_;
    double fs_hz_;
    std::size_t n_;
    std::size_t segments_ = 0;
    std::vector<Row> rows_;
    std::vector<double> last_;  // ragged: row r holds rows_[r].bands cells from rows_[r].offset
    std::vector<double> sum_;
    BinaryTaps binary_{};
    TernaryTaps ternary_{};
    double energy_floor_ = 0.0;  // per segment: bands below this mean power read 0
    // Work space sized in the constructor so that process() never allocates.
    std::vector<Sample> root_re_, root_im_;    // the segment less its mean (imaginary part 0)
    std::vector<Sample> tree_re_, tree_im_;    // per depth, the two children of the node being split
    std::vector<std::size_t> tree_offset_;     // where depth d starts in tree_re_ / tree_im_
    std::vector<Sample> stream_re_, stream_im_;  // one block of the demodulated polyphase streams
    std::vector<Sample> block_;                  // one block of filter sums
    std::vector<Sample> out_re_, out_im_;        // the three outputs of a ternary split
};

}  // namespace cavitas::dsp
