// Numerical minimum distance between two Keplerian ellipses (grid search + local refinement).
#include "engine/orbit_distance.hpp"

#include "engine/constants.hpp"

#include <algorithm>
#include <cmath>
#include <utility>
#include <vector>

namespace moonwright {

namespace {

/// Perifocal unit vectors P and Q (Murray & Dermott eqs. 2.118-2.122).
struct frame {
    std::array<double, 3> p, q;
    double a, e, b_over_a;
};

frame make_frame(const resolved_orbit& o) {
    const double cn = std::cos(o.node_rad), sn = std::sin(o.node_rad);
    const double cw = std::cos(o.peri_rad), sw = std::sin(o.peri_rad);
    const double ci = std::cos(o.i_rad), si = std::sin(o.i_rad);
    frame f;
    f.p = {cn * cw - sn * sw * ci, sn * cw + cn * sw * ci, sw * si};
    f.q = {-cn * sw - sn * cw * ci, -sn * sw + cn * cw * ci, cw * si};
    f.a = o.a_m;
    f.e = o.e;
    f.b_over_a = std::sqrt(1.0 - o.e * o.e);
    return f;
}

std::array<double, 3> position(const frame& f, double ecc_anomaly) {
    const double x = f.a * (std::cos(ecc_anomaly) - f.e);
    const double y = f.a * f.b_over_a * std::sin(ecc_anomaly);
    return {x * f.p[0] + y * f.q[0], x * f.p[1] + y * f.q[1], x * f.p[2] + y * f.q[2]};
}

double distance2(const frame& f1, const frame& f2, double e1, double e2) {
    const auto r1 = position(f1, e1);
    const auto r2 = position(f2, e2);
    const double dx = r1[0] - r2[0], dy = r1[1] - r2[1], dz = r1[2] - r2[2];
    return dx * dx + dy * dy + dz * dz;
}

} // namespace

std::array<double, 3> orbit_position_at_eccentric_anomaly(const resolved_orbit& o,
                                                          double ecc_anomaly) {
    return position(make_frame(o), ecc_anomaly);
}

double minimum_orbit_distance(const resolved_orbit& o1, const resolved_orbit& o2) {
    const frame f1 = make_frame(o1), f2 = make_frame(o2);
    constexpr int n = 72;
    const double h = constants::two_pi / n;
    std::vector<double> grid(static_cast<size_t>(n * n));
    auto at = [&](int i, int j) -> double& {
        return grid[static_cast<size_t>(((i + n) % n) * n + (j + n) % n)];
    };
    // Positions on both grids first: n + n trigonometric evaluations instead of n * n.
    std::vector<std::array<double, 3>> p1(n), p2(n);
    for (int i = 0; i < n; ++i) {
        p1[static_cast<size_t>(i)] = position(f1, i * h);
        p2[static_cast<size_t>(i)] = position(f2, i * h);
    }
    for (int i = 0; i < n; ++i)
        for (int j = 0; j < n; ++j) {
            const auto& r1 = p1[static_cast<size_t>(i)];
            const auto& r2 = p2[static_cast<size_t>(j)];
            const double dx = r1[0] - r2[0], dy = r1[1] - r2[1], dz = r1[2] - r2[2];
            at(i, j) = dx * dx + dy * dy + dz * dz;
        }

    double best = grid[0];
    for (double v : grid) best = std::min(best, v);
    // Refine from the lowest local minima of the periodic grid (two ellipses can come close at
    // up to four places; a plateau, such as two coplanar circles, would make every point one,
    // so only the eight lowest are refined).
    std::vector<std::pair<double, int>> minima;
    for (int i = 0; i < n; ++i) {
        for (int j = 0; j < n; ++j) {
            const double v = at(i, j);
            bool local_min = true;
            for (int di = -1; di <= 1 && local_min; ++di)
                for (int dj = -1; dj <= 1; ++dj)
                    if ((di != 0 || dj != 0) && at(i + di, j + dj) < v) {
                        local_min = false;
                        break;
                    }
            if (local_min) minima.emplace_back(v, i * n + j);
        }
    }
    std::sort(minima.begin(), minima.end());
    if (minima.size() > 8) minima.resize(8);
    for (const auto& [v, ij] : minima) {
        // Pattern search on d^2 with 8 directions: robust for the narrow, tilted valleys of
        // nearly tangent orbits, where Newton steps can run away.
        double x = (ij / n) * h, y = (ij % n) * h, fx = v, step = h;
        // A successful move doubles the step (up to the grid spacing), so a long crawl along a
        // valley stays cheap; the iteration cap is a safety net only.
        for (int iter = 0; step > 1e-10 && iter < 20000; ++iter) {
            double bx = x, by = y, bf = fx;
            for (int di = -1; di <= 1; ++di)
                for (int dj = -1; dj <= 1; ++dj) {
                    if (di == 0 && dj == 0) continue;
                    const double cx = x + di * step, cy = y + dj * step;
                    const double cf = distance2(f1, f2, cx, cy);
                    if (cf < bf) bx = cx, by = cy, bf = cf;
                }
            if (bf < fx) {
                x = bx, y = by, fx = bf;
                step = std::min(2.0 * step, h);
            } else {
                step *= 0.5;
            }
        }
        best = std::min(best, fx);
    }
    return std::sqrt(best);
}

} // namespace moonwright
