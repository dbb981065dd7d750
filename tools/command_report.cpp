// `moonwright report`: one self-contained HTML page (and optionally PNG figures) from a result
// file; the page builder is chosen by the kind of result (/run@command; a survey file by its
// root attribute format).
#include "engine/error.hpp"
#include "engine/result_file.hpp"
#include "tools/commands.hpp"
#include "tools/report/capture_page.hpp"
#include "tools/report/map_report.hpp"
#include "tools/report/run_report.hpp"
#include "tools/report/survey_page.hpp"
#include "tools/report/tides_page.hpp"

#include <cstdio>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <functional>
#include <memory>
#include <unistd.h>

namespace moonwright::cli {

namespace {

using page_builder = std::function<report::report_page(const result_file&)>;

/// One kind of result file and the page builder for it. To add a page for a new kind, write
/// tools/report/<kind>_report.{hpp,cpp} with a reader (input_error on a bad file) and a page
/// builder, and fill in its row here (docs/report.md).
struct result_kind {
    const char* command; ///< the value of /run@command
    page_builder build;  ///< empty: the kind is known but has no page yet
};

const result_kind result_kinds[] = {
    {"run",
     [](const result_file& f) { return report::build_run_page(report::read_run_result(f)); }},
    {"tides",
     [](const result_file& f) { return report::build_tides_page(report::read_tides_result(f)); }},
    {"survey",
     [](const result_file& f) { return report::build_survey_page(report::read_survey_result(f)); }},
    {"map",
     [](const result_file& f) { return report::build_map_page(report::read_map_result(f)); }},
    {"capture",
     [](const result_file& f) {
         return report::build_capture_page(report::read_capture_result(f));
     }},
};

/// Opens the input and reads its kind; every failure here is bad input (exit 2).
std::string read_kind(const std::string& path, std::unique_ptr<result_file>& file) {
    const source_location where{path};
    std::error_code ec;
    if (!std::filesystem::exists(path, ec))
        throw input_error(where, "there is no such result file");
    if (std::filesystem::is_directory(path, ec))
        throw input_error(where, "this is a folder, not a result file");
    try {
        file = std::make_unique<result_file>(path, result_file::mode::read);
    } catch (const io_error& e) {
        throw input_error(where,
                          std::string("not an HDF5 result file of moonwright (") + e.what() + ")");
    }
    try {
        // A survey file keeps its kind in the root attribute format (docs/survey.md).
        if ((!file->exists("/run") || !file->has_attribute("/run", "command")) &&
            file->has_attribute("/", "format") &&
            file->string_attribute("/", "format") == "moonwright survey")
            return "survey";
        if (!file->exists("/run") || !file->has_attribute("/run", "command"))
            throw input_error(where, "this HDF5 file has no /run@command: it was not written by "
                                     "moonwright");
        return file->string_attribute("/run", "command");
    } catch (const io_error& e) {
        throw input_error(where, std::string("cannot read the result kind: ") + e.what());
    }
}

/// Writes bytes to `path` through a temporary file in the same folder and a rename.
void write_atomically(const std::filesystem::path& path, const std::vector<std::uint8_t>& bytes) {
    const std::filesystem::path tmp =
        path.string() + fmt::format(".tmp{}", static_cast<long>(::getpid()));
    std::error_code ec;
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        out.write(reinterpret_cast<const char*>(bytes.data()),
                  static_cast<std::streamsize>(bytes.size()));
        out.close();
        if (!out) {
            std::filesystem::remove(tmp, ec);
            throw io_error(fmt::format("cannot write figure '{}'", path.string()));
        }
    }
    std::filesystem::rename(tmp, path, ec);
    if (ec) {
        std::error_code ignored;
        std::filesystem::remove(tmp, ignored);
        throw io_error(fmt::format("cannot write figure '{}': {}", path.string(), ec.message()));
    }
}

std::string default_output(const std::string& input) {
    std::filesystem::path p(input);
    p.replace_extension(".html");
    return p.string();
}

} // namespace

int command_report(const report_command_options& o) {
    std::unique_ptr<result_file> file;
    const std::string kind = read_kind(o.result_path, file);
    const result_kind* found = nullptr;
    std::string known;
    for (const auto& k : result_kinds) {
        known += (known.empty() ? "" : ", ") + std::string(k.command);
        if (kind == k.command) found = &k;
    }
    if (found == nullptr)
        throw input_error(source_location{o.result_path}, "/run@command", kind,
                          "a result kind moonwright knows (" + known + ")");
    if (!found->build)
        throw input_error(source_location{o.result_path},
                          "moonwright report has no page for '" + kind + "' results yet");

    const report::report_page page = found->build(*file);
    file.reset();

    const std::string out_path = o.out_path.empty() ? default_output(o.result_path) : o.out_path;
    if (!o.figures_dir.empty()) {
        std::error_code ec;
        std::filesystem::create_directories(o.figures_dir, ec);
        if (ec || !std::filesystem::is_directory(o.figures_dir))
            throw io_error(fmt::format("cannot create the figures folder '{}'{}", o.figures_dir,
                                       ec ? ": " + ec.message() : std::string()));
        for (const auto& f : page.figures_)
            write_atomically(std::filesystem::path(o.figures_dir) / (f.id_ + ".png"), f.bytes_);
    }
    page.page_.write(out_path);
    if (!o.quiet) {
        std::string text = fmt::format("Report: {}\n", out_path);
        if (!o.figures_dir.empty())
            text +=
                fmt::format("Figures: {} PNG files in {}\n", page.figures_.size(), o.figures_dir);
        std::fwrite(text.data(), 1, text.size(), stdout);
    }
    return static_cast<int>(exit_code::ok);
}

} // namespace moonwright::cli
