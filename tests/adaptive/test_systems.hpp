// Small Newtonian test systems (G = 1 unless stated) for the adaptive-integrator tests.
#pragma once

#include "integrators/second_order_system.hpp"

#include <cmath>
#include <cstddef>
#include <vector>

namespace moonwright::testing {

/// Point masses in barycentric (or any inertial) coordinates: a_i = sum_j G m_j r_ij / |r_ij|^3
/// (Newton's law of gravitation).
inline second_order_system newtonian_nbody(std::vector<double> masses, double G = 1.0) {
    second_order_system s;
    s.n = masses.size();
    s.acceleration = [m = std::move(masses), G](double, const double* q, const double*, double* a) {
        const std::size_t n = m.size();
        for (std::size_t i = 0; i < 3 * n; ++i) a[i] = 0.0;
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t j = i + 1; j < n; ++j) {
                const double dx = q[3 * j] - q[3 * i], dy = q[3 * j + 1] - q[3 * i + 1],
                             dz = q[3 * j + 2] - q[3 * i + 2];
                const double r2 = dx * dx + dy * dy + dz * dz;
                const double inv3 = G / (r2 * std::sqrt(r2));
                a[3 * i] += m[j] * inv3 * dx;
                a[3 * i + 1] += m[j] * inv3 * dy;
                a[3 * i + 2] += m[j] * inv3 * dz;
                a[3 * j] -= m[i] * inv3 * dx;
                a[3 * j + 1] -= m[i] * inv3 * dy;
                a[3 * j + 2] -= m[i] * inv3 * dz;
            }
    };
    return s;
}

/// Total energy (kinetic + potential) of point masses, summed in long double.
inline double nbody_energy(const std::vector<double>& m, const std::vector<double>& q,
                           const std::vector<double>& v, double G = 1.0) {
    long double e = 0.0L;
    const std::size_t n = m.size();
    for (std::size_t i = 0; i < n; ++i) {
        const long double v2 = static_cast<long double>(v[3 * i]) * v[3 * i] +
                               static_cast<long double>(v[3 * i + 1]) * v[3 * i + 1] +
                               static_cast<long double>(v[3 * i + 2]) * v[3 * i + 2];
        e += 0.5L * m[i] * v2;
        for (std::size_t j = i + 1; j < n; ++j) {
            const long double dx = static_cast<long double>(q[3 * j]) - q[3 * i];
            const long double dy = static_cast<long double>(q[3 * j + 1]) - q[3 * i + 1];
            const long double dz = static_cast<long double>(q[3 * j + 2]) - q[3 * i + 2];
            e -= static_cast<long double>(G) * m[i] * m[j] / std::sqrt(dx * dx + dy * dy + dz * dz);
        }
    }
    return static_cast<double>(e);
}

/// One body around a fixed centre with gravitational parameter mu: a = -mu r / |r|^3.
inline second_order_system kepler_problem(double mu = 1.0) {
    second_order_system s;
    s.n = 1;
    s.acceleration = [mu](double, const double* q, const double*, double* a) {
        const double r2 = q[0] * q[0] + q[1] * q[1] + q[2] * q[2];
        const double f = -mu / (r2 * std::sqrt(r2));
        a[0] = f * q[0];
        a[1] = f * q[1];
        a[2] = f * q[2];
    };
    return s;
}

/// Position and velocity on a planar Kepler ellipse (semi-major axis a, eccentricity e, pericentre
/// on +x at t = 0) at time t, from Kepler's equation M = E - e sin E solved by Newton's method
/// (Murray & Dermott 1999, Solar System Dynamics, Sect. 2.4-2.6).
inline void kepler_state(double mu, double a, double e, double t, double* q, double* v) {
    const double n = std::sqrt(mu / (a * a * a));
    const double M = std::remainder(n * t, 2.0 * 3.141592653589793238462643383279502884);
    double E = e < 0.8 ? M : (M >= 0 ? 3.14159265358979 : -3.14159265358979);
    for (int it = 0; it < 50; ++it) {
        const double dE = (E - e * std::sin(E) - M) / (1.0 - e * std::cos(E));
        E -= dE;
        if (std::fabs(dE) < 1e-17) break;
    }
    const double cE = std::cos(E), sE = std::sin(E);
    const double b = a * std::sqrt(1.0 - e * e);
    q[0] = a * (cE - e);
    q[1] = b * sE;
    q[2] = 0.0;
    const double Edot = n / (1.0 - e * cE);
    v[0] = -a * sE * Edot;
    v[1] = b * cE * Edot;
    v[2] = 0.0;
}

/// Two bodies of masses m1, m2 on a relative ellipse (a, e) starting at pericentre, in
/// barycentric coordinates (G = 1).
inline void two_body_start(double m1, double m2, double a, double e, std::vector<double>& q,
                           std::vector<double>& v) {
    double r[3], w[3];
    kepler_state(m1 + m2, a, e, 0.0, r, w);
    const double f1 = -m2 / (m1 + m2), f2 = m1 / (m1 + m2);
    q.assign(6, 0.0);
    v.assign(6, 0.0);
    for (int k = 0; k < 3; ++k) {
        q[k] = f1 * r[k];
        v[k] = f1 * w[k];
        q[3 + k] = f2 * r[k];
        v[3 + k] = f2 * w[k];
    }
}

/// Least-squares slope of y against x.
inline double fitted_slope(const std::vector<double>& x, const std::vector<double>& y) {
    double mx = 0.0, my = 0.0;
    for (std::size_t i = 0; i < x.size(); ++i) {
        mx += x[i];
        my += y[i];
    }
    mx /= static_cast<double>(x.size());
    my /= static_cast<double>(x.size());
    double sxy = 0.0, sxx = 0.0;
    for (std::size_t i = 0; i < x.size(); ++i) {
        sxy += (x[i] - mx) * (y[i] - my);
        sxx += (x[i] - mx) * (x[i] - mx);
    }
    return sxy / sxx;
}

} // namespace moonwright::testing
