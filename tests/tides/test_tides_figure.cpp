// The tides figure builder: what goes into the a(t) figure, and that it draws.
#include "engine/tides_report.hpp"
#include "tides_fixtures.hpp"
#include "tools/report/tides_figure.hpp"

#include <cmath>
#include <doctest/doctest.h>

using namespace moonwright;
using namespace moonwright::test;
namespace c = moonwright::constants;

namespace {
/// A planet with a falling inner moon and a surviving outer one (invented numbers).
resolved_system falling_and_staying() {
    resolved_system s;
    s.name = "Quill";
    auto star = make_star("Quill", c::M_sun);
    star.age_s = 2 * c::Gyr;
    add_body(s, star, -1);
    auto pl = make_body("Orm", body_kind::planet, c::M_earth, c::R_earth, make_orbit(c::au, 0.01));
    pl.rotation_period_s = 15 * c::hour;
    pl.k2 = 0.3;
    pl.tidal_q = 30;
    const int p = add_body(s, pl, 0);
    add_body(s, make_body("Fall", body_kind::moon, 2e15, 8e3, make_orbit(3.0 * c::R_earth)), p);
    add_body(s, make_body("Stay", body_kind::moon, 3e22, 1500e3, make_orbit(50 * c::R_earth)), p);
    return s;
}
} // namespace

TEST_CASE("tides_figure: a(t) in km per moon, log axes, Roche and stability limits") {
    const tides_report r = analyze_tides(falling_and_staying());
    const auto fig = report::tides_figure(r);
    REQUIRE(std::holds_alternative<report::time_series_data>(fig));
    const auto& d = std::get<report::time_series_data>(fig);
    CHECK(d.log_x_);
    CHECK(d.x_label_ == "t (yr)");
    // The t = 0 row cannot be drawn on a log axis and is left out.
    const auto& ev = r.evolutions.at(0);
    REQUIRE(d.t_.size() == ev.series.size() - 1);
    CHECK(d.t_.front() > 0);
    CHECK(d.t_.back() == doctest::Approx(2e9));
    REQUIRE(d.panels_.size() == 1);
    const auto& panel = d.panels_[0];
    CHECK(panel.log_y_);
    REQUIRE(panel.series_.size() == 2);
    CHECK(panel.series_[0].label_ == "Fall");
    // The last sample of the surviving moon is its final a, in km.
    CHECK(panel.series_[1].y_.back() == doctest::Approx(ev.moons[1].a_end_m / 1e3));
    // The falling moon's line stops: its later samples are NaN.
    CHECK(ev.moons[0].fate == moon_fate::roche_limit);
    CHECK(std::isnan(panel.series_[0].y_.back()));
    // Every limit appears once as a horizontal line at its value in km.
    for (const auto& m : ev.moons)
        for (double lim : {m.inner_limit_m / 1e3, m.stability_limit_m / 1e3}) {
            int found = 0;
            for (const auto& o : panel.overlays_)
                if (o.shape_ == report::overlay_curve::shape::horizontal &&
                    std::abs(o.value_ / lim - 1) < 0.005)
                    ++found;
            CHECK(found == 1);
        }
}

TEST_CASE("tides_figure: planets without moons show their day instead") {
    resolved_system s = falling_and_staying();
    s.bodies.resize(2);
    s.bodies[1].children.clear();
    const auto fig = report::tides_figure(analyze_tides(s));
    const auto& d = std::get<report::time_series_data>(fig);
    REQUIRE(d.panels_.size() == 1);
    CHECK(d.panels_[0].y_label_ == "day of Orm (h)");
    CHECK(d.panels_[0].series_[0].y_.front() > 15.0); // the day lengthens from 15 h
}
