// MEGNO accumulation, tangent metric and initial deviation.
#include "integrators/megno_accumulator.hpp"

#include "engine/random.hpp"

#include <algorithm>
#include <cmath>

namespace moonwright {

megno_scales megno_scales_of(std::size_t n, const double* q, const double* v) {
    megno_scales s;
    s.length.assign(n, 1.0);
    s.speed.assign(n, 1.0);
    for (std::size_t k = 1; k < n; ++k) {
        const double* r = q + 3 * k;
        const double* w = v + 3 * k;
        const double rn = std::sqrt(r[0] * r[0] + r[1] * r[1] + r[2] * r[2]);
        const double wn = std::sqrt(w[0] * w[0] + w[1] * w[1] + w[2] * w[2]);
        if (rn > 0 && std::isfinite(rn)) s.length[k] = rn;
        if (wn > 0 && std::isfinite(wn)) s.speed[k] = wn;
    }
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
    const double f = 1 / std::sqrt(sum);
    for (std::size_t i = 3; i < 3 * n; ++i) {
        dq[i] *= f * scales.length[i / 3];
        dv[i] *= f * scales.speed[i / 3];
    }
}

double megno_norm(const megno_scales& scales, std::size_t n, const double* dq, const double* dv) {
    double s = 0;
    for (std::size_t k = 1; k < n; ++k) {
        const double* a = dq + 3 * k;
        const double* b = dv + 3 * k;
        const double l = scales.length[k], u = scales.speed[k];
        s += (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]) / (l * l) +
             (b[0] * b[0] + b[1] * b[1] + b[2] * b[2]) / (u * u);
    }
    return std::sqrt(s);
}

void save_megno_scales(const megno_scales& scales, checkpoint_writer& w) {
    w.put_vector(scales.length);
    w.put_vector(scales.speed);
}

megno_scales load_megno_scales(checkpoint_reader& r, std::size_t n) {
    megno_scales s;
    r.get_vector("megno.length", s.length, n);
    r.get_vector("megno.speed", s.speed, n);
    return s;
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
