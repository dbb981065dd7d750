// The integrator registry: built-in factories selected by name.
#include "integrators/integrator.hpp"

#include "engine/error.hpp"
#include "integrators/adaptive_integrator.hpp"
#include "integrators/wisdom_holman.hpp"

#include <map>
#include <mutex>

namespace moonwright {

namespace {

struct registry {
    std::mutex mutex;
    std::map<std::string, integrator_factory> table;
    registry() {
        // Built-in integrators.
        table["wh"] = [](const nbody_system& sys, std::vector<extra_force> extra,
                         const integrator_options& o) -> std::unique_ptr<integrator> {
            wh_options w;
            w.step = o.step;
            w.period_fraction = o.period_fraction;
            w.pericentre_fraction = o.pericentre_fraction;
            w.corrector_order = o.corrector_order;
            w.modified_kick = o.modified_kick;
            return std::make_unique<wisdom_holman>(sys, std::move(extra), w);
        };
        const auto adaptive = [](adaptive_integrator::method m) {
            return [m](const nbody_system& sys, std::vector<extra_force> extra,
                       const integrator_options& o) -> std::unique_ptr<integrator> {
                return std::make_unique<adaptive_integrator>(sys, std::move(extra), m, o);
            };
        };
        table["radau"] = adaptive(adaptive_integrator::method::gauss_radau);
        table["bs"] = adaptive(adaptive_integrator::method::bulirsch_stoer);
        table["rkf78"] = adaptive(adaptive_integrator::method::rkf78);
    }
};

registry& the_registry() {
    static registry r;
    return r;
}

} // namespace

std::vector<double> integrator::save_checkpoint() const {
    throw numerical_error("integrator '" + std::string(name()) + "' cannot save checkpoints");
}

void integrator::load_checkpoint(const std::vector<double>&) {
    throw numerical_error("integrator '" + std::string(name()) + "' cannot load checkpoints");
}

void register_integrator(const std::string& name, integrator_factory factory) {
    registry& r = the_registry();
    const std::lock_guard<std::mutex> lock(r.mutex);
    r.table[name] = std::move(factory);
}

std::vector<std::string> integrator_names() {
    registry& r = the_registry();
    const std::lock_guard<std::mutex> lock(r.mutex);
    std::vector<std::string> names;
    for (const auto& [name, f] : r.table) names.push_back(name);
    return names;
}

std::unique_ptr<integrator> make_integrator(const std::string& name, const nbody_system& sys,
                                            std::vector<extra_force> extra,
                                            const integrator_options& options) {
    integrator_factory f;
    std::string known;
    {
        registry& r = the_registry();
        const std::lock_guard<std::mutex> lock(r.mutex);
        const auto it = r.table.find(name);
        if (it != r.table.end()) f = it->second;
        for (const auto& [n, g] : r.table) known += (known.empty() ? "" : ", ") + n;
    }
    if (!f) {
        throw input_error(source_location{"<options>", 0, 0}, "integrator", "'" + name + "'",
                          "one of: " + known);
    }
    return f(sys, std::move(extra), options);
}

} // namespace moonwright
