// Spin-axis precession constant and Laplace-Lagrange secular frequencies; sources are named
// beside each declaration in spin_axis.hpp.
#include "engine/spin_axis.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>

namespace moonwright {

namespace c = constants;

double laplace_coefficient(double s, int j, double alpha) {
    if (!(alpha >= 0 && alpha < 1))
        throw input_error({}, "laplace_coefficient.alpha", std::to_string(alpha), "0 <= alpha < 1");
    auto trapezoid = [&](int n) {
        double sum = 0;
        for (int k = 0; k < n; ++k) {
            const double psi = c::two_pi * k / n;
            sum += std::cos(j * psi) / std::pow(1 - 2 * alpha * std::cos(psi) + alpha * alpha, s);
        }
        return 2.0 * sum / n; // (1/pi) * (2 pi / n) * sum
    };
    int n = 64;
    double prev = trapezoid(n);
    for (; n < (1 << 22); n *= 2) {
        const double next = trapezoid(2 * n);
        if (std::abs(next - prev) <= 1e-14 * std::max(std::abs(next), 1e-300)) return next;
        prev = next;
    }
    return prev;
}

secular_frequencies laplace_lagrange(double star_mass, std::span<const secular_planet> planets) {
    const size_t np = planets.size();
    if (np == 0) throw input_error({}, "secular.planets", "none", "at least one planet");
    for (size_t j = 0; j < np; ++j) {
        if (!(planets[j].a_m > 0))
            throw input_error({}, "secular.planet[" + planets[j].name + "].a",
                              std::to_string(planets[j].a_m), "a positive semi-major axis");
        for (size_t k = 0; k < j; ++k)
            if (planets[j].a_m == planets[k].a_m)
                throw input_error({}, "secular.planet[" + planets[j].name + "].a",
                                  std::to_string(planets[j].a_m),
                                  "a semi-major axis different from " + planets[k].name + "'s");
    }
    Eigen::MatrixXd a =
        Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(np), static_cast<Eigen::Index>(np));
    Eigen::MatrixXd b = a;
    for (size_t j = 0; j < np; ++j) {
        const auto& pj = planets[j];
        const double nj = pj.mean_motion_rad_s
                              ? *pj.mean_motion_rad_s
                              : std::sqrt(c::G * (star_mass + pj.mass_kg) / std::pow(pj.a_m, 3));
        const auto jj = static_cast<Eigen::Index>(j);
        for (size_t k = 0; k < np; ++k) {
            if (k == j) continue;
            const auto& pk = planets[k];
            const auto kk = static_cast<Eigen::Index>(k);
            // Murray & Dermott eq. 7.128-7.131: alpha < 1 always; abar = 1 for an inner
            // perturber, alpha for an outer one.
            const bool outer = pk.a_m > pj.a_m;
            const double al = outer ? pj.a_m / pk.a_m : pk.a_m / pj.a_m;
            const double abar = outer ? al : 1.0;
            const double f = nj / 4 * pk.mass_kg / (star_mass + pj.mass_kg) * al * abar;
            const double b1 = laplace_coefficient(1.5, 1, al);
            const double b2 = laplace_coefficient(1.5, 2, al);
            a(jj, jj) += f * b1;
            a(jj, kk) = -f * b2;
            b(jj, jj) += -f * b1;
            b(jj, kk) = f * b1;
        }
    }
    secular_frequencies out;
    auto eig = [](const Eigen::MatrixXd& m) {
        Eigen::EigenSolver<Eigen::MatrixXd> es(m, false);
        std::vector<double> v;
        for (Eigen::Index i = 0; i < es.eigenvalues().size(); ++i)
            v.push_back(es.eigenvalues()(i).real());
        std::sort(v.begin(), v.end());
        return v;
    };
    out.g_rad_s = eig(a);
    out.f_rad_s = eig(b);
    for (size_t j = 0; j < np; ++j) {
        std::vector<double> ra, rb;
        for (size_t k = 0; k < np; ++k) {
            ra.push_back(a(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(k)));
            rb.push_back(b(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(k)));
        }
        out.a_matrix.push_back(ra);
        out.b_matrix.push_back(rb);
    }
    return out;
}

precession_result precession_constant(double spin_rate, double j2, double c_norm,
                                      double planet_mass, double planet_radius,
                                      double obliquity_rad, double star_mass, double a_planet,
                                      double e_planet, std::span<const precession_moon> moons) {
    precession_result r;
    const double omega = std::abs(spin_rate);
    const double ep = std::pow(1 - e_planet * e_planet, 1.5);
    const double star_term = c::G * star_mass / (std::pow(a_planet, 3) * ep);
    r.laplace_radius_m = std::pow(j2 * planet_radius * planet_radius * std::pow(a_planet, 3) * ep *
                                      planet_mass / star_mass,
                                  0.2);
    double q = 0, l = 0, distant = 0;
    for (const auto& m : moons) {
        if (m.a_m < r.laplace_radius_m) {
            const double x = m.mass_kg / planet_mass * std::pow(m.a_m / planet_radius, 2);
            const double n = std::sqrt(c::G * (planet_mass + m.mass_kg) / std::pow(m.a_m, 3));
            q += 0.5 * x;
            l += x * n / omega;
            r.close_moons.push_back(m.name);
        } else {
            const double si = std::sin(m.i_rad);
            distant += c::G * m.mass_kg * (1 - 1.5 * si * si) /
                       (std::pow(m.a_m, 3) * std::pow(1 - m.e * m.e, 1.5));
            r.distant_moons.push_back(m.name);
        }
    }
    r.alpha_no_moons_rad_s = 1.5 / omega * (j2 / c_norm) * star_term;
    r.alpha_rad_s = 1.5 / omega * ((j2 + q) / (c_norm + l)) * (star_term + distant);
    const double co = std::cos(obliquity_rad);
    r.rate_rad_s = r.alpha_rad_s * co;
    r.rate_no_moons_rad_s = r.alpha_no_moons_rad_s * co;
    return r;
}

std::vector<obliquity_warning> obliquity_resonances(const precession_result& p,
                                                    const secular_frequencies& s, double fraction) {
    std::vector<obliquity_warning> out;
    double fmax = 0;
    for (double f : s.f_rad_s) fmax = std::max(fmax, std::abs(f));
    for (size_t k = 0; k < s.f_rad_s.size(); ++k) {
        const double f = s.f_rad_s[k];
        if (std::abs(f) <= 1e-9 * fmax) continue; // the zero mode (invariable plane)
        for (bool with : {true, false}) {
            const double rate = std::abs(with ? p.rate_rad_s : p.rate_no_moons_rad_s);
            const double gap = std::abs(rate - std::abs(f)) / std::abs(f);
            if (gap <= fraction) out.push_back({static_cast<int>(k), f, rate, gap, with});
        }
    }
    return out;
}

} // namespace moonwright
