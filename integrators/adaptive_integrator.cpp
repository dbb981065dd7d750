// Wraps the generic adaptive integrators around the N-body force model.
#include "integrators/adaptive_integrator.hpp"

namespace moonwright {

adaptive_integrator::adaptive_integrator(const nbody_system& sys, std::vector<extra_force> extra,
                                         method m, const integrator_options& options)
    : method_(m), model_(std::make_shared<const force_model>(sys, std::move(extra))) {
    relative_state_of(sys, q_, v_);
    t_ = sys.t_;
    second_order_system ode = relative_system(model_);
    if (m == method::gauss_radau) {
        gauss_radau_options o;
        o.epsilon = options.radau_epsilon;
        o.initial_step = options.step;
        radau_.emplace(std::move(ode), o);
    } else {
        odeint_options o;
        // Positions are metres and velocities m/s: the absolute part only matters at zero.
        o.rel_tolerance = options.tolerance;
        o.abs_tolerance = options.tolerance;
        o.initial_step = options.step;
        odeint_.emplace(
            std::move(ode),
            m == method::bulirsch_stoer ? odeint_method::bulirsch_stoer : odeint_method::rkf78, o);
    }
}

std::string_view adaptive_integrator::name() const noexcept {
    switch (method_) {
    case method::gauss_radau:
        return "radau";
    case method::bulirsch_stoer:
        return "bs";
    case method::rkf78:
        return "rkf78";
    }
    return "adaptive";
}

void adaptive_integrator::integrate(double t_end) {
    if (t_end <= t_) return;
    steps_ += radau_ ? radau_->integrate(t_, q_, v_, t_end) : odeint_->integrate(t_, q_, v_, t_end);
}

void adaptive_integrator::relative_state(std::vector<double>& q, std::vector<double>& v) {
    q = q_;
    v = v_;
}

void adaptive_integrator::set_relative_state(double t, const std::vector<double>& q,
                                             const std::vector<double>& v) {
    t_ = t;
    q_ = q;
    v_ = v;
    if (radau_) radau_->reset();
}

} // namespace moonwright
