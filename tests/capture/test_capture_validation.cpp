// Validation of capture experiments against published results: temporary gravitational capture
// in the circular restricted three-body problem, tidal disruption of binaries (Hills 1988) with
// exchange capture (Agnor & Hamilton 2006), and gas-drag capture (Pollack, Burns & Tauber 1979).
#include "engine/capture_experiment.hpp"
#include "engine/constants.hpp"
#include "engine/design_loader.hpp"

#include <algorithm>
#include <cmath>
#include <doctest/doctest.h>
#include <fmt/format.h>

using namespace moonwright;
namespace c = moonwright::constants;

namespace {

design garrow() {
    return load_design_file(std::string(MOONWRIGHT_SOURCE_DIR) + "/tests/capture/data/garrow.toml");
}

} // namespace

TEST_CASE("gravity alone: captures are temporary and only below the Jacobi constant of L1") {
    // Circular restricted three-body problem (Murray & Dermott, Solar System Dynamics, ch. 3):
    // a body coming from outside the Hill sphere can enter it only through the necks at L1/L2,
    // which open when C_J < C_L1; without dissipation a capture cannot be permanent (time
    // reversibility: the orbit leaves as it came).
    const design d = garrow();
    capture_options o;
    o.planet = "Garrow";
    o.mechanism = capture_mechanism::gravity;
    o.intruder = parse_intruder_spec("mass=1e12 kg, vinf=0.3 km/s, q=0.05:0.6 RH, start=1.5 RH, "
                                     "approach=planar");
    o.trials = 100;
    o.seed = 11;
    o.jobs = 2;
    o.span_s = 40 * c::year;
    const capture_result r = run_capture_experiment(d, o);
    REQUIRE(r.trials.size() == o.trials);
    double longest = 0;
    for (const auto& t : r.trials) {
        CHECK(t.outcome != "failed");
        if (t.members[0].captured) {
            CHECK(t.jacobi < t.jacobi_l1);
            longest = std::max(longest, t.members[0].longest_s);
        }
    }
    MESSAGE(fmt::format("captured {} of {}, kept {}, longest capture {:.3g} yr, span {:.3g} yr",
                        r.summary.captured, r.summary.trials, r.summary.kept, longest / c::year,
                        r.setting.span_s / c::year));
    CHECK(r.summary.captured >= 1);
    CHECK(r.summary.kept == 0);
    // The span is long compared with the temporary captures.
    CHECK(longest < r.setting.span_s / 4);
}

TEST_CASE("binary pairs come apart well inside the tidal radius and stay bound well outside") {
    // Hills 1988 (Nature 331, 687): a binary of separation a_B passing a mass M_p is disrupted
    // when its pericentre is inside r_t ~ a_B (3 M_p / (m1 + m2))^(1/3); far outside it the pair
    // is left bound. Exchange capture (one member kept: Agnor & Hamilton 2006, Nature 441, 192)
    // is not checked here yet (see docs/capture.md, "Not done yet").
    const design d = garrow();
    capture_options o;
    o.planet = "Garrow";
    o.mechanism = capture_mechanism::binary;
    o.pair = parse_pair_spec("m1=1e18 kg, m2=1e18 kg, sep=1000 km, e=0");
    o.trials = 12;
    o.seed = 5;
    o.jobs = 2;
    o.span_s = 0.3 * c::year;
    const capture_setting s0 = [&] {
        o.intruder = parse_intruder_spec("vinf=0.5 km/s, q=1:2 RH, start=3 RH");
        return prepare_capture(d, o);
    }();
    const double r_t = 1e6 * std::cbrt(3 * s0.planet_mass_kg / 2e18);
    auto run = [&](double lo, double hi) {
        o.intruder = parse_intruder_spec(
            fmt::format("vinf=0.5 km/s, q={}:{} km, start=0.8 RH", lo * r_t / 1e3, hi * r_t / 1e3));
        return run_capture_experiment(d, o);
    };
    const capture_result close = run(0.1, 0.2);
    const capture_result far = run(3, 4);
    MESSAGE(fmt::format("r_t {:.3g} km: split {} of {} at 0.1-0.2 r_t (impacts {}), {} of {} at "
                        "3-4 r_t; exchanges {} and {}",
                        r_t / 1e3, close.summary.pair_splits, close.summary.trials,
                        close.summary.impacts, far.summary.pair_splits, far.summary.trials,
                        close.summary.exchanges, far.summary.exchanges));
    for (const auto* r : {&close, &far}) {
        REQUIRE(r->trials.size() == o.trials);
        CHECK(r->summary.failed == 0);
        CHECK(r->summary.unresolved == 0);
    }
    // Well inside r_t most pairs are disrupted (Hills 1988; from memory: the disruption
    // probability approaches 1 for pericentres a small fraction of r_t; "more than half" is our
    // threshold, common practice, no source).
    CHECK(2 * close.summary.pair_splits > close.summary.trials);
    // Well outside r_t none is.
    CHECK(far.summary.pair_splits == 0);
}

TEST_CASE("gas drag: kept captures appear and rise with the envelope density") {
    // Pollack, Burns & Tauber 1979 (Icarus 37, 587): drag in an extended envelope removes the
    // excess energy of a passing body; denser gas captures a larger share of the same arrivals.
    const design d = garrow();
    capture_options o;
    o.planet = "Garrow";
    o.intruder = parse_intruder_spec("mass=1e15 kg, vinf=1 km/s, q=1.2:6 Rp, start=0.5 RH");
    o.trials = 12;
    o.seed = 3;
    o.jobs = 2;
    o.span_s = 0.3 * c::year;

    o.mechanism = capture_mechanism::gravity;
    const capture_result none = run_capture_experiment(d, o);
    CHECK(none.summary.kept == 0);

    o.mechanism = capture_mechanism::drag;
    std::vector<std::size_t> kept;
    std::string line;
    for (double rho0 : {1e-4, 1e-3, 1e-2}) {
        o.envelope = parse_envelope_spec(fmt::format("rho0={} kg/m3, k=2, cutoff=10 Rp", rho0));
        const capture_result r = run_capture_experiment(d, o);
        kept.push_back(r.summary.kept);
        line += fmt::format(" rho0 {:g}: kept {} of {}, impacts {};", rho0, r.summary.kept,
                            r.summary.trials, r.summary.impacts);
    }
    MESSAGE(line);
    CHECK(kept.back() > 0);
    CHECK(kept.back() > kept.front());
    for (std::size_t k = 1; k < kept.size(); ++k) CHECK(kept[k] >= kept[k - 1]);
}

TEST_CASE("results do not depend on the number of threads") {
    const design d = garrow();
    capture_options o;
    o.planet = "Garrow";
    o.intruder = parse_intruder_spec("mass=1e15 kg, vinf=1 km/s, q=1.2:6 Rp, start=0.5 RH");
    o.mechanism = capture_mechanism::drag;
    o.envelope = parse_envelope_spec("rho0=1e-2 kg/m3, k=2, cutoff=10 Rp");
    o.trials = 4;
    o.seed = 9;
    o.span_s = 0.1 * c::year;
    o.jobs = 1;
    const capture_result one = run_capture_experiment(d, o);
    o.jobs = 3;
    const capture_result three = run_capture_experiment(d, o);
    REQUIRE(one.trials.size() == three.trials.size());
    for (std::size_t k = 0; k < one.trials.size(); ++k) {
        CHECK(one.trials[k].outcome == three.trials[k].outcome);
        CHECK(one.trials[k].q_m == three.trials[k].q_m);
        CHECK(one.trials[k].end_s == three.trials[k].end_s);
        CHECK(one.trials[k].min_distance_m == three.trials[k].min_distance_m);
    }
}
