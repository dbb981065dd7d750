// Verdict rules: each verdict from the outcome that should give it, with its reasons.
#include "engine/constants.hpp"
#include "engine/run_outcome.hpp"

#include <doctest/doctest.h>

using namespace moonwright;

namespace {
run_outcome quiet_run() {
    run_outcome o;
    o.span_s = o.simulated_s = 1000 * constants::year;
    o.reference_period_s = constants::year;
    o.reference_body = "Vela";
    o.body_names = {"Star", "Planet", "Vela", "Mira"};
    o.mean_megno = 2.01;
    o.max_energy_error = 1e-10;
    o.bodies = {{"Vela", 0.01, 0.02, 1e8, 1e8, 1e8, 0.0}};
    return o;
}
} // namespace

TEST_CASE("no event, regular MEGNO, small error: stable") {
    const verdict v = decide_verdict(quiet_run());
    CHECK(v.kind == verdict_kind::stable);
    CHECK(v.headline.find("1,000 orbits of Vela") != std::string::npos);
    CHECK(v.reasons.size() >= 3);
}

TEST_CASE("the first event decides an unstable verdict") {
    run_outcome o = quiet_run();
    o.events.push_back(
        {12.5 * constants::year, event_kind::close_approach, 2, 3, 1.0e6, 2.0e6, ""});
    o.events.push_back({13.0 * constants::year, event_kind::collision, 2, 3, 1.0e3, 2.0e3, ""});
    const verdict v = decide_verdict(o);
    CHECK(v.kind == verdict_kind::unstable);
    CHECK(v.headline.find("a close approach") != std::string::npos);
    CHECK(v.reasons.front().find("Vela and Mira came within 1000 km") != std::string::npos);
    CHECK(v.reasons.size() == 2);
}

TEST_CASE("MEGNO above the threshold gives chaotic with the Lyapunov time") {
    run_outcome o = quiet_run();
    o.mean_megno = 8.0;
    o.lyapunov_time_s = 50 * constants::year;
    const verdict v = decide_verdict(o);
    CHECK(v.kind == verdict_kind::chaotic);
    CHECK(v.reasons[1].find("20 times shorter") != std::string::npos);
}

TEST_CASE("a large energy error makes the run unreliable whatever else happened") {
    run_outcome o = quiet_run();
    o.max_energy_error = 3e-3;
    o.events.push_back({1.0, event_kind::escape, 2, 1, 1e9, 5e8, ""});
    const verdict v = decide_verdict(o);
    CHECK(v.kind == verdict_kind::unreliable);
    CHECK(v.reasons.back().find("smaller step") != std::string::npos);
}

TEST_CASE("an eccentricity that runs away is not stable") {
    run_outcome o = quiet_run();
    o.bodies[0].e_max = 0.97;
    CHECK(decide_verdict(o).kind == verdict_kind::chaotic);
}
