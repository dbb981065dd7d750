// The self-contained HTML report: escaping, base64, inline CSS and the page structure.
#include "tools/report/html_report.hpp"

#include "engine/error.hpp"

#include <algorithm>
#include <array>
#include <fstream>
#include <stdexcept>
#include <system_error>

namespace moonwright::report {

namespace {

// Inline style sheet. Colours pair with words and border styles (solid, dashed, double,
// dotted), so the page reads in greyscale. Narrow screens: one column, tables scroll sideways.
constexpr std::string_view style_sheet = R"css(
*,*::before,*::after{box-sizing:border-box}
html{-webkit-text-size-adjust:100%;text-size-adjust:100%}
body{margin:0 auto;max-width:60rem;padding:1rem 1.25rem 3rem;font-family:"DejaVu Sans",
"Segoe UI",Helvetica,Arial,sans-serif;font-size:16px;line-height:1.5;color:#111;background:#fff;
overflow-wrap:break-word}
h1{font-size:1.6rem;margin:.5rem 0 .25rem}
h2{font-size:1.25rem;margin:2rem 0 .5rem;border-bottom:1px solid #bbb;padding-bottom:.2rem}
.subtitle{color:#444;margin:0 0 1rem}
.verdict{margin:1rem 0 1.5rem;padding:.8rem 1rem;border-width:4px;border-radius:4px;
-webkit-print-color-adjust:exact;print-color-adjust:exact}
.verdict .verdict-word{display:block;font-size:1.7rem;font-weight:700;letter-spacing:.04em;
text-transform:uppercase}
.verdict p{margin:.3rem 0}
.verdict ul{margin:.3rem 0 0;padding-left:1.3rem}
.tone-good{background:#e3f2e6;border-style:solid;border-color:#1e6b34;color:#0d3a1a}
.tone-caution{background:#fff1cf;border-style:dashed;border-color:#8a5a00;color:#4a3000}
.tone-bad{background:#fbe0de;border-style:double;border-width:7px;border-color:#9b1c1c;
color:#5a0d0d}
.tone-neutral{background:#eef1f5;border-style:dotted;border-color:#4a5568;color:#1a202c}
.table-wrap{overflow-x:auto;-webkit-overflow-scrolling:touch;margin:.5rem 0 1rem;max-width:100%}
table{border-collapse:collapse;font-size:.95rem}
caption{text-align:left;font-weight:600;padding:.2rem 0}
th,td{border:1px solid #bbb;padding:.25rem .55rem;text-align:left;vertical-align:top}
th{background:#eee}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
td.unit{color:#333;white-space:nowrap}
.sev{font-weight:700;white-space:nowrap}
.sev-error{color:#9b1c1c}
.sev-warning{color:#7a4e00}
.sev-note{color:#2b4c7e;font-weight:400}
figure{margin:1rem 0 1.5rem}
figure img{display:block;max-width:100%;height:auto;border:1px solid #ddd}
figcaption{font-size:.92rem;color:#333;margin-top:.3rem}
footer{margin-top:3rem;font-size:.85rem;color:#555;border-top:1px solid #ccc;padding-top:.5rem}
@media (max-width:600px){
body{padding:.6rem .7rem 2rem;font-size:15px}
h1{font-size:1.3rem}
.verdict .verdict-word{font-size:1.35rem}
th,td{padding:.2rem .35rem}
}
@media print{
body{max-width:none;padding:0;font-size:11pt}
.table-wrap{overflow:visible}
figure,table,.verdict{break-inside:avoid;page-break-inside:avoid}
h2{break-after:avoid;page-break-after:avoid}
figure img{border:none;max-height:22cm;width:auto}
}
)css";

void check_id(const std::string& what, const std::string& id) {
    const bool ok = !id.empty() &&
                    ((id[0] >= 'a' && id[0] <= 'z') || (id[0] >= 'A' && id[0] <= 'Z')) &&
                    std::all_of(id.begin(), id.end(), [](char c) {
                        return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
                               (c >= '0' && c <= '9') || c == '-' || c == '_';
                    });
    if (!ok)
        throw std::invalid_argument(what + " id '" + id +
                                    "': use letters, digits, '-' and '_', starting with a letter");
    if (id == "verdict") throw std::invalid_argument(what + " id 'verdict' is reserved");
}

const char* tone_name(verdict_tone t) {
    switch (t) {
    case verdict_tone::good:
        return "good";
    case verdict_tone::caution:
        return "caution";
    case verdict_tone::bad:
        return "bad";
    case verdict_tone::neutral:
        return "neutral";
    }
    return "neutral";
}

const char* severity_name(severity s) {
    switch (s) {
    case severity::error:
        return "error";
    case severity::warning:
        return "warning";
    case severity::note:
        return "note";
    }
    return "note";
}

// A cell that looks like a number is right-aligned.
bool looks_numeric(const std::string& s) {
    if (s.empty()) return false;
    return std::all_of(s.begin(), s.end(), [](char c) {
        return (c >= '0' && c <= '9') || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E' ||
               c == ' ';
    });
}

std::string td(const std::string& text, const char* cls = nullptr) {
    std::string r = "<td";
    if (cls != nullptr) r += std::string(" class=\"") + cls + "\"";
    return r + ">" + html_escape(text) + "</td>";
}

} // namespace

std::string html_escape(std::string_view text) {
    std::string r;
    r.reserve(text.size() + text.size() / 8);
    for (char c : text) {
        switch (c) {
        case '&':
            r += "&amp;";
            break;
        case '<':
            r += "&lt;";
            break;
        case '>':
            r += "&gt;";
            break;
        case '"':
            r += "&quot;";
            break;
        case '\'':
            r += "&#39;";
            break;
        default:
            r += c;
        }
    }
    return r;
}

std::string base64_encode(const std::vector<std::uint8_t>& bytes) {
    // RFC 4648, section 4: 3 bytes -> 4 characters of this alphabet, '=' pads the last group.
    static constexpr std::string_view alphabet =
        "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    std::string r;
    r.reserve((bytes.size() + 2) / 3 * 4);
    std::size_t k = 0;
    for (; k + 2 < bytes.size(); k += 3) {
        const std::uint32_t v = (std::uint32_t{bytes[k]} << 16) |
                                (std::uint32_t{bytes[k + 1]} << 8) | std::uint32_t{bytes[k + 2]};
        r += alphabet[(v >> 18) & 63];
        r += alphabet[(v >> 12) & 63];
        r += alphabet[(v >> 6) & 63];
        r += alphabet[v & 63];
    }
    const std::size_t rest = bytes.size() - k;
    if (rest > 0) {
        std::uint32_t v = std::uint32_t{bytes[k]} << 16;
        if (rest == 2) v |= std::uint32_t{bytes[k + 1]} << 8;
        r += alphabet[(v >> 18) & 63];
        r += alphabet[(v >> 12) & 63];
        r += rest == 2 ? alphabet[(v >> 6) & 63] : '=';
        r += '=';
    }
    return r;
}

// ---------------------------------------------------------------------------------------------

html_section::html_section(std::string id, std::string heading)
    : id_(std::move(id)), heading_(std::move(heading)) {
    check_id("section", id_);
}

html_section& html_section::paragraph(std::string text) {
    blocks_.push_back("<p>" + html_escape(text) + "</p>\n");
    return *this;
}

html_section& html_section::key_values(std::string caption, std::vector<key_value> rows) {
    std::string h = "<div class=\"table-wrap\"><table class=\"kv\">";
    if (!caption.empty()) h += "<caption>" + html_escape(caption) + "</caption>";
    h += "<thead><tr><th scope=\"col\">quantity</th><th scope=\"col\">value</th>"
         "<th scope=\"col\">unit</th><th scope=\"col\">note</th></tr></thead><tbody>\n";
    for (const auto& r : rows) {
        h += "<tr><th scope=\"row\">" + html_escape(r.key_) + "</th>" +
             td(r.value_, looks_numeric(r.value_) ? "num" : nullptr) + td(r.unit_, "unit") +
             td(r.note_) + "</tr>\n";
    }
    h += "</tbody></table></div>\n";
    blocks_.push_back(std::move(h));
    return *this;
}

html_section& html_section::table(data_table t) {
    if (!t.units_.empty() && t.units_.size() != t.columns_.size())
        throw std::invalid_argument("table '" + t.caption_ +
                                    "': units must be empty or one per column");
    for (const auto& row : t.rows_)
        if (row.size() != t.columns_.size())
            throw std::invalid_argument("table '" + t.caption_ + "': a row has " +
                                        std::to_string(row.size()) + " cells, expected " +
                                        std::to_string(t.columns_.size()));
    std::string h = "<div class=\"table-wrap\"><table class=\"data\">";
    if (!t.caption_.empty()) h += "<caption>" + html_escape(t.caption_) + "</caption>";
    h += "<thead><tr>";
    for (std::size_t c = 0; c < t.columns_.size(); ++c) {
        std::string head = t.columns_[c];
        if (!t.units_.empty() && !t.units_[c].empty()) head += " (" + t.units_[c] + ")";
        h += "<th scope=\"col\">" + html_escape(head) + "</th>";
    }
    h += "</tr></thead><tbody>\n";
    for (const auto& row : t.rows_) {
        h += "<tr>";
        for (const auto& cell : row) h += td(cell, looks_numeric(cell) ? "num" : nullptr);
        h += "</tr>\n";
    }
    h += "</tbody></table></div>\n";
    blocks_.push_back(std::move(h));
    return *this;
}

html_section& html_section::findings(std::string caption, std::vector<finding> items) {
    std::string h = "<div class=\"table-wrap\"><table class=\"findings\">";
    if (!caption.empty()) h += "<caption>" + html_escape(caption) + "</caption>";
    h += "<thead><tr><th scope=\"col\">severity</th><th scope=\"col\">about</th>"
         "<th scope=\"col\">finding</th></tr></thead><tbody>\n";
    for (const auto& f : items) {
        const std::string sev = severity_name(f.severity_);
        h += "<tr data-severity=\"" + sev + "\"><td class=\"sev sev-" + sev + "\">" + sev +
             "</td>" + td(f.subject_) + td(f.message_) + "</tr>\n";
    }
    if (items.empty()) h += "<tr><td colspan=\"3\">no findings</td></tr>\n";
    h += "</tbody></table></div>\n";
    blocks_.push_back(std::move(h));
    return *this;
}

html_section& html_section::figure(embedded_figure f) {
    check_id("figure", f.id_);
    if (f.bytes_.empty()) throw std::invalid_argument("figure '" + f.id_ + "' has no image bytes");
    if (f.mime_ != "image/png" && f.mime_ != "image/svg+xml")
        throw std::invalid_argument("figure '" + f.id_ +
                                    "': mime must be image/png or image/svg+xml");
    if (std::find(figure_ids_.begin(), figure_ids_.end(), f.id_) != figure_ids_.end() ||
        f.id_ == id_)
        throw std::invalid_argument("figure id '" + f.id_ + "' is used twice");
    const std::string kind = html_escape(f.kind_.empty() ? "figure" : f.kind_);
    std::string h = "<figure id=\"" + f.id_ + "\" data-figure=\"" + kind + "\">";
    h += "<img data-figure=\"" + kind + "\" alt=\"" + html_escape(f.alt_) + "\"";
    if (f.width_px_ > 0 && f.height_px_ > 0)
        h += " width=\"" + std::to_string(f.width_px_) + "\" height=\"" +
             std::to_string(f.height_px_) + "\"";
    h += " src=\"data:" + f.mime_ + ";base64," + base64_encode(f.bytes_) + "\">";
    if (!f.caption_.empty()) h += "<figcaption>" + html_escape(f.caption_) + "</figcaption>";
    h += "</figure>\n";
    blocks_.push_back(std::move(h));
    figure_ids_.push_back(f.id_);
    return *this;
}

html_section& html_section::figure(std::string id, const report::figure& f, std::string caption,
                                   std::string alt, int width_px, int height_px) {
    check_id("figure", id);
    embedded_figure e;
    e.id_ = std::move(id);
    e.kind_ = figure_kind(f);
    e.caption_ = std::move(caption);
    e.alt_ = std::move(alt);
    e.bytes_ = png_bytes(f, width_px, height_px);
    e.width_px_ = width_px;
    e.height_px_ = height_px;
    return figure(std::move(e));
}

std::vector<std::string> html_section::figure_ids() const {
    return figure_ids_;
}

std::string html_section::render() const {
    std::string h =
        "<section class=\"section\" id=\"" + id_ + "\">\n<h2>" + html_escape(heading_) + "</h2>\n";
    for (const auto& b : blocks_) h += b;
    return h + "</section>\n";
}

// ---------------------------------------------------------------------------------------------

html_report::html_report(std::string title, std::string subtitle)
    : title_(std::move(title)), subtitle_(std::move(subtitle)) {}

html_report& html_report::verdict(verdict_banner v) {
    verdict_ = std::move(v);
    has_verdict_ = true;
    return *this;
}

html_report& html_report::section(html_section s) {
    auto taken = [&](const std::string& id) {
        return std::find(ids_.begin(), ids_.end(), id) != ids_.end();
    };
    if (taken(s.id())) throw std::invalid_argument("section id '" + s.id() + "' is used twice");
    const auto figs = s.figure_ids();
    for (const auto& id : figs)
        if (taken(id)) throw std::invalid_argument("figure id '" + id + "' is used twice");
    ids_.push_back(s.id());
    ids_.insert(ids_.end(), figs.begin(), figs.end());
    sections_.push_back(std::move(s));
    return *this;
}

html_report& html_report::footer(std::string text) {
    footer_ = std::move(text);
    return *this;
}

std::string html_report::render() const {
    std::string h = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
                    "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
                    "<title>" +
                    html_escape(title_) + "</title>\n<style>" + std::string(style_sheet) +
                    "</style>\n</head>\n<body>\n<header>\n<h1>" + html_escape(title_) + "</h1>\n";
    if (!subtitle_.empty()) h += "<p class=\"subtitle\">" + html_escape(subtitle_) + "</p>\n";
    h += "</header>\n<main>\n";
    if (has_verdict_) {
        const std::string tone = tone_name(verdict_.tone_);
        h += "<div id=\"verdict\" class=\"verdict tone-" + tone + "\" data-tone=\"" + tone +
             "\" role=\"status\">\n<span class=\"verdict-word\">" + html_escape(verdict_.word_) +
             "</span>\n";
        if (!verdict_.summary_.empty()) h += "<p>" + html_escape(verdict_.summary_) + "</p>\n";
        if (!verdict_.reasons_.empty()) {
            h += "<ul>\n";
            for (const auto& r : verdict_.reasons_) h += "<li>" + html_escape(r) + "</li>\n";
            h += "</ul>\n";
        }
        h += "</div>\n";
    }
    for (const auto& s : sections_) h += s.render();
    h += "</main>\n";
    if (!footer_.empty()) h += "<footer>" + html_escape(footer_) + "</footer>\n";
    return h + "</body>\n</html>\n";
}

void html_report::write(const std::filesystem::path& path) const {
    const std::string page = render();
    std::filesystem::path tmp = path;
    tmp += ".partial";
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        if (!out) throw io_error("cannot write report '" + path.string() + "'");
        out.write(page.data(), static_cast<std::streamsize>(page.size()));
        out.close();
        if (!out) {
            std::error_code ec;
            std::filesystem::remove(tmp, ec);
            throw io_error("cannot write report '" + path.string() + "' (disk full?)");
        }
    }
    std::error_code ec;
    std::filesystem::rename(tmp, path, ec);
    if (ec) {
        std::filesystem::remove(tmp, ec);
        throw io_error("cannot write report '" + path.string() + "': " + ec.message());
    }
}

} // namespace moonwright::report
