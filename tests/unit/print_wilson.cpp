// Prints Wilson 95% intervals for the SciPy cross-check (tests/unit/check_wilson.py).
#include "engine/statistics.hpp"

#include <cstdio>

int main() {
    const std::size_t cases[][2] = {{0, 1},    {1, 1},    {3, 10},   {7, 20},     {50, 100},
                                    {99, 100}, {0, 1000}, {1, 1000}, {517, 1000}, {4, 4000}};
    for (const auto& c : cases) {
        const auto w = moonwright::wilson_interval(c[0], c[1]);
        std::printf("%zu %zu %.17g %.17g\n", c[0], c[1], w.lower, w.upper);
    }
    return 0;
}
