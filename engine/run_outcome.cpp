// The verdict rules (documented in docs/run.md) and their plain-words reasons.
#include "engine/run_outcome.hpp"

#include "engine/constants.hpp"

#include <cmath>
#include <fmt/format.h>

namespace moonwright {

const char* event_name(event_kind k) {
    switch (k) {
    case event_kind::close_approach:
        return "close_approach";
    case event_kind::collision:
        return "collision";
    case event_kind::parent_impact:
        return "parent_impact";
    case event_kind::roche_crossing:
        return "roche_crossing";
    case event_kind::escape:
        return "escape";
    case event_kind::numerical_failure:
        return "numerical_failure";
    }
    return "unknown";
}

bool is_destructive(event_kind) {
    return true;
}

const char* verdict_name(verdict_kind k) {
    switch (k) {
    case verdict_kind::stable:
        return "stable";
    case verdict_kind::chaotic:
        return "chaotic";
    case verdict_kind::unstable:
        return "unstable";
    case verdict_kind::unreliable:
        return "unreliable";
    }
    return "unknown";
}

namespace {

std::string years(double t_s) {
    const double y = t_s / constants::year;
    if (y >= 1e6) return fmt::format("{:.3g} Myr", y / 1e6);
    if (y >= 1.0) return fmt::format("{:.4g} yr", y);
    return fmt::format("{:.3g} d", t_s / constants::day);
}

/// A count for people: "2.257", "688.2", "10,000", "1,234,567".
std::string count_words(double x) {
    if (!(x >= 1000) || !std::isfinite(x)) return fmt::format("{:.4g}", x);
    std::string digits = fmt::format("{:.0f}", x), out;
    for (std::size_t k = 0; k < digits.size(); ++k) {
        if (k > 0 && (digits.size() - k) % 3 == 0) out += ',';
        out += digits[k];
    }
    return out;
}

std::string orbits(const run_outcome& o, double t_s) {
    if (o.reference_period_s <= 0) return "";
    return fmt::format(" ({} orbits of {})", count_words(t_s / o.reference_period_s),
                       o.reference_body);
}

std::string name_of(const run_outcome& o, int index) {
    if (index >= 0 && static_cast<size_t>(index) < o.body_names.size())
        return o.body_names[static_cast<size_t>(index)];
    return fmt::format("#{}", index);
}

std::string event_words(const run_outcome& o, const run_event& ev) {
    const std::string a = name_of(o, ev.body), b = name_of(o, ev.other);
    switch (ev.kind) {
    case event_kind::close_approach:
        return fmt::format("{} and {} came within {:.4g} km of each other (threshold {:.4g} km)", a,
                           b, ev.distance_m / 1e3, ev.threshold_m / 1e3);
    case event_kind::collision:
        return fmt::format("{} and {} collided ({:.4g} km apart, radii sum {:.4g} km)", a, b,
                           ev.distance_m / 1e3, ev.threshold_m / 1e3);
    case event_kind::parent_impact:
        return fmt::format("{} struck {}", a, b);
    case event_kind::roche_crossing:
        return fmt::format("{} went inside the Roche limit of {} ({:.4g} km, limit {:.4g} km)", a,
                           b, ev.distance_m / 1e3, ev.threshold_m / 1e3);
    case event_kind::escape:
        return fmt::format("{} escaped from {} ({:.4g} km away, beyond {:.4g} km)", a, b,
                           ev.distance_m / 1e3, ev.threshold_m / 1e3);
    case event_kind::numerical_failure:
        return fmt::format("the integration failed: {}", ev.detail);
    }
    return ev.detail;
}

/// The kind of an event in words for a headline.
const char* event_words_short(event_kind k) {
    switch (k) {
    case event_kind::close_approach:
        return "a close approach";
    case event_kind::collision:
        return "a collision";
    case event_kind::parent_impact:
        return "an impact on the parent";
    case event_kind::roche_crossing:
        return "a Roche-limit crossing";
    case event_kind::escape:
        return "an escape";
    case event_kind::numerical_failure:
        return "a numerical failure";
    }
    return "an event";
}

} // namespace

verdict decide_verdict(const run_outcome& o, const verdict_thresholds& limits) {
    verdict v;
    const std::string span = years(o.simulated_s) + orbits(o, o.simulated_s);

    // Unreliable first: nothing else can be trusted when the integration error is too large.
    const bool failed = !o.events.empty() && o.events.front().kind == event_kind::numerical_failure;
    if (failed || o.max_energy_error > limits.energy_unreliable) {
        v.kind = verdict_kind::unreliable;
        v.headline = "The integration is not accurate enough to judge this design.";
        if (failed) v.reasons.push_back(event_words(o, o.events.front()));
        v.reasons.push_back(
            fmt::format("The largest relative energy error was {:.2g}, above the bound {:.2g}.",
                        o.max_energy_error, limits.energy_unreliable));
        v.reasons.push_back("Try a smaller step (--step), or the adaptive Gauss-Radau integrator "
                            "(--integrator radau) for close encounters.");
        return v;
    }

    if (!o.events.empty()) {
        const run_event& first = o.events.front();
        v.kind = verdict_kind::unstable;
        v.headline = fmt::format("Unstable: {} after {}{}.", event_words_short(first.kind),
                                 years(first.t_s), orbits(o, first.t_s));
        v.reasons.push_back(fmt::format("First event at {}{}: {}.", years(first.t_s),
                                        orbits(o, first.t_s), event_words(o, first)));
        for (size_t k = 1; k < o.events.size() && k < 5; ++k)
            v.reasons.push_back(fmt::format("Then at {}: {}.", years(o.events[k].t_s),
                                            event_words(o, o.events[k])));
        return v;
    }

    const bool chaotic = o.mean_megno && *o.mean_megno > limits.megno_regular;
    double worst_e = 0;
    std::string worst_name;
    for (const auto& b : o.bodies)
        if (b.e_max > worst_e) worst_e = b.e_max, worst_name = b.name;

    if (chaotic) {
        v.kind = verdict_kind::chaotic;
        v.headline = fmt::format("Chaotic: nothing broke in {}, but the orbits are chaotic.", span);
        v.reasons.push_back(fmt::format(
            "The mean MEGNO reached {:.3g}; regular motion stays near 2 (threshold {:.3g}).",
            *o.mean_megno, limits.megno_regular));
        if (o.lyapunov_time_s)
            v.reasons.push_back(fmt::format(
                "The Lyapunov time is about {}, {:.3g} times shorter than the span: the details "
                "of this run cannot be predicted that far, and a longer run may still break.",
                years(*o.lyapunov_time_s), o.simulated_s / *o.lyapunov_time_s));
    } else {
        v.kind = verdict_kind::stable;
        v.headline = fmt::format("Stable for {}.", span);
        v.reasons.push_back(
            fmt::format("No close approach, collision, Roche crossing or escape in {}.", span));
        if (o.mean_megno)
            v.reasons.push_back(fmt::format(
                "The mean MEGNO is {:.3g}, close to 2: the motion is regular.", *o.mean_megno));
    }
    if (!worst_name.empty())
        v.reasons.push_back(
            fmt::format("The largest eccentricity reached was {:.3g} ({}).", worst_e, worst_name));
    if (worst_e >= limits.e_bounded && v.kind == verdict_kind::stable) {
        v.kind = verdict_kind::chaotic;
        v.headline =
            fmt::format("Not bounded: an eccentricity reached {:.3g} in {}.", worst_e, span);
    }
    v.reasons.push_back(
        fmt::format("Energy was conserved to {:.2g} (relative).", o.max_energy_error));
    return v;
}

} // namespace moonwright
