// The indicators as a person reads them (models/indicators.hpp): plain names with
// their units, and one kurtosis convention. Kurtosis is the fourth standardised
// moment, 3 for a Gaussian signal; spectral kurtosis and the kurtogram are excess
// kurtosis, 0 for a Gaussian (Antoni 2006, "The spectral kurtosis: a useful tool
// for characterising non-stationary signals"), so 3 is added where they are shown.
#include <catch2/catch.hpp>

#include "models/indicators.hpp"

using namespace cavitas::models;

TEST_CASE("Every indicator key a finding writes has plain words and a unit", "[models][indicators]") {
    CHECK(indicator_heading("hf_band_level_db") == "HF band level, dB");
    CHECK(indicator_heading("hf_kurtosis_ratio") == "HF band kurtosis (Gaussian = 3)");
    CHECK(indicator_heading("impulse_rate_per_s") == "HF impulse rate, /s");
    CHECK(indicator_heading("overall_rms_g") == "overall RMS, g");
    CHECK(indicator_heading("overall_rms_m_s2") == "overall RMS, m/s2");
    CHECK(indicator_heading("kurtogram_max_ratio") == "fast-kurtogram maximum (kurtosis, Gaussian = 3)");
    CHECK(indicator_heading("no_such_thing") == "no_such_thing");
    for (std::size_t i = 0; i < kSegmentIndicatorCount; ++i) {
        const IndicatorInfo& inf = info(static_cast<SegmentIndicator>(i));
        const std::string key = std::string(inf.name) + "_" + (inf.unit == "signal" ? "g" : std::string(inf.unit));
        CHECK(indicator_of_key(key) == &inf);
        CHECK(indicator_heading(key).find('_') == std::string::npos);  // no code names shown to a person
    }
}

TEST_CASE("One kurtosis convention: excess kurtosis is shown with 3 added, changes are not shifted", "[models][indicators]") {
    const IndicatorInfo& sk = info(SegmentIndicator::hf_spectral_kurtosis);
    const IndicatorInfo& k = info(SegmentIndicator::hf_kurtosis);
    CHECK(shown_value(sk, 0.0, "g") == "3");        // a Gaussian band: SK 0 -> kurtosis 3
    CHECK(shown_value(k, 3.0, "g") == "3");         // already the fourth moment
    CHECK(shown_value(sk, -0.15, "g", true) == "-0.15");
    CHECK(shown_value(info(SegmentIndicator::lf_band_level), -18.1, "g") == "-18.1 dB");
    CHECK(shown_value(info(SegmentIndicator::overall_rms), 0.287, "g") == "0.287 g");
    CHECK(shown_value(info(SegmentIndicator::impulse_rate), 15.5, "g") == "15.5/s");
}
