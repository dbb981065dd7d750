// Kaplan–Meier and Wilson intervals against published values.
#include "engine/statistics.hpp"

#include <cstdio>
#include <doctest/doctest.h>

using namespace moonwright;

TEST_CASE("Kaplan-Meier: the 6-MP remission data (Freireich et al. 1963)") {
    // Weeks in remission of the 21 patients on 6-mercaptopurine; censored times marked false.
    // The product-limit estimates below are the textbook ones for this data set (Klein &
    // Moeschberger, Survival Analysis, Table 4.1A; Kleinbaum & Klein, Survival Analysis: A
    // Self-Learning Text, ch. 2), from memory: S = 0.857, 0.807, 0.753, 0.690, 0.627, 0.538,
    // 0.448 at 6, 7, 10, 13, 16, 22, 23 weeks; the median is 23 weeks.
    const std::vector<survival_observation> data = {
        {6, true},   {6, true},   {6, true},   {6, false},  {7, true},   {9, false},  {10, true},
        {10, false}, {11, false}, {13, true},  {16, true},  {17, false}, {19, false}, {20, false},
        {22, true},  {23, true},  {25, false}, {32, false}, {32, false}, {34, false}, {35, false}};
    const auto km = kaplan_meier(data);
    const double times[] = {6, 7, 10, 13, 16, 22, 23};
    const double expected[] = {0.857, 0.807, 0.753, 0.690, 0.627, 0.538, 0.448};
    REQUIRE(km.steps.size() == 7);
    for (int k = 0; k < 7; ++k) {
        CAPTURE(times[k]);
        CHECK(km.steps[static_cast<size_t>(k)].time == times[k]);
        CHECK(km.steps[static_cast<size_t>(k)].survival ==
              doctest::Approx(expected[k]).epsilon(0.002));
    }
    REQUIRE(km.median);
    CHECK(*km.median == 23);
    CHECK(km.steps[0].at_risk == 21);
    // Greenwood's standard error at 6 weeks: 0.857 sqrt(3 / (21 * 18)) = 0.076 (same tables).
    CHECK(km.steps[0].std_error == doctest::Approx(0.076).epsilon(0.01));
    CHECK(km.at(5.9) == 1.0);
    CHECK(km.at(12) == doctest::Approx(0.753).epsilon(0.002));
    // The 12 censored remissions (the data above), kept in time order for the censoring marks.
    const std::vector<double> censored = {6, 9, 10, 11, 17, 19, 20, 25, 32, 32, 34, 35};
    CHECK(km.censored == censored);
}

TEST_CASE("Kaplan-Meier without events stays at 1 and has no median") {
    const auto km = kaplan_meier({{1, false}, {2, false}});
    CHECK(km.steps.empty());
    CHECK(km.censored == std::vector<double>{1, 2});
    CHECK_FALSE(km.median);
    CHECK(km.at(10) == 1.0);
}

TEST_CASE("Wilson interval edges") {
    const auto none = wilson_interval(0, 0);
    CHECK(none.lower == 0.0);
    CHECK(none.upper == 1.0);
    const auto all = wilson_interval(10, 10);
    CHECK(all.upper == doctest::Approx(1.0));
    CHECK(all.lower < 1.0);
}
