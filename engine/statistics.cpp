// Wilson intervals and Kaplan–Meier estimates; sources in statistics.hpp.
#include "engine/statistics.hpp"

#include <algorithm>
#include <cmath>

namespace moonwright {

proportion_interval wilson_interval(std::size_t k, std::size_t n, double z) {
    if (n == 0) return {0.0, 0.0, 1.0};
    const double nn = static_cast<double>(n);
    const double p = static_cast<double>(k) / nn;
    const double z2 = z * z;
    const double centre = (p + z2 / (2 * nn)) / (1 + z2 / nn);
    const double half = z / (1 + z2 / nn) * std::sqrt(p * (1 - p) / nn + z2 / (4 * nn * nn));
    return {p, std::max(0.0, centre - half), std::min(1.0, centre + half)};
}

double survival_curve_estimate::at(double t) const {
    double s = 1.0;
    for (const auto& step : steps) {
        if (step.time > t) break;
        s = step.survival;
    }
    return s;
}

survival_curve_estimate kaplan_meier(std::vector<survival_observation> obs) {
    std::sort(obs.begin(), obs.end(),
              [](const survival_observation& a, const survival_observation& b) {
                  return a.time < b.time || (a.time == b.time && a.event && !b.event);
              });
    survival_curve_estimate out;
    std::size_t at_risk = obs.size();
    double s = 1.0, greenwood = 0.0;
    std::size_t k = 0;
    while (k < obs.size()) {
        const double t = obs[k].time;
        std::size_t events = 0, leaving = 0;
        while (k < obs.size() && obs[k].time == t) {
            if (obs[k].event)
                ++events;
            else
                out.censored.push_back(t);
            ++leaving, ++k;
        }
        if (events > 0) {
            const double d = static_cast<double>(events), r = static_cast<double>(at_risk);
            s *= 1.0 - d / r;
            if (r > d) greenwood += d / (r * (r - d));
            survival_step step;
            step.time = t;
            step.at_risk = at_risk;
            step.events = events;
            step.survival = s;
            step.std_error = s * std::sqrt(greenwood);
            // Log-log interval: exp(-exp(log(-log S) +- z sigma)), sigma^2 = greenwood / log(S)^2.
            if (s > 0 && s < 1) {
                const double sigma = std::sqrt(greenwood) / std::abs(std::log(s));
                const double c = std::log(-std::log(s));
                step.lower = std::exp(-std::exp(c + 1.959963984540054 * sigma));
                step.upper = std::exp(-std::exp(c - 1.959963984540054 * sigma));
            } else {
                step.lower = step.upper = s;
            }
            out.steps.push_back(step);
            if (!out.median && s <= 0.5) out.median = t;
        }
        at_risk -= leaving;
    }
    return out;
}

} // namespace moonwright
