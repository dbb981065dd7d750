// Ensemble statistics: binomial proportions with Wilson intervals and Kaplan–Meier survival
// curves with censoring.
#pragma once

#include <cstddef>
#include <optional>
#include <vector>

namespace moonwright {

struct proportion_interval {
    double estimate = 0; ///< k / n
    double lower = 0, upper = 0;
};

/// Wilson score interval for k successes in n trials (Wilson 1927, JASA 22, 209) at the normal
/// quantile z (1.959963984540054 for 95%). n = 0 gives [0, 1].
proportion_interval wilson_interval(std::size_t k, std::size_t n, double z = 1.959963984540054);

/// One subject: the time it was followed and whether the event happened then (false: censored,
/// i.e. still surviving when observation stopped).
struct survival_observation {
    double time = 0;
    bool event = false;
};

struct survival_step {
    double time = 0;         ///< an event time
    std::size_t at_risk = 0; ///< subjects still followed just before it
    std::size_t events = 0;  ///< events at this time
    double survival = 1;     ///< S(t) just after this time
    double std_error = 0;    ///< Greenwood's standard error of S(t)
    double lower = 0,
           upper = 1; ///< 95% pointwise interval (log-log transform, Kalbfleisch & Prentice)
};

struct survival_curve_estimate {
    std::vector<survival_step> steps; ///< one per distinct event time, in time order
    std::optional<double> median;     ///< smallest time with S(t) <= 0.5, when reached
    std::vector<double> censored;     ///< times of the censored subjects, in time order (plots)
    /// S(t) at any time (right-continuous step function).
    [[nodiscard]] double at(double t) const;
};

/// Kaplan–Meier product-limit estimate (Kaplan & Meier 1958, JASA 53, 457). At tied times,
/// events count before censorings (the usual convention).
survival_curve_estimate kaplan_meier(std::vector<survival_observation> observations);

} // namespace moonwright
