// `moonwright map`: a 1-D scan or 2-D grid of short runs over design fields, saved to HDF5
// and optionally drawn as a heat map or line plot with the analytic limits overlaid.
#include "engine/error.hpp"
#include "engine/stability_map.hpp"
#include "tools/commands.hpp"
#include "tools/report/map_figure.hpp"

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fmt/format.h>

namespace moonwright::cli {

int command_map(const map_command_options& o) {
    const source_location command_line{"<command line>"};
    const design d = read_design(o.design_path, o.stdin_format);
    map_options opts;
    for (const auto& text : o.vary) opts.axes.push_back(parse_map_axis(text, d));
    if (opts.axes.empty() || opts.axes.size() > 2)
        throw input_error(command_line, "--vary", fmt::format("{} given", opts.axes.size()),
                          "one --vary (a scan) or two (a grid)");
    opts.orbits = o.orbits;
    opts.jobs = o.jobs;
    opts.seed = o.seed.value_or(d.seed.value_or(1));

    report::figure_format format = report::figure_format::png;
    if (!o.plot_path.empty()) {
        const std::string ext = std::filesystem::path(o.plot_path).extension().string();
        if (ext == ".svg")
            format = report::figure_format::svg;
        else if (ext != ".png")
            throw input_error(command_line, "--plot", o.plot_path, "a file ending in .png or .svg");
        if (o.plot_path == o.out_path)
            throw input_error(command_line, "--plot", o.plot_path, "a path other than --out");
    }

    const auto start = std::chrono::steady_clock::now();
    const map_result r = run_stability_map(d, opts);
    const double wall =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    write_map_file(o.out_path, d, opts, r, o.version);

    if (!o.plot_path.empty()) {
        const std::string title =
            fmt::format("{}: {} orbits of {}", d.name, o.orbits, r.reference_body);
        report::write_figure(report::map_figure(r, title,
                                                o.show == "megno" ? report::map_quantity::megno
                                                                  : report::map_quantity::survival),
                             {o.plot_path, format, 1000, 700});
    }

    std::size_t alive = 0;
    for (int s : r.survived) alive += static_cast<std::size_t>(s);
    std::string text =
        fmt::format("{} cells, {} survived {} orbits of {} ({:.4g} yr each).\n", r.cells(), alive,
                    o.orbits, r.reference_body, r.reference_period_s / (365.25 * 86400.0));
    if (r.edge)
        text += fmt::format("Empirical edge: {:.4g} {} (last surviving {:.4g}, first failing "
                            "{:.4g}).\n",
                            *r.edge, r.axes[0].unit, *r.last_surviving, *r.first_failing);
    if (r.references.moon && r.references.metres_per_unit > 0)
        text += fmt::format("Domingos, Winter & Yokoyama (2006) limit: {:.4g} {}.\n",
                            r.references.stability_m / r.references.metres_per_unit,
                            r.axes[0].field == "a" ? r.axes[0].unit : r.axes[1].unit);
    if (!o.quiet)
        text += fmt::format("Wall time {:.2f} s with {} jobs. Results: {}\n", wall, opts.jobs,
                            o.out_path);
    std::fwrite(text.data(), 1, text.size(), stdout);
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
