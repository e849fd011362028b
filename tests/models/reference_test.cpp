// References other than the machine's own past: the spread a sister machine
// adds and the differences stated (models/reference.hpp).
#include <catch2/catch.hpp>

#include <cmath>

#include "models/reference.hpp"

using namespace cavitas::models;

TEST_CASE("A sister's spread: 3 dB at its speed, the exponent's doubt added in quadrature at another", "[reference]") {
    // hypot(3, 20 log10(1014 / 714)) = hypot(3, 3.047) = 4.276 dB, computed from the definition.
    CHECK(sister_level_floor_db(1014.0, 714.0) == Approx(std::hypot(3.0, 20.0 * std::log10(1014.0 / 714.0))));
    CHECK(sister_level_floor_db(1014.0, 714.0) == Approx(4.276).margin(0.001));
    CHECK(sister_level_floor_db(1485.0, 1485.0) == Approx(kSisterLevelFloorDb));
    CHECK(sister_level_floor_db(0.0, 1485.0) == Approx(kSisterLevelFloorDb));  // speed unknown: no speed term
    CHECK(sister_level_floor_db(714.0, 1014.0) == Approx(sister_level_floor_db(1014.0, 714.0)));
}

TEST_CASE("make_reference: own and suppression state nothing, a sister every difference", "[reference]") {
    Baseline b;
    b.machine = "OW-P101";
    b.channel = 0;
    b.rpm = 1485.0;
    b.speed.rpm_ref = 1485.0;
    b.vanes = 7;
    b.mount = "stud";
    RecordingStatement now{"OW-P109", 2, 1500.0, 5, "magnet", 0.0};
    Reference own = make_reference(b, false, now);
    CHECK(own.kind == ReferenceKind::own);
    CHECK(own.mismatches.empty());
    CHECK(own.level_floor_db == 0.0);
    b.suppression = SuppressionRun{12.0, 14.0, 3.0, 4.0};
    CHECK(make_reference(b, false, now).kind == ReferenceKind::suppression);
    const Reference sister = make_reference(b, true, now);
    CHECK(sister.kind == ReferenceKind::sister);
    std::vector<std::string> fields;
    for (const auto& m : sister.mismatches) fields.push_back(m.field);
    // 1500 rpm is 1.0 % from 1485: within the 3 % the speed model brings across, so not a difference.
    CHECK(fields == std::vector<std::string>{"machine", "channel", "vanes", "mount"});
    now.rpm = 1014.0;
    const Reference slower = make_reference(b, true, now);
    CHECK(slower.mismatches[2].field == "speed");
    CHECK(slower.mismatches[2].recording == "1014 rpm");
    CHECK(slower.level_floor_db > kSisterLevelFloorDb);
}
