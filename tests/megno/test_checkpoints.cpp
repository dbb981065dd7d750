// Exact checkpoints: integrate(T1); save; load into a new integrator; integrate(T2) gives
// bitwise the state, step count and MEGNO sums of an uninterrupted run, for every integrator.
#include "engine/error.hpp"
#include "integrators/integrator.hpp"
#include "megno_systems.hpp"

#include <doctest/doctest.h>

#include <memory>
#include <string>
#include <vector>

using namespace moonwright;

namespace {

void check_resume(const std::string& name, int corrector, bool megno, bool modified_kick = false) {
    CAPTURE(name);
    CAPTURE(corrector);
    CAPTURE(megno);
    CAPTURE(modified_kick);
    const nbody_system sys = build_nbody(test::two_moons(12, 0.05, 1e23, 4.2e8, 0.0147));
    integrator_options o;
    o.corrector_order = corrector;
    o.modified_kick = modified_kick;
    o.tolerance = 1e-11;
    const double p = test::moon_period(4.2e8);
    const double t1 = 7.3 * p, t2 = 15.1 * p;
    auto a = make_integrator(name, sys, {}, o);
    auto b = make_integrator(name, sys, {}, o);
    if (megno) {
        REQUIRE(a->enable_megno(3));
        REQUIRE(b->enable_megno(3));
    }
    a->integrate(t1);
    a->integrate(t2);
    b->integrate(t1);
    const std::vector<double> data = b->save_checkpoint();
    b.reset();
    auto c = make_integrator(name, sys, {}, o);
    c->load_checkpoint(data);
    c->integrate(t2);
    std::vector<double> qa, va, qc, vc;
    a->relative_state(qa, va);
    c->relative_state(qc, vc);
    CHECK(c->time() == a->time());
    CHECK(c->steps() == a->steps());
    CHECK(qa == qc); // bitwise
    CHECK(va == vc);
    const megno_reading ma = a->megno(), mc = c->megno();
    if (megno) {
        CHECK(ma.y == mc.y);
        CHECK(ma.mean_y == mc.mean_y);
        CHECK(ma.log_growth == mc.log_growth);
        CHECK(ma.t0 == mc.t0);
        CHECK(std::isfinite(ma.mean_y));
    } else {
        CHECK(std::isnan(mc.mean_y));
    }
    MESSAGE(name << " corrector " << corrector << std::string(megno ? " with" : " without")
                 << " MEGNO: " << a->steps()
                 << " steps, resumed run bitwise equal; <Y> = " << ma.mean_y);
}

} // namespace

TEST_CASE("wh checkpoints resume bitwise (with and without the corrector and the modified kick, "
          "with MEGNO)") {
    check_resume("wh", 0, true);
    check_resume("wh", 0, false);
    check_resume("wh", 5, true);
    check_resume("wh", 7, true, true);
    check_resume("wh", 7, false, true);
}

TEST_CASE("radau checkpoints resume bitwise (with MEGNO and without)") {
    check_resume("radau", 0, true);
    check_resume("radau", 0, false);
}

TEST_CASE("rkf78 checkpoints resume bitwise (with MEGNO and without)") {
    check_resume("rkf78", 0, true);
    check_resume("rkf78", 0, false);
}

TEST_CASE("bs checkpoints resume bitwise (with MEGNO and without)") {
    check_resume("bs", 0, true);
    check_resume("bs", 0, false);
}

TEST_CASE("a checkpoint that does not fit throws input_error") {
    const nbody_system sys = build_nbody(test::two_moons(12, 0.05));
    auto wh = make_integrator("wh", sys);
    auto radau = make_integrator("radau", sys);
    wh->integrate(1e5);
    radau->integrate(1e5);
    const std::vector<double> w = wh->save_checkpoint(), r = radau->save_checkpoint();
    // Another integrator's checkpoint.
    CHECK_THROWS_WITH_AS(radau->load_checkpoint(w), doctest::Contains("checkpoint.kind"),
                         input_error);
    CHECK_THROWS_AS(wh->load_checkpoint(r), input_error);
    // Truncated data, a wrong tag, another body count.
    std::vector<double> cut(w.begin(), w.end() - 3);
    CHECK_THROWS_WITH_AS(wh->load_checkpoint(cut), doctest::Contains("checkpoint.length"),
                         input_error);
    std::vector<double> bad = w;
    bad[0] = 1.0;
    CHECK_THROWS_WITH_AS(wh->load_checkpoint(bad), doctest::Contains("checkpoint.tag"),
                         input_error);
    CHECK_THROWS_AS(wh->load_checkpoint({}), input_error);
    resolved_system three = test::two_moons(12, 0.05);
    three.bodies.pop_back();
    three.bodies[1].children.pop_back();
    auto small = make_integrator("wh", build_nbody(three));
    CHECK_THROWS_WITH_AS(small->load_checkpoint(w), doctest::Contains("checkpoint.bodies"),
                         input_error);
    // Another corrector order.
    integrator_options o;
    o.corrector_order = 3;
    auto corrected = make_integrator("wh", sys, {}, o);
    CHECK_THROWS_WITH_AS(corrected->load_checkpoint(w),
                         doctest::Contains("checkpoint.corrector_order"), input_error);
    // The failed loads left the integrators usable and unchanged.
    const double t = wh->time();
    wh->load_checkpoint(w);
    CHECK(wh->time() == t);
}
