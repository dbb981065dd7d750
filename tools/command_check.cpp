// `moonwright check`: the analytic design check.
#include "engine/design_check.hpp"
#include "engine/design_loader.hpp"
#include "engine/resolved_system.hpp"
#include "tools/commands.hpp"

#include <cstdio>
#include <iostream>
#include <iterator>

namespace moonwright::cli {

design read_design(const std::string& path, const std::string& stdin_format) {
    if (path != "-") return load_design_file(path);
    std::string text{std::istreambuf_iterator<char>(std::cin), std::istreambuf_iterator<char>()};
    return parse_design(text, stdin_format == "json" ? design_format::json : design_format::toml,
                        "<stdin>");
}

int command_check(const check_options& o) {
    const design d = read_design(o.design_path, o.stdin_format);
    const resolved_system sys = resolve(d, o.seed);
    const check_report report = run_check(sys);
    const std::string out = o.json ? render_check_json(report) : render_check_text(report);
    std::fwrite(out.data(), 1, out.size(), stdout);
    return static_cast<int>(report.has_errors() ? exit_code::rule_broken : exit_code::ok);
}

} // namespace moonwright::cli
