// MEGNO accumulation, tangent metric and initial deviation.
#include "integrators/megno_accumulator.hpp"

#include "engine/random.hpp"

#include <algorithm>
#include <cmath>

namespace moonwright {

megno_scales megno_scales_of(const jacobi_tree& tree, const double* rel_q, const double* rel_v) {
    const std::size_t n = tree.size();
    std::vector<double> rj(3 * n), vj(3 * n);
    tree.relative_to_jacobi(rel_q, rj.data());
    tree.relative_to_jacobi(rel_v, vj.data());
    megno_scales s{HUGE_VAL, HUGE_VAL};
    for (std::size_t k = 1; k < n; ++k) {
        const double* r = &rj[3 * k];
        const double rn = std::sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]);
        s.length = std::min(s.length, rn);
        s.time = std::min(s.time, std::sqrt(rn * rn * rn / tree.kepler_gm(k)));
    }
    if (!(s.length > 0) || !std::isfinite(s.length)) s.length = 1;
    if (!(s.time > 0) || !std::isfinite(s.time)) s.time = 1;
    return s;
}

void megno_initial_deviation(std::uint64_t seed, const megno_scales& scales, std::size_t n,
                             double* dq, double* dv) {
    rng g(seed);
    std::fill(dq, dq + 3 * n, 0.0);
    std::fill(dv, dv + 3 * n, 0.0);
    double sum = 0;
    for (std::size_t i = 3; i < 3 * n; ++i) {
        dq[i] = g.normal();
        dv[i] = g.normal();
        sum += dq[i] * dq[i] + dv[i] * dv[i];
    }
    if (!(sum > 0)) return;
    const double f = scales.length / std::sqrt(sum);
    for (std::size_t i = 3; i < 3 * n; ++i) {
        dq[i] *= f;
        dv[i] *= f / scales.time;
    }
}

double megno_norm(const megno_scales& scales, std::size_t n, const double* dq, const double* dv) {
    double sq = 0, sv = 0;
    for (std::size_t i = 3; i < 3 * n; ++i) {
        sq += dq[i] * dq[i];
        sv += dv[i] * dv[i];
    }
    return std::sqrt(sq + scales.time * scales.time * sv);
}

void megno_accumulator::start(double t0, double norm0) noexcept {
    t0_ = t0;
    tau_prev_ = 0;
    norm_prev_ = norm0;
    norm0_ = norm0;
    y_ = mean_y_ = log_growth_ = 0;
}

int megno_accumulator::update(double t, double norm) noexcept {
    const double tau = t - t0_;
    if (!(tau > tau_prev_)) return 0;
    const double dl = std::log(norm / norm_prev_);
    y_ = (tau_prev_ / tau) * y_ + 2 * dl;
    mean_y_ = (tau_prev_ * mean_y_ + (tau - tau_prev_) * y_) / tau;
    log_growth_ += dl;
    tau_prev_ = tau;
    norm_prev_ = norm;
    // Keep |delta| within 2^(+-256) of its start: the ratios are scale free.
    const int e = std::ilogb(norm / norm0_);
    if (std::abs(e) < 256) return 0;
    norm_prev_ = std::ldexp(norm, -e);
    return -e;
}

megno_reading megno_accumulator::reading() const noexcept {
    megno_reading m;
    m.t0 = t0_;
    m.log_growth = log_growth_;
    if (tau_prev_ > 0) {
        m.y = y_;
        m.mean_y = mean_y_;
    } else {
        m.y = 0;
        m.mean_y = 0;
    }
    return m;
}

void megno_accumulator::save(checkpoint_writer& w) const {
    for (double x : {t0_, tau_prev_, norm_prev_, norm0_, y_, mean_y_, log_growth_}) w.put(x);
}

void megno_accumulator::load(checkpoint_reader& r) {
    t0_ = r.get("megno.t0");
    tau_prev_ = r.get("megno.tau");
    norm_prev_ = r.get("megno.norm");
    norm0_ = r.get("megno.norm0");
    y_ = r.get("megno.y");
    mean_y_ = r.get("megno.mean_y");
    log_growth_ = r.get("megno.log_growth");
}

} // namespace moonwright
