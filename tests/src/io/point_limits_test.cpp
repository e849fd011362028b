// A point's own alert limits (src/io/point_limits.hpp). The defaults are the
// classifier's (models/classifier.hpp, each with its reason); the range 0.5-40 dB
// is our choice, said in the header.
#include <catch2/catch.hpp>

#include <string>

#include "src/io/errors.hpp"
#include "src/io/point_limits.hpp"

using namespace cavitas;
using Catch::Matchers::Contains;

TEST_CASE("A limits file changes only the limits it names and says why", "[io][limits]") {
    const app::PointLimits l = app::parse_point_limits("reason = \"suction-bell vortex at every visit\"\nhf_alert_db = 5\n",
                                                       "DE-H.limits.toml");
    CHECK(l.hf_alert_db == 5.0);
    CHECK(l.hf_developed_db == models::ClassifierConfig{}.hf_developed_db);  // not named: the default
    CHECK(l.lf_alert_db == models::ClassifierConfig{}.lf_alert_db);
    CHECK(l.source == "DE-H.limits.toml");
    const models::ClassifierConfig c = l.applied_to({});
    CHECK(c.hf_alert_db == 5.0);
    CHECK(c.z_alert == models::ClassifierConfig{}.z_alert);  // what a limits file cannot set stays
    CHECK_THAT(l.words(), Contains("HF alert +5.0 dB") && Contains("suction-bell vortex"));
    CHECK_THAT(app::PointLimits{}.words(), Contains("cavitas defaults"));
    CHECK(app::limits_path_beside("lib/OW-P101/DE-H.json") == "lib/OW-P101/DE-H.limits.toml");
}

TEST_CASE("A bad limits file is refused naming the file, the key and the value", "[io][limits]") {
    auto refused = [](const std::string& text, const std::string& words) {
        try {
            app::parse_point_limits(text, "p.limits.toml");
        } catch (const app::InputError& e) {
            const std::string what = e.what();
            return what.find("p.limits.toml") != std::string::npos && what.find(words) != std::string::npos;
        }
        return false;
    };
    CHECK(refused("hf_alert_db = 5\n", "reason is missing"));
    CHECK(refused("reason = \"  \"\nhf_alert_db = 5\n", "reason is empty"));
    CHECK(refused("reason = \"x\"\nhf_alert_db = 0.1\n", "hf_alert_db = 0.1 must lie within 0.5-40 dB"));
    CHECK(refused("reason = \"x\"\nhf_alert_db = \"5 dB\"\n", "hf_alert_db must be a number"));
    CHECK(refused("reason = \"x\"\nhf_alert_db = 10\n", "hf_developed_db = 9 must be above hf_alert_db = 10"));
    CHECK(refused("reason = \"x\"\nz_alert = 4\n", "z_alert is not a limits key"));
    CHECK(refused("reason = \"x\nhf_alert_db = 5\n", "not valid TOML"));
}
