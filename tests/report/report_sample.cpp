// Writes a sample HTML report (verdict, tables, three figures) for the browser test.
#include "tests/report/sample_figures.hpp"
#include "tools/report/html_report.hpp"

#include <exception>
#include <iostream>

using namespace moonwright::report;

int main(int argc, char** argv) {
    if (argc != 2) {
        std::cerr << "usage: report_sample OUT.html\n";
        return 2;
    }
    try {
        html_report page("Tarrow b: will its moons last?", "design tarrow.toml, seed 7 (invented)");
        page.verdict({"unstable",
                      "Orl escapes after 41 200 years of a 100 000-year run.",
                      {"Orl passed 3 Hill radii of Tarrow b at t = 41 200 yr.",
                       "Vessa stayed regular: MEGNO 1.98 at the end (2 means regular)."},
                      verdict_tone::bad});
        html_section summary("summary", "Design & derived quantities");
        summary.paragraph("Two moons around one gas giant; values are invented <for testing>.")
            .key_values("Tarrow b", {{"mass", "1.9e27", "kg", ""},
                                     {"radius", "70 000", "km", "equatorial"},
                                     {"Hill radius", "95", "planet radii", "at pericentre"}})
            .findings("Findings of the check",
                      {{severity::warning, "moon 'Orl'", "a = 34 Rp is 0.36 of the Hill radius"},
                       {severity::note, "moon 'Vessa'", "spin period not given: assumed locked"}});
        data_table events{"Events",
                          {"time", "kind", "bodies", "distance"},
                          {"yr", "", "", "planet radii"},
                          {{"41200", "escape", "Orl", "285"}}};
        summary.table(events);
        page.section(summary);
        html_section figs("figures", "Figures");
        figs.figure("fig-orbits", samples::orbit_sample(), "Orbits seen from above, to scale.",
                    "Top-down view of two orbits inside the Hill sphere", 900, 900)
            .figure("fig-elements", samples::time_series_sample(),
                    "Semi-major axis, eccentricity and MEGNO against time.",
                    "Three stacked line plots against time")
            .figure("fig-map", samples::heat_map_sample(),
                    "Survival time over a and e with the analytic limit.",
                    "Heat map of survival time with limit curves");
        page.section(figs);
        page.footer("moonwright sample report (test data)");
        page.write(argv[1]);
    } catch (const std::exception& e) {
        std::cerr << "report_sample: " << e.what() << "\n";
        return 1;
    }
    return 0;
}
