// The tidal fate in a run's verdict.
#include "engine/tidal_verdict.hpp"

#include "engine/check_tidal_fate.hpp"
#include "engine/error.hpp"
#include "engine/tides_report.hpp"

#include <exception>

namespace moonwright {

void add_tidal_fate(verdict& v, const resolved_system& sys) {
    std::vector<tidal_fate_event> fates;
    try {
        fates = tides_fate_events(analyze_tides(sys, check_tidal_options()));
    } catch (const std::exception& e) {
        v.reasons.push_back(std::string("The long-term tidal fate could not be computed: ") +
                            e.what());
        return;
    }
    const tidal_fate_event* doom = nullptr;
    for (const auto& f : fates) {
        v.reasons.push_back("Tides: " + f.line + ".");
        const bool lost =
            f.kind == "roche_limit" || f.kind == "planet_surface" || f.kind == "stability_limit";
        if (lost && (doom == nullptr || f.time_s < doom->time_s)) doom = &f;
    }
    if (doom != nullptr && (v.kind == verdict_kind::stable || v.kind == verdict_kind::chaotic)) {
        std::string head = v.headline;
        if (!head.empty() && head.back() == '.') head.pop_back();
        v.headline = head + ", but " + doom->line + ".";
    }
}

} // namespace moonwright
