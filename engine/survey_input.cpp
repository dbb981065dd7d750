// Streaming survey inputs: files, folders, JSON lines; parse and check each design.
#include "engine/survey_input.hpp"

#include "engine/design_loader.hpp"
#include "engine/error.hpp"

#include <algorithm>
#include <filesystem>
#include <fmt/format.h>
#include <iterator>
#include <sstream>

namespace moonwright {

namespace fs = std::filesystem;

namespace {

bool ends_with(const std::string& s, std::string_view tail) {
    return s.size() >= tail.size() && s.compare(s.size() - tail.size(), tail.size(), tail) == 0;
}

bool is_design_file(const fs::path& p) {
    const std::string ext = p.extension().string();
    return ext == ".toml" || ext == ".json";
}

/// An invalid entry from a parse or resolve error: one error finding with the message.
survey_entry invalid_entry(std::uint64_t index, const std::string& source, const std::string& name,
                           const std::string& code, const std::string& message) {
    survey_entry e;
    e.record.design_index = index;
    e.record.source = source;
    e.record.name = name;
    e.record.valid = false;
    e.record.findings.push_back({severity::error, code, "", message});
    return e;
}

} // namespace

void check_survey_design(const design& d, survey_design_record& record) {
    try {
        const check_report report = run_check(resolve(d, d.seed.value_or(1)));
        record.valid = !report.has_errors();
        if (!record.valid) record.findings = report.findings;
    } catch (const input_error& e) {
        record.valid = false;
        record.findings = {{severity::error, "resolve_error", "", e.what()}};
    }
}

survey_input::survey_input(std::vector<std::string> inputs, std::istream* standard_input)
    : inputs_(std::move(inputs)), stdin_(standard_input) {
    if (inputs_.empty())
        throw input_error(source_location{"<options>"}, "INPUT", "nothing",
                          "design files, folders, .jsonl files or -");
    int dashes = 0;
    for (const auto& in : inputs_) {
        if (in == "-") {
            ++dashes;
            continue;
        }
        std::error_code ec;
        const auto status = fs::status(in, ec);
        if (ec || !fs::exists(status))
            throw input_error(source_location{in},
                              "cannot read this input: no such file or folder");
        if (!fs::is_directory(status) && !ends_with(in, ".jsonl") && !is_design_file(in))
            throw input_error(source_location{in}, "INPUT", in,
                              "a .toml or .json design, a folder, a .jsonl file, or -");
    }
    if (dashes > 1)
        throw input_error(source_location{"<options>"}, "INPUT", "- more than once",
                          "standard input at most once");
}

bool survey_input::open_next_input() {
    files_.clear();
    next_file_ = 0;
    lines_file_.reset();
    lines_ = nullptr;
    line_number_ = 0;
    if (next_input_ >= inputs_.size()) return false;
    const std::string in = inputs_[next_input_++];
    if (in == "-") {
        if (!stdin_)
            throw input_error(source_location{"<stdin>"}, "standard input is not available");
        lines_ = stdin_;
        lines_label_ = "<stdin>";
    } else if (fs::is_directory(in)) {
        std::error_code ec;
        for (const auto& entry : fs::directory_iterator(in, ec))
            if (entry.is_regular_file() && is_design_file(entry.path()))
                files_.push_back(entry.path().string());
        if (ec) throw input_error(source_location{in}, "cannot list this folder: " + ec.message());
        std::sort(files_.begin(), files_.end());
    } else if (ends_with(in, ".jsonl")) {
        lines_file_ = std::make_unique<std::ifstream>(in);
        if (!*lines_file_) throw input_error(source_location{in}, "cannot open this file");
        lines_ = lines_file_.get();
        lines_label_ = in;
    } else {
        files_.push_back(in);
    }
    return true;
}

std::optional<survey_entry> survey_input::next(bool parse) {
    for (;;) {
        if (lines_) {
            std::string line;
            while (std::getline(*lines_, line)) {
                ++line_number_;
                if (line.find_first_not_of(" \t\r") == std::string::npos) continue;
                const std::string source = fmt::format("{}:{}", lines_label_, line_number_);
                const std::uint64_t index = next_index_++;
                if (!parse) return survey_entry{{index, "", source, true, {}}, nullptr};
                try {
                    auto d = std::make_shared<design>(
                        parse_design(line, design_format::json, lines_label_));
                    d->source_name = source;
                    survey_entry e;
                    e.record = {index, d->name, source, true, {}};
                    check_survey_design(*d, e.record);
                    if (e.record.valid) e.design_ = std::move(d);
                    return e;
                } catch (const input_error& err) {
                    return invalid_entry(index, source, source, "parse_error", err.what());
                }
            }
            if (lines_->bad()) throw input_error(source_location{lines_label_}, "reading failed");
            lines_ = nullptr;
            continue;
        }
        if (next_file_ < files_.size()) {
            const std::string path = files_[next_file_++];
            const std::uint64_t index = next_index_++;
            if (!parse) return survey_entry{{index, "", path, true, {}}, nullptr};
            try {
                auto d = std::make_shared<design>(load_design_file(path));
                survey_entry e;
                e.record = {index, d->name, path, true, {}};
                check_survey_design(*d, e.record);
                if (e.record.valid) e.design_ = std::move(d);
                return e;
            } catch (const input_error& err) {
                return invalid_entry(index, path, fs::path(path).filename().string(), "parse_error",
                                     err.what());
            }
        }
        if (!open_next_input()) return std::nullopt;
    }
}

} // namespace moonwright
