// Controlled Boost.Odeint steppers (Bulirsch–Stoer, Runge–Kutta–Fehlberg 7(8)) on the same
// second-order systems as the Gauss–Radau integrator. The only file that includes odeint.
//
// Methods: Bulirsch–Stoer extrapolation of the modified midpoint rule (Bulirsch & Stoer 1966,
// Numer. Math. 8, 1; odeint's order and step control follow Hairer, Norsett & Wanner, Solving
// ODEs I, Sect. II.9); Runge–Kutta–Fehlberg 7(8) (Fehlberg 1968, NASA TR R-287), which
// propagates the 8th-order solution and uses the 7th-order one for the error estimate.
#include "integrators/odeint_steppers.hpp"

#include "engine/error.hpp"
#include "integrators/initial_step.hpp"

#include <boost/numeric/odeint.hpp>

#include <cmath>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <utility>

namespace moonwright {

namespace odeint = boost::numeric::odeint;

namespace {

using state_type = std::vector<double>;
using bs_stepper = odeint::bulirsch_stoer<state_type>;
using rkf78_stepper = odeint::runge_kutta_fehlberg78<state_type>;
using rkf78_controlled = odeint::controlled_runge_kutta<rkf78_stepper>;

/// odeint's own limit of consecutive rejected steps in integrate_adaptive (failed_step_checker).
constexpr int max_rejections = 500;

} // namespace

struct odeint_integrator::impl {
    second_order_system system;
    odeint_method method;
    odeint_options options;
    std::size_t m = 0; ///< 3 n
    state_type y;      ///< (q, v), 6 n doubles, allocated once
    double dt = 0.0;   ///< the step proposed last [s]
    std::size_t evaluations = 0;
    std::function<void(double, double*, double*)> observer;
    std::optional<bs_stepper> bs;
    std::optional<rkf78_controlled> rkf;
    rkf78_stepper rkf_fixed;

    /// y' = (v, f(t, q, v)) without allocating: q and v are the two halves of y.
    struct rhs {
        impl* self;
        void operator()(const state_type& yy, state_type& dydt, double t) const {
            const std::size_t mm = self->m;
            for (std::size_t i = 0; i < mm; ++i) dydt[i] = yy[mm + i];
            self->system.acceleration(t, yy.data(), yy.data() + mm, dydt.data() + mm);
            ++self->evaluations;
        }
    };

    void check_finite(double t) const {
        for (std::size_t i = 0; i < y.size(); ++i)
            if (!std::isfinite(y[i])) {
                std::ostringstream msg;
                msg << "odeint integrator: non-finite state (component " << i << ") at t = " << t
                    << " s";
                throw numerical_error(msg.str());
            }
    }

    template <class Stepper>
    std::size_t run_controlled(Stepper& stepper, double& t, double t_end) {
        // The loop of odeint::integrate_adaptive (controlled_stepper_tag), written out so that
        // the proposed step survives between calls and the last step lands on t_end exactly.
        std::size_t steps = 0;
        int rejections = 0;
        const rhs f{this};
        while ((t_end - t) * dt > 0.0) {
            const double remaining = t_end - t;
            const bool last = std::fabs(dt) >= std::fabs(remaining);
            const double natural = dt;
            double h = last ? remaining : dt;
            const odeint::controlled_step_result res = stepper.try_step(f, y, t, h);
            if (res == odeint::success) {
                ++steps;
                rejections = 0;
                check_finite(t);
                if (last) {
                    t = t_end;
                    dt = natural; // the shortened step says nothing about the natural one
                    if (observer) observer(t, y.data(), y.data() + m);
                    break;
                }
                dt = h;
                if (observer) observer(t, y.data(), y.data() + m);
            } else {
                dt = h; // a rejection is control flow: retry with the smaller step
                if (++rejections > max_rejections || t + dt == t) {
                    std::ostringstream msg;
                    msg << "odeint integrator: " << rejections << " rejected steps in a row, step "
                        << dt << " s at t = " << t << " s";
                    throw numerical_error(msg.str());
                }
            }
        }
        return steps;
    }

    std::size_t run_fixed(double& t, double t_end) {
        std::size_t steps = 0;
        const rhs f{this};
        const double h = std::copysign(options.fixed_step, t_end - t);
        while (t != t_end) {
            const double remaining = t_end - t;
            const bool last = std::fabs(h) >= std::fabs(remaining) * (1.0 - 1e-12);
            rkf_fixed.do_step(f, y, t, last ? remaining : h);
            ++steps;
            t = last ? t_end : t + h;
            check_finite(t);
            if (observer) observer(t, y.data(), y.data() + m);
        }
        return steps;
    }
};

odeint_integrator::odeint_integrator(second_order_system system, odeint_method method,
                                     odeint_options options)
    : impl_(std::make_unique<impl>()) {
    if (system.n == 0) throw std::invalid_argument("odeint_integrator: the system has no vectors");
    if (!system.acceleration)
        throw std::invalid_argument("odeint_integrator: the system has no acceleration function");
    if (options.fixed_step != 0.0 && method != odeint_method::rkf78)
        throw std::invalid_argument("odeint_integrator: fixed_step is only for rkf78");
    impl_->system = std::move(system);
    impl_->method = method;
    impl_->options = options;
    impl_->m = 3 * impl_->system.n;
    impl_->y.assign(2 * impl_->m, 0.0);
    impl_->dt = options.initial_step;
    // Error scale per component: abs + rel |y_i| (Hairer, Norsett & Wanner, Solving ODEs I,
    // Eq. II.4.10), i.e. odeint's a_x = 1, a_dxdt = 0. With odeint's default a_dxdt = 1 the
    // term dt |dv/dt| loosens the velocity tolerance many times over at close approaches.
    if (method == odeint_method::bulirsch_stoer) {
        impl_->bs.emplace(options.abs_tolerance, options.rel_tolerance, 1.0, 0.0);
    } else {
        impl_->rkf.emplace(rkf78_controlled::error_checker_type(options.abs_tolerance,
                                                                options.rel_tolerance, 1.0, 0.0));
    }
}

odeint_integrator::~odeint_integrator() = default;
odeint_integrator::odeint_integrator(odeint_integrator&&) noexcept = default;
odeint_integrator& odeint_integrator::operator=(odeint_integrator&&) noexcept = default;

double odeint_integrator::next_step() const noexcept {
    return impl_->dt;
}
std::size_t odeint_integrator::evaluations() const noexcept {
    return impl_->evaluations;
}

std::size_t odeint_integrator::integrate(double& t, std::vector<double>& q, std::vector<double>& v,
                                         double t_end) {
    impl& s = *impl_;
    if (q.size() != s.m || v.size() != s.m)
        throw std::invalid_argument("odeint_integrator: q and v must hold 3 n doubles each");
    if (t == t_end) return 0;
    std::copy(q.begin(), q.end(), s.y.begin());
    std::copy(v.begin(), v.end(), s.y.begin() + static_cast<std::ptrdiff_t>(s.m));
    s.check_finite(t);
    std::size_t steps = 0;
    try {
        if (s.options.fixed_step != 0.0) {
            steps = s.run_fixed(t, t_end);
        } else {
            if (s.dt == 0.0) {
                state_type dydt(s.y.size()); // once per integrator
                impl::rhs{&s}(s.y, dydt, t);
                s.dt = estimate_initial_step(s.system.n, s.y.data(), s.y.data() + s.m,
                                             dydt.data() + s.m);
            }
            s.dt = std::copysign(s.dt, t_end - t);
            // A fresh Bulirsch–Stoer order/step history at every call, so that a run resumed
            // from a checkpoint takes the same steps (see save_state).
            if (s.bs) s.bs->reset();
            steps = s.bs ? s.run_controlled(*s.bs, t, t_end) : s.run_controlled(*s.rkf, t, t_end);
        }
    } catch (const odeint::odeint_error& e) {
        throw numerical_error(std::string("odeint integrator: ") + e.what());
    }
    std::copy(s.y.begin(), s.y.begin() + static_cast<std::ptrdiff_t>(s.m), q.begin());
    std::copy(s.y.begin() + static_cast<std::ptrdiff_t>(s.m), s.y.end(), v.begin());
    return steps;
}

void odeint_integrator::set_step_observer(std::function<void(double, double*, double*)> observer) {
    impl_->observer = std::move(observer);
}

void odeint_integrator::save_state(std::vector<double>& out) const {
    out.push_back(impl_->dt);
    out.push_back(static_cast<double>(impl_->evaluations));
}

bool odeint_integrator::load_state(const std::vector<double>& data, std::size_t& pos) {
    if (pos > data.size() || data.size() - pos < 2) return false;
    impl_->dt = data[pos];
    impl_->evaluations = static_cast<std::size_t>(data[pos + 1]);
    pos += 2;
    return true;
}

} // namespace moonwright
