// Wraps the generic adaptive integrators around the N-body force model.
#include "integrators/adaptive_integrator.hpp"

#include "engine/error.hpp"

#include <cmath>

namespace moonwright {

adaptive_integrator::adaptive_integrator(const nbody_system& sys, std::vector<extra_force> extra,
                                         method m, const integrator_options& options)
    : method_(m), options_(options),
      model_(std::make_shared<const force_model>(sys, std::move(extra))) {
    relative_state_of(sys, q_, v_);
    t_ = sys.t_;
    build(false, options.step);
}

void adaptive_integrator::build(bool tangent, double dt) {
    second_order_system ode;
    if (!tangent) {
        ode = relative_system(model_);
    } else {
        const std::size_t n = model_->size();
        const bool vdep = model_->velocity_dependent();
        auto var = std::make_shared<const force_variations>(*model_);
        ode.n = 2 * n;
        ode.velocity_dependent = vdep;
        ode.acceleration = [m = model_, var, n, vdep](double t, const double* q, const double* v,
                                                      double* a) {
            m->relative_accelerations(t, q, v, a);
            var->relative(t, q, v, q + 3 * n, vdep ? v + 3 * n : nullptr, a + 3 * n);
        };
    }
    radau_.reset();
    odeint_.reset();
    if (method_ == method::gauss_radau) {
        gauss_radau_options o;
        o.epsilon = options_.radau_epsilon;
        o.initial_step = dt;
        radau_.emplace(std::move(ode), o);
        if (tangent)
            radau_->set_step_observer([this](double t, double* q, double* v) { on_step(t, q, v); });
    } else {
        odeint_options o;
        // Positions are metres and velocities m/s: the absolute part only matters at zero.
        o.rel_tolerance = options_.tolerance;
        o.abs_tolerance = options_.tolerance;
        o.initial_step = dt;
        odeint_.emplace(std::move(ode),
                        method_ == method::bulirsch_stoer ? odeint_method::bulirsch_stoer
                                                          : odeint_method::rkf78,
                        o);
        if (tangent)
            odeint_->set_step_observer(
                [this](double t, double* q, double* v) { on_step(t, q, v); });
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

checkpoint_kind adaptive_integrator::kind() const noexcept {
    switch (method_) {
    case method::gauss_radau:
        return checkpoint_kind::gauss_radau;
    case method::bulirsch_stoer:
        return checkpoint_kind::bulirsch_stoer;
    case method::rkf78:
        return checkpoint_kind::rkf78;
    }
    return checkpoint_kind::gauss_radau;
}

void adaptive_integrator::integrate(double t_end) {
    if (t_end <= t_) return;
    steps_ += radau_ ? radau_->integrate(t_, q_, v_, t_end) : odeint_->integrate(t_, q_, v_, t_end);
}

void adaptive_integrator::on_step(double t, double* q, double* v) {
    // MEGNO after every accepted step; the tangent vector sits behind the state.
    const std::size_t n = model_->size();
    const int e = megno_.update(t, megno_norm(scales_, n, q + 3 * n, v + 3 * n));
    if (e == 0) return;
    for (std::size_t i = 3 * n; i < 6 * n; ++i) {
        q[i] = std::ldexp(q[i], e);
        v[i] = std::ldexp(v[i], e);
    }
    if (radau_) radau_->scale_components(3 * n, 3 * n, std::ldexp(1.0, e));
}

bool adaptive_integrator::enable_megno(std::uint64_t seed) {
    const std::size_t n = model_->size();
    q_.resize(3 * n);
    v_.resize(3 * n);
    scales_ = megno_scales_of(n, q_.data(), v_.data());
    build(true, radau_ ? radau_->next_step() : odeint_->next_step());
    q_.resize(6 * n);
    v_.resize(6 * n);
    megno_initial_deviation(seed, scales_, n, q_.data() + 3 * n, v_.data() + 3 * n);
    megno_on_ = true;
    megno_.start(t_, megno_norm(scales_, n, q_.data() + 3 * n, v_.data() + 3 * n));
    return true;
}

megno_reading adaptive_integrator::megno() const {
    if (!megno_on_) return {};
    return megno_.reading();
}

void adaptive_integrator::relative_state(std::vector<double>& q, std::vector<double>& v) {
    const auto m = static_cast<std::ptrdiff_t>(3 * model_->size());
    q.assign(q_.begin(), q_.begin() + m);
    v.assign(v_.begin(), v_.begin() + m);
}

void adaptive_integrator::set_relative_state(double t, const std::vector<double>& q,
                                             const std::vector<double>& v) {
    const std::size_t m = 3 * model_->size();
    if (q.size() != m || v.size() != m)
        throw numerical_error("adaptive_integrator: state needs 3 doubles per body");
    t_ = t;
    std::copy(q.begin(), q.end(), q_.begin());
    std::copy(v.begin(), v.end(), v_.begin());
    if (radau_) radau_->reset();
}

std::vector<double> adaptive_integrator::save_checkpoint() const {
    checkpoint_writer w(kind(), model_->size());
    w.put(t_);
    w.put_count(steps_);
    w.put_flag(megno_on_);
    w.put_vector(q_);
    w.put_vector(v_);
    if (megno_on_) {
        save_megno_scales(scales_, w);
        megno_.save(w);
    }
    std::vector<double> inner;
    if (radau_)
        radau_->save_state(inner);
    else
        odeint_->save_state(inner);
    w.put_vector(inner);
    return w.finish();
}

void adaptive_integrator::load_checkpoint(const std::vector<double>& data) {
    const std::size_t n = model_->size();
    checkpoint_reader r(data, kind(), n);
    const double t = r.get("t");
    const std::size_t steps = r.get_count("steps");
    const bool on = r.get_flag("megno");
    std::vector<double> q, v;
    r.get_vector("q", q, (on ? 6 : 3) * n);
    r.get_vector("v", v, (on ? 6 : 3) * n);
    megno_scales sc;
    megno_accumulator acc;
    if (on) {
        sc = load_megno_scales(r, n);
        acc.load(r);
    }
    // The stepper's part has a size fixed by the method and the system: check it before
    // anything changes, so a checkpoint that does not fit leaves the integrator as it was.
    const std::size_t m = (on ? 6 : 3) * n;
    const std::size_t inner_size = method_ == method::gauss_radau ? gauss_radau::saved_size(m) : 2;
    std::vector<double> inner;
    r.get_vector("stepper", inner, inner_size);
    r.finish();
    build(on, 0.0);
    std::size_t pos = 0;
    if (radau_)
        (void)radau_->load_state(inner, pos);
    else
        (void)odeint_->load_state(inner, pos);
    t_ = t;
    steps_ = steps;
    q_ = std::move(q);
    v_ = std::move(v);
    megno_on_ = on;
    scales_ = sc;
    megno_ = acc;
}

} // namespace moonwright
