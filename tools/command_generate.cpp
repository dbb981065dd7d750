// `moonwright generate`: plausible designs from a seed as JSON lines or TOML files.
#include "engine/design_generator.hpp"
#include "engine/error.hpp"
#include "tools/commands.hpp"

#include <cstdio>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <iostream>
#include <unistd.h>

namespace moonwright::cli {

int command_generate(const generate_options& o) {
    const auto kind = parse_generator_kind(o.kind);
    if (!kind)
        throw input_error(source_location{"<options>"}, "--kind", o.kind, "rocky, giant or mixed");
    if (!o.toml_dir.empty()) {
        for (const auto& path : write_generated_toml_files(o.toml_dir, o.seed, 0, o.count, *kind))
            std::fprintf(stdout, "%s\n", path.c_str());
        return static_cast<int>(exit_code::ok);
    }
    if (o.out.empty() || o.out == "-") {
        write_generated_json_lines(std::cout, o.seed, 0, o.count, *kind);
        std::cout.flush();
        if (!std::cout) throw io_error("cannot write to standard output");
        return static_cast<int>(exit_code::ok);
    }
    // A file appears whole or not at all: written beside, then renamed over.
    const std::string tmp = fmt::format("{}.tmp{}", o.out, ::getpid());
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        if (!out) throw io_error(fmt::format("cannot write '{}'", o.out));
        try {
            write_generated_json_lines(out, o.seed, 0, o.count, *kind);
        } catch (...) {
            std::error_code ec;
            std::filesystem::remove(tmp, ec);
            throw;
        }
    }
    std::error_code ec;
    std::filesystem::rename(tmp, o.out, ec);
    if (ec) {
        std::filesystem::remove(tmp, ec);
        throw io_error(fmt::format("cannot write '{}': {}", o.out, ec.message()));
    }
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
