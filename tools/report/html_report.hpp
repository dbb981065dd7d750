// A builder for one self-contained HTML page: verdict banner, sections, tables, embedded figures.
#pragma once

#include "tools/report/figures.hpp"

#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

// The page has no external resources and no JavaScript: CSS is inline, figures are base64
// data: URIs. It reflows on a phone (max-width, tables scroll sideways, images max-width 100%)
// and prints cleanly (@media print). Every piece of text is HTML-escaped.
//
// Ids for tests and tools:
//   #verdict                the verdict banner (class "verdict tone-<tone>", data-tone="<tone>")
//   #<section id>           each section (<section class="section">)
//   #<figure id>            each figure (<figure data-figure="<kind>">, holding
//                           <img data-figure="<kind>" alt="..."> and <figcaption>)
//   table.kv / table.data / table.findings   key-value, data and findings tables

namespace moonwright::report {

/// How a verdict reads; each tone has a colour, a border style and a word, so it survives
/// greyscale printing.
enum class verdict_tone {
    good,    ///< e.g. stable
    caution, ///< e.g. chaotic, unreliable
    bad,     ///< e.g. unstable
    neutral, ///< no judgement (a map, a survey summary)
};

/// The banner at the top: a word in capitals, one sentence, reasons in plain words.
struct verdict_banner {
    std::string word_;                 ///< e.g. "stable"
    std::string summary_;              ///< one sentence
    std::vector<std::string> reasons_; ///< each a plain-words reason with its numbers
    verdict_tone tone_ = verdict_tone::neutral;
};

/// One row of a key-value table. The unit is shown in its own column.
struct key_value {
    std::string key_, value_, unit_, note_;
};

/// A data table (e.g. events). units_ may be empty or give one unit per column.
struct data_table {
    std::string caption_;
    std::vector<std::string> columns_;
    std::vector<std::string> units_;
    std::vector<std::vector<std::string>> rows_; ///< each row has columns_.size() cells
};

/// How serious a finding is; shown as a word and a colour.
enum class severity { error, warning, note };

/// One finding of a design check.
struct finding {
    severity severity_ = severity::note;
    std::string subject_; ///< what it is about, e.g. "moon 'Vessa'"
    std::string message_; ///< plain words with numbers and units
};

/// An image to embed: PNG or SVG bytes with the figure's kind, caption and alt text.
struct embedded_figure {
    std::string id_;      ///< unique on the page: letters, digits, '-', '_'; starts with a letter
    std::string kind_;    ///< data-figure value, e.g. "heat_map"
    std::string caption_; ///< shown under the figure
    std::string alt_;     ///< read by screen readers, shown when the image fails
    std::string mime_ = "image/png";
    std::vector<std::uint8_t> bytes_;
    int width_px_ = 0, height_px_ = 0; ///< intrinsic size for the img element (0: omit)
};

/// One section of the page: a heading and blocks in order.
class html_section {
  public:
    /// id: letters, digits, '-', '_', starting with a letter; heading: plain text.
    html_section(std::string id, std::string heading);

    html_section& paragraph(std::string text);
    html_section& key_values(std::string caption, std::vector<key_value> rows);
    html_section& table(data_table t);
    html_section& findings(std::string caption, std::vector<finding> items);
    html_section& figure(embedded_figure f);
    /// Renders f as PNG (width x height px) and embeds it with data-figure = figure_kind(f).
    html_section& figure(std::string id, const report::figure& f, std::string caption,
                         std::string alt, int width_px = 1000, int height_px = 700);

    [[nodiscard]] const std::string& id() const { return id_; }
    /// Ids of the figures in this section, in order.
    [[nodiscard]] std::vector<std::string> figure_ids() const;
    /// This section as HTML (used by html_report).
    [[nodiscard]] std::string render() const;

  private:
    std::string id_, heading_;
    std::vector<std::string> blocks_; // rendered HTML fragments
    std::vector<std::string> figure_ids_;
};

/// The page. Build it, then render() to a string or write() to a file.
class html_report {
  public:
    explicit html_report(std::string title, std::string subtitle = {});

    html_report& verdict(verdict_banner v);
    /// Adds a section; throws std::invalid_argument when its id or a figure id is already used.
    html_report& section(html_section s);
    /// A line of small print at the bottom (e.g. program version, design file, seed).
    html_report& footer(std::string text);

    [[nodiscard]] std::string render() const;
    /// Writes the page (via a temporary file and rename); throws moonwright::io_error.
    void write(const std::filesystem::path& path) const;

  private:
    std::string title_, subtitle_, footer_;
    bool has_verdict_ = false;
    verdict_banner verdict_;
    std::vector<html_section> sections_;
    std::vector<std::string> ids_;
};

/// Escapes & < > " ' for HTML text and attribute values.
[[nodiscard]] std::string html_escape(std::string_view text);

/// Standard base64 (RFC 4648, section 4) with padding.
[[nodiscard]] std::string base64_encode(const std::vector<std::uint8_t>& bytes);

} // namespace moonwright::report
