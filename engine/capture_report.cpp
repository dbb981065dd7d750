// Text summary of a capture experiment.
#include "engine/capture_report.hpp"

#include "engine/constants.hpp"

#include <algorithm>
#include <fmt/format.h>

namespace moonwright {

namespace {

std::string format_duration(double s) {
    if (s >= constants::year) return fmt::format("{:.3g} yr", s / constants::year);
    if (s >= constants::day) return fmt::format("{:.3g} d", s / constants::day);
    return fmt::format("{:.3g} h", s / constants::hour);
}
std::string percent(const proportion_interval& p) {
    return fmt::format("{:.1f}% (95% Wilson interval {:.1f}% to {:.1f}%)", 100 * p.estimate,
                       100 * p.lower, 100 * p.upper);
}
double median(std::vector<double> v) {
    std::sort(v.begin(), v.end());
    const std::size_t n = v.size();
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

} // namespace

std::string render_capture_summary(const capture_options& o, const capture_result& r) {
    const capture_summary& s = r.summary;
    const capture_setting& st = r.setting;
    std::string out = fmt::format(
        "Capture experiment: planet {}, mechanism {}, {} trials, span {} per trial, seed {}\n"
        "Hill radius {:.4g} km, planet radius {:.4g} km, planet period {}\n",
        o.planet, capture_mechanism_name(o.mechanism), s.trials, format_duration(st.span_s), o.seed,
        st.hill_radius_m / 1e3, st.planet_radius_m / 1e3, format_duration(st.planet_period_s));
    out +=
        fmt::format("Captured (bound inside the Hill sphere for one orbit or more): {} of {}: {}\n",
                    s.captured, s.trials, percent(s.capture_probability));
    out += fmt::format("Kept (still captured at the end of the span):            {} of {}: {}\n",
                       s.kept, s.trials, percent(s.keep_probability));
    if (!s.durations_s.empty()) {
        const auto [lo, hi] = std::minmax_element(s.durations_s.begin(), s.durations_s.end());
        out += fmt::format("Capture durations: {} episodes, median {}, shortest {}, longest {}\n",
                           s.durations_s.size(), format_duration(median(s.durations_s)),
                           format_duration(*lo), format_duration(*hi));
    } else {
        out += "Capture durations: no capture episode\n";
    }
    if (!s.final_a_hill.empty()) {
        const std::size_t n = s.final_a_hill.size();
        out += fmt::format(
            "Final orbits of kept members ({}): a median {:.3g} RH (range {:.3g} to {:.3g} RH), "
            "e median {:.3g}, i median {:.1f} deg; prograde {:.0f}%, retrograde {:.0f}%\n",
            n, median(s.final_a_hill),
            *std::min_element(s.final_a_hill.begin(), s.final_a_hill.end()),
            *std::max_element(s.final_a_hill.begin(), s.final_a_hill.end()), median(s.final_e),
            median(s.final_i_rad) / constants::deg,
            100.0 * static_cast<double>(s.kept_prograde) / static_cast<double>(n),
            100.0 * static_cast<double>(s.kept_retrograde) / static_cast<double>(n));
    }
    if (o.pair)
        out +=
            fmt::format("Pairs split: {} of {}; exchanges (one member kept, the pair split): {}\n",
                        s.pair_splits, s.trials, s.exchanges);
    if (s.failed + s.unresolved > 0)
        out += fmt::format("Trials not finished: {} failed (non-finite state), {} unresolved "
                           "(work budget exhausted)\n",
                           s.failed, s.unresolved);
    out += fmt::format("Impacts on the planet: {}; collisions with moons: {}\n", s.impacts,
                       s.moon_collisions);
    if (!st.moon_names.empty()) {
        double max_de = 0;
        for (const auto& t : r.trials) max_de = std::max(max_de, t.moon_max_de);
        out += fmt::format("Existing moons ({}): hit {} times, unbound at the end in {} cases, "
                           "largest eccentricity change {:.3g}\n",
                           fmt::join(st.moon_names, ", "), s.moons_hit, s.moons_unbound, max_de);
    }
    return out;
}

} // namespace moonwright
