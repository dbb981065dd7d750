// Reads design files (TOML, JSON) into the design model with validation, and writes them back.
// The only file that includes the TOML and JSON parsers (STYLE.md rule 11).
#define TOML_HEADER_ONLY 1
// toml++ 3.3.0 asserts on some malformed input (e.g. `[\body]]`, `[1,}2]`) where its release
// build reports a proper parse error; without NDEBUG that assert would abort the program.
// Behave as the release build does in every build type (regression test: "cut and corrupted
// scenario files load or give input_error, nothing else").
#define TOML_ASSERT(expr) static_assert(true)
#include <toml++/toml.h>

#include "engine/design_loader.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"
#include "engine/materials.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <limits>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>

namespace moonwright {

namespace {

namespace c = constants;

// ---------------------------------------------------------------------------------------------
// A small value tree with source positions, built from either parser, so one validator serves
// both formats.
struct member;
struct value_node {
    enum class type { table, array, string, integer, floating, boolean, other };
    type t = type::other;
    std::string text;          ///< string value, or the name of an unsupported kind ("a date")
    std::int64_t integer = 0;  ///< integer value (JSON integers above int64 set big_unsigned)
    bool big_unsigned = false; ///< a JSON integer that does not fit int64
    double number = 0.0;       ///< floating value
    bool boolean = false;
    std::vector<member> members; ///< table members in file order
    std::vector<value_node> items;
    source_location where; ///< where the value starts
};
struct member {
    std::string key;
    source_location key_where;
    value_node value;
};

const value_node* find_member(const value_node& table, std::string_view key) {
    for (const auto& m : table.members)
        if (m.key == key) return &m.value;
    return nullptr;
}

/// Quoted string for messages, with control characters escaped.
std::string quote_text(std::string_view s) {
    std::string out = "\"";
    for (char ch : s) {
        if (ch == '"' || ch == '\\') {
            out += '\\';
            out += ch;
        } else if (static_cast<unsigned char>(ch) < 0x20) {
            out += fmt::format("\\u{:04x}", static_cast<unsigned>(ch));
        } else {
            out += ch;
        }
    }
    return out + "\"";
}

/// The value as written, for the "found" part of messages.
std::string describe(const value_node& v) {
    switch (v.t) {
    case value_node::type::table:
        return "a table";
    case value_node::type::array: {
        std::string out = "[";
        for (std::size_t k = 0; k < v.items.size(); ++k) {
            if (k > 0) out += ", ";
            if (k == 6) {
                out += "...";
                break;
            }
            out += describe(v.items[k]);
        }
        return out + "]";
    }
    case value_node::type::string:
        return quote_text(v.text);
    case value_node::type::integer:
        return v.big_unsigned ? std::string("a very large integer") : fmt::format("{}", v.integer);
    case value_node::type::floating:
        return fmt::format("{}", v.number);
    case value_node::type::boolean:
        return v.boolean ? "true" : "false";
    case value_node::type::other:
        return v.text;
    }
    return "a value";
}

// ---------------------------------------------------------------------------------------------
// TOML -> value tree.

source_location toml_location(const toml::source_region& r, const std::string& file) {
    return source_location{file, static_cast<int>(r.begin.line), static_cast<int>(r.begin.column)};
}

bool position_less(const source_location& a, const source_location& b) {
    return a.line != b.line ? a.line < b.line : a.column < b.column;
}

value_node from_toml(const toml::node& n, const std::string& file) {
    value_node v;
    v.where = toml_location(n.source(), file);
    if (const auto* t = n.as_table()) {
        v.t = value_node::type::table;
        for (auto&& [k, child] : *t)
            v.members.push_back(member{std::string(k.str()), toml_location(k.source(), file),
                                       from_toml(child, file)});
        // toml++ keeps keys sorted; messages and compositions follow the file's order.
        std::stable_sort(v.members.begin(), v.members.end(), [](const member& a, const member& b) {
            return position_less(a.key_where, b.key_where);
        });
    } else if (const auto* a = n.as_array()) {
        v.t = value_node::type::array;
        for (const auto& item : *a) v.items.push_back(from_toml(item, file));
    } else if (const auto* s = n.as_string()) {
        v.t = value_node::type::string;
        v.text = s->get();
    } else if (const auto* i = n.as_integer()) {
        v.t = value_node::type::integer;
        v.integer = i->get();
    } else if (const auto* f = n.as_floating_point()) {
        v.t = value_node::type::floating;
        v.number = f->get();
    } else if (const auto* b = n.as_boolean()) {
        v.t = value_node::type::boolean;
        v.boolean = b->get();
    } else {
        v.t = value_node::type::other;
        v.text = "a date or time";
    }
    return v;
}

value_node parse_toml_tree(std::string_view text, const std::string& file) {
    try {
        toml::table root = toml::parse(text, std::string_view{file});
        return from_toml(root, file);
    } catch (const toml::parse_error& e) {
        throw input_error(toml_location(e.source(), file),
                          fmt::format("TOML syntax error: {}", e.description()));
    }
}

// ---------------------------------------------------------------------------------------------
// JSON -> value tree. nlohmann checks the syntax (its errors give a byte offset, turned into
// line:column here); then a small scanner walks the now valid text to record where each key and
// value starts, since nlohmann's DOM and SAX events carry no positions.

source_location offset_to_location(std::string_view text, std::size_t offset,
                                   const std::string& file) {
    offset = std::min(offset, text.size());
    int line = 1;
    std::size_t line_start = 0;
    for (std::size_t k = 0; k < offset; ++k)
        if (text[k] == '\n') {
            ++line;
            line_start = k + 1;
        }
    return source_location{file, line, static_cast<int>(offset - line_start) + 1};
}

class json_scanner {
  public:
    json_scanner(std::string_view text, const std::string& file) : text_(text), file_(file) {}

    value_node scan_document() {
        if (text_.substr(0, 3) == "\xEF\xBB\xBF") pos_ = 3; // UTF-8 byte order mark
        skip_space();
        value_node v = scan_value(0);
        return v;
    }

  private:
    static constexpr int max_depth = 64;
    std::string_view text_;
    const std::string& file_;
    std::size_t pos_ = 0;

    source_location here() const { return offset_to_location(text_, pos_, file_); }

    void skip_space() {
        while (pos_ < text_.size() && (text_[pos_] == ' ' || text_[pos_] == '\t' ||
                                       text_[pos_] == '\n' || text_[pos_] == '\r'))
            ++pos_;
    }

    std::string_view string_token() {
        const std::size_t start = pos_++;
        while (pos_ < text_.size() && text_[pos_] != '"') pos_ += text_[pos_] == '\\' ? 2 : 1;
        ++pos_;
        return text_.substr(start, pos_ - start);
    }

    static std::string decode_string(std::string_view token) {
        const auto j = nlohmann::json::parse(token);
        return j.get<std::string>();
    }

    value_node scan_value(int depth) {
        if (depth > max_depth)
            throw input_error(here(), fmt::format("JSON nested deeper than {} levels", max_depth));
        value_node v;
        v.where = here();
        const char ch = text_[pos_];
        if (ch == '{') {
            v.t = value_node::type::table;
            ++pos_;
            skip_space();
            std::set<std::string> seen;
            while (text_[pos_] != '}') {
                member m;
                m.key_where = here();
                m.key = decode_string(string_token());
                if (!seen.insert(m.key).second)
                    throw input_error(
                        m.key_where,
                        fmt::format("JSON key {} appears twice in one object", quote_text(m.key)));
                skip_space();
                ++pos_; // ':'
                skip_space();
                m.value = scan_value(depth + 1);
                v.members.push_back(std::move(m));
                skip_space();
                if (text_[pos_] == ',') {
                    ++pos_;
                    skip_space();
                }
            }
            ++pos_;
        } else if (ch == '[') {
            v.t = value_node::type::array;
            ++pos_;
            skip_space();
            while (text_[pos_] != ']') {
                v.items.push_back(scan_value(depth + 1));
                skip_space();
                if (text_[pos_] == ',') {
                    ++pos_;
                    skip_space();
                }
            }
            ++pos_;
        } else if (ch == '"') {
            v.t = value_node::type::string;
            v.text = decode_string(string_token());
        } else if (text_.substr(pos_, 4) == "true") {
            v.t = value_node::type::boolean;
            v.boolean = true;
            pos_ += 4;
        } else if (text_.substr(pos_, 5) == "false") {
            v.t = value_node::type::boolean;
            pos_ += 5;
        } else if (text_.substr(pos_, 4) == "null") {
            v.t = value_node::type::other;
            v.text = "null";
            pos_ += 4;
        } else {
            const std::size_t start = pos_;
            while (pos_ < text_.size() && std::strchr("+-0123456789.eE", text_[pos_]) != nullptr)
                ++pos_;
            const auto j = nlohmann::json::parse(text_.substr(start, pos_ - start));
            if (j.is_number_float()) {
                v.t = value_node::type::floating;
                v.number = j.get<double>();
            } else if (j.is_number_unsigned() &&
                       j.get<std::uint64_t>() >
                           static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max())) {
                v.t = value_node::type::integer;
                v.big_unsigned = true;
            } else {
                v.t = value_node::type::integer;
                v.integer = j.get<std::int64_t>();
            }
        }
        return v;
    }
};

value_node parse_json_tree(std::string_view text, const std::string& file) {
    try {
        const auto checked = nlohmann::json::parse(text);
        (void)checked;
    } catch (const nlohmann::json::parse_error& e) {
        // e.byte counts the bytes read, the offending one included.
        const std::size_t offset = e.byte > 0 ? e.byte - 1 : 0;
        std::string what = e.what();
        // Keep nlohmann's description, drop its own "[json.exception...] parse error at ...:".
        const auto col = what.find("column ");
        if (col != std::string::npos) {
            const auto colon = what.find(": ", col);
            if (colon != std::string::npos) what = what.substr(colon + 2);
        } else if (const auto colon = what.find("]"); colon != std::string::npos) {
            what = what.substr(colon + 2);
        }
        throw input_error(offset_to_location(text, offset, file), "JSON syntax error: " + what);
    }
    return json_scanner(text, file).scan_document();
}

// ---------------------------------------------------------------------------------------------
// Did-you-mean suggestions.

std::string lower(std::string_view s) {
    std::string out(s);
    for (auto& ch : out) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
    return out;
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
    // Levenshtein distance with one row (Wagner & Fischer 1974).
    std::vector<std::size_t> row(b.size() + 1);
    for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
    for (std::size_t i = 1; i <= a.size(); ++i) {
        std::size_t diag = row[0];
        row[0] = i;
        for (std::size_t j = 1; j <= b.size(); ++j) {
            const std::size_t up = row[j];
            row[j] =
                std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0u : 1u)});
            diag = up;
        }
    }
    return row[b.size()];
}

/// The closest candidate within a small edit distance, or "" when none is close.
std::string closest(std::string_view word, const std::vector<std::string>& candidates) {
    const std::string w = lower(word);
    std::string best;
    std::size_t best_d = std::numeric_limits<std::size_t>::max();
    for (const auto& cand : candidates) {
        const std::size_t d = edit_distance(w, lower(cand));
        if (d < best_d) {
            best_d = d;
            best = cand;
        }
    }
    const std::size_t limit = std::max<std::size_t>(1, std::min<std::size_t>(3, w.size() / 3));
    if (best_d <= limit) return best;
    // A plural or a longer form of a key ("bodies", "radius_km") points at the key itself.
    for (const auto& cand : candidates) {
        const std::string lc = lower(cand);
        if (lc.size() >= 3 && w.size() > lc.size() &&
            w.compare(0, lc.size() - 1, lc, 0, lc.size() - 1) == 0)
            return cand;
    }
    return std::string();
}

std::string joined(const std::vector<std::string>& words) {
    std::string out;
    for (const auto& w : words) out += (out.empty() ? "" : ", ") + w;
    return out;
}

// Long names people write for the short keys; used only for suggestions.
const std::vector<std::pair<std::string, std::string>> key_aliases{
    {"eccentricity", "e"},
    {"inclination", "i"},
    {"semi_major_axis", "a"},
    {"semimajor_axis", "a"},
    {"sma", "a"},
    {"parent", "orbits"},
    {"omega", "peri"},
    {"argument_of_periapsis", "peri"},
    {"longitude_of_ascending_node", "node"},
    {"m", "mass"},
    {"q", "Q"},
    {"j2", "J2"},
    {"j4", "J4"},
    {"rotation", "rotation_period"},
    {"spin_period", "rotation_period"},
    {"materials", "composition"}};

// ---------------------------------------------------------------------------------------------
// The validator: value tree -> design, one clear input_error for the first problem found.

const std::vector<std::string> top_keys{"system", "materials", "body"};
const std::vector<std::string> system_keys{"name", "description", "seed"};
const std::vector<std::string> material_keys{"density", "source"};
const std::vector<std::string> body_keys{
    "name",        "kind",      "orbits",          "mass",       "radius", "density",
    "composition", "semi_axes", "rotation_period", "obliquity",  "J2",     "J4",
    "k2",          "Q",         "time_lag",        "luminosity", "age",    "orbit"};
const std::vector<std::string> orbit_keys{"a",    "period",       "e",    "i", "node",
                                          "peri", "mean_anomaly", "sense"};

class design_reader {
  public:
    design_reader(const std::string& file) : file_(file) {}

    design read(const value_node& root) {
        if (root.t != value_node::type::table)
            fail(root.where, "(top level)", describe(root),
                 "a table (TOML) or an object (JSON) holding system, materials and body");
        check_keys(root, "", top_keys, "the top level");
        if (const auto* s = find_member(root, "system")) read_system(*s);
        if (const auto* m = find_member(root, "materials")) read_materials(*m);
        const auto* bodies = find_member(root, "body");
        if (bodies == nullptr)
            fail(root.where, "body", "",
                 "at least one body ([[body]] tables in TOML, a \"body\" array in JSON)");
        read_bodies(*bodies);
        check_tree();
        return std::move(d_);
    }

  private:
    const std::string& file_;
    design d_;
    /// Per body: where its table, name, orbits, kind and orbit were written.
    struct body_places {
        source_location table, name, orbits, kind, orbit, orbit_a;
    };
    std::vector<body_places> places_;

    [[noreturn]] static void fail(const source_location& where, const std::string& field,
                                  const std::string& found, const std::string& expected) {
        throw input_error(where, field, found, expected);
    }

    static std::string path(const std::string& prefix, const std::string& key) {
        return prefix.empty() ? key : prefix + "." + key;
    }

    /// Every key of `table` must be one of `known`; a typo gets a suggestion.
    static void check_keys(const value_node& table, const std::string& prefix,
                           const std::vector<std::string>& known, const std::string& what) {
        for (const auto& m : table.members) {
            if (std::find(known.begin(), known.end(), m.key) != known.end()) continue;
            std::string hint = closest(m.key, known);
            for (const auto& [alias, key] : key_aliases)
                if (hint.empty() && lower(m.key) == alias &&
                    std::find(known.begin(), known.end(), key) != known.end())
                    hint = key;
            const std::string suggestion =
                hint.empty() ? std::string() : fmt::format("; did you mean \"{}\"?", hint);
            fail(m.key_where, path(prefix, m.key), "",
                 fmt::format("a known key of {} ({}); \"{}\" is not one{}", what, joined(known),
                             m.key, suggestion));
        }
    }

    void record(const std::string& field, const value_node& v) { d_.where[field] = v.where; }

    static void expect_type(const value_node& v, value_node::type t, const std::string& field,
                            const std::string& expected) {
        if (v.t != t) fail(v.where, field, describe(v), expected);
    }

    std::string read_string(const value_node& v, const std::string& field) {
        expect_type(v, value_node::type::string, field, "a string in quotes");
        record(field, v);
        return v.text;
    }

    /// A plain number (integer or float), finite.
    double read_number(const value_node& v, const std::string& field, const std::string& expected) {
        double x = 0;
        if (v.t == value_node::type::integer && !v.big_unsigned)
            x = static_cast<double>(v.integer);
        else if (v.t == value_node::type::floating)
            x = v.number;
        else
            fail(v.where, field, describe(v), expected + " (a plain number, no quotes or unit)");
        if (!std::isfinite(x)) fail(v.where, field, describe(v), "a finite number: " + expected);
        record(field, v);
        return x;
    }

    /// A quantity: a string with a unit or a bare number in the default unit.
    quantity read_quantity(const value_node& v, const std::string& field, dimension dim,
                           std::string_view default_unit, bool allow_relative = false) {
        quantity q;
        if (v.t == value_node::type::string) {
            try {
                q = parse_quantity(v.text, dim, default_unit);
            } catch (const quantity_error& e) {
                fail(v.where, field, e.found(), e.expected());
            }
        } else if ((v.t == value_node::type::integer && !v.big_unsigned) ||
                   v.t == value_node::type::floating) {
            const double x =
                v.t == value_node::type::integer ? static_cast<double>(v.integer) : v.number;
            if (!std::isfinite(x)) fail(v.where, field, describe(v), "a finite number");
            q = quantity{to_si(x, default_unit), length_ref::absolute};
        } else {
            fail(v.where, field, describe(v),
                 fmt::format("{} as a string with a unit ({}), or a bare number in {}",
                             dimension_name(dim), unit_symbols(dim), default_unit));
        }
        if (q.ref != length_ref::absolute && !allow_relative)
            fail(v.where, field, describe(v),
                 "an absolute length (m, km, AU, Rearth, Rjup, Rsun); Rp and RH are only for "
                 "orbit.a");
        if (!std::isfinite(q.value)) fail(v.where, field, describe(v), "a finite value");
        record(field, v);
        return q;
    }

    double read_positive(const value_node& v, const std::string& field, dimension dim,
                         std::string_view default_unit, const std::string& what) {
        const quantity q = read_quantity(v, field, dim, default_unit);
        if (!(q.value > 0)) fail(v.where, field, describe(v), "a positive " + what);
        return q.value;
    }

    double read_angle(const value_node& v, const std::string& field) {
        return read_quantity(v, field, dimension::angle, "deg").value;
    }

    void read_system(const value_node& s) {
        expect_type(s, value_node::type::table, "system",
                    "a table ([system] in TOML, an object in JSON)");
        check_keys(s, "system", system_keys, "[system]");
        for (const auto& m : s.members) {
            const std::string field = "system." + m.key;
            if (m.key == "name") {
                d_.name = read_string(m.value, field);
            } else if (m.key == "description") {
                d_.description = read_string(m.value, field);
            } else if (m.key == "seed") {
                const auto& v = m.value;
                expect_type(v, value_node::type::integer, field,
                            "a whole number from 0 to 9223372036854775807");
                if (v.big_unsigned || v.integer < 0)
                    fail(v.where, field, describe(v),
                         "a whole number from 0 to 9223372036854775807");
                record(field, v);
                d_.seed = static_cast<std::uint64_t>(v.integer);
            }
        }
    }

    void read_materials(const value_node& table) {
        expect_type(table, value_node::type::table, "materials",
                    "a table of name = \"<density>\" entries");
        for (const auto& m : table.members) {
            const std::string field = "materials." + m.key;
            material_spec spec;
            spec.name = m.key;
            if (m.key.empty()) fail(m.key_where, field, "\"\"", "a non-empty material name");
            const value_node* density = &m.value;
            if (m.value.t == value_node::type::table) {
                check_keys(m.value, field, material_keys, "a material");
                density = find_member(m.value, "density");
                if (density == nullptr)
                    fail(m.value.where, field + ".density", "",
                         "a density, e.g. density = \"2.9 g/cm3\"");
                if (const auto* src = find_member(m.value, "source"))
                    spec.source = read_string(*src, field + ".source");
                record(field, m.value);
            }
            const std::string density_field =
                m.value.t == value_node::type::table ? field + ".density" : field;
            spec.density_kg_m3 =
                read_positive(*density, density_field, dimension::density, "g/cm3", "density");
            d_.materials.push_back(std::move(spec));
        }
    }

    void read_bodies(const value_node& list) {
        const std::string expected =
            "an array of tables ([[body]] in TOML, \"body\": [ {...}, ... ] in JSON)";
        expect_type(list, value_node::type::array, "body", expected);
        if (list.items.empty()) fail(list.where, "body", "[]", "at least one body");
        for (std::size_t k = 0; k < list.items.size(); ++k) read_body(list.items[k], k);
    }

    void read_body(const value_node& t, std::size_t index) {
        const std::string anon = fmt::format("body[#{}]", index + 1);
        if (t.t != value_node::type::table)
            fail(t.where, anon, describe(t), "a table describing one body");
        body_spec b;
        body_places places;
        places.table = t.where;
        // The name first: every other message names the body.
        const value_node* name = find_member(t, "name");
        if (name == nullptr) fail(t.where, anon + ".name", "", "a name = \"...\" for every body");
        if (name->t != value_node::type::string)
            fail(name->where, anon + ".name", describe(*name), "a string in quotes");
        if (name->text.empty() || name->text.find_first_not_of(" \t") == std::string::npos)
            fail(name->where, anon + ".name", describe(*name), "a non-empty name");
        b.name = name->text;
        places.name = name->where;
        for (std::size_t k = 0; k < d_.bodies.size(); ++k)
            if (d_.bodies[k].name == b.name)
                fail(name->where, body_field(b.name, "name"), quote_text(b.name),
                     fmt::format("a name no other body has (already used at {})",
                                 places_[k].name.to_string()));
        const std::string prefix = body_field(b.name, "");
        record(prefix, t);
        check_keys(t, prefix, body_keys, "a body");

        const value_node* composition = nullptr;
        const value_node* semi_axes = nullptr;
        const value_node* density = nullptr;
        const value_node* radius = nullptr;
        const value_node* mass = nullptr;
        const value_node* q = nullptr;
        const value_node* lag = nullptr;
        for (const auto& m : t.members) {
            const std::string field = body_field(b.name, m.key);
            const value_node& v = m.value;
            if (m.key == "name") {
                record(field, v);
            } else if (m.key == "kind") {
                expect_type(v, value_node::type::string, field,
                            "one of \"star\", \"planet\", \"moon\", \"submoon\"");
                if (v.text == "star")
                    b.kind = body_kind::star;
                else if (v.text == "planet")
                    b.kind = body_kind::planet;
                else if (v.text == "moon")
                    b.kind = body_kind::moon;
                else if (v.text == "submoon")
                    b.kind = body_kind::submoon;
                else
                    fail(v.where, field, describe(v),
                         "one of \"star\", \"planet\", \"moon\", \"submoon\"");
                record(field, v);
                places.kind = v.where;
            } else if (m.key == "orbits") {
                b.orbits = read_string(v, field);
                if (b.orbits.empty())
                    fail(v.where, field, "\"\"", "the name of the body it orbits");
                places.orbits = v.where;
            } else if (m.key == "mass") {
                b.mass_kg = read_positive(v, field, dimension::mass, "kg", "mass");
                mass = &v;
            } else if (m.key == "radius") {
                b.radius_m = read_positive(v, field, dimension::length, "km", "radius");
                radius = &v;
            } else if (m.key == "density") {
                b.density_kg_m3 = read_positive(v, field, dimension::density, "g/cm3", "density");
                density = &v;
            } else if (m.key == "composition") {
                read_composition(v, b, field);
                composition = &v;
            } else if (m.key == "semi_axes") {
                read_semi_axes(v, b, field);
                semi_axes = &v;
            } else if (m.key == "rotation_period") {
                b.rotation_period_s =
                    read_positive(v, field, dimension::time, "h", "rotation period");
            } else if (m.key == "obliquity") {
                const double o = read_angle(v, field);
                if (o < 0 || o > c::pi + 1e-12)
                    fail(v.where, field, describe(v), "an obliquity from 0 to 180 deg");
                b.obliquity_rad = o;
            } else if (m.key == "J2") {
                b.j2 = read_number(v, field, "J2");
                if (*b.j2 < 0) fail(v.where, field, describe(v), "J2 >= 0 (an oblate body)");
            } else if (m.key == "J4") {
                b.j4 = read_number(v, field, "J4");
            } else if (m.key == "k2") {
                b.k2 = read_number(v, field, "the Love number k2");
                if (*b.k2 < 0) fail(v.where, field, describe(v), "a Love number k2 >= 0");
            } else if (m.key == "Q") {
                b.tidal_q = read_number(v, field, "the tidal quality factor Q");
                if (!(*b.tidal_q > 0)) fail(v.where, field, describe(v), "a tidal Q > 0");
                q = &v;
            } else if (m.key == "time_lag") {
                const quantity tl = read_quantity(v, field, dimension::time, "s");
                if (!(tl.value > 0)) fail(v.where, field, describe(v), "a positive time lag");
                b.time_lag_s = tl.value;
                lag = &v;
            } else if (m.key == "luminosity") {
                b.luminosity_w =
                    read_positive(v, field, dimension::luminosity, "Lsun", "luminosity");
            } else if (m.key == "age") {
                b.age_s = read_positive(v, field, dimension::time, "Gyr", "age");
            } else if (m.key == "orbit") {
                b.orbit = read_orbit(v, b.name, places);
                places.orbit = v.where;
            }
        }

        // How the mass is given: exactly one route (design.hpp, body_spec).
        if (radius && semi_axes)
            fail(semi_axes->where, body_field(b.name, "semi_axes"), describe(*semi_axes),
                 "radius or semi_axes, not both (the mean radius follows from the semi-axes)");
        if (density && composition)
            fail(composition->where, body_field(b.name, "composition"), "a composition",
                 "density or composition, not both (the density follows from the composition)");
        const bool has_size = radius || semi_axes;
        const bool has_density = density || composition;
        if (mass && has_size && has_density) {
            const value_node* last = density ? density : composition;
            fail(last->where, body_field(b.name, density ? "density" : "composition"),
                 describe(*last),
                 "at most two of mass, size (radius or semi_axes) and density (or composition): "
                 "the three together over-determine the body");
        }
        if (!mass && !(has_size && has_density)) {
            std::vector<std::string> given;
            if (radius) given.push_back("radius");
            if (semi_axes) given.push_back("semi_axes");
            if (density) given.push_back("density");
            if (composition) given.push_back("composition");
            fail(t.where, prefix,
                 given.empty() ? std::string("no mass, size or density") : "only " + joined(given),
                 "a way to get the mass: mass; or radius (or semi_axes) with density (or "
                 "composition)");
        }
        if (q && lag)
            fail(lag->where, body_field(b.name, "time_lag"), describe(*lag),
                 "Q or time_lag, not both (two tidal models)");
        d_.bodies.push_back(std::move(b));
        places_.push_back(places);
    }

    void read_composition(const value_node& v, body_spec& b, const std::string& field) {
        expect_type(v, value_node::type::table, field,
                    "a table of mass fractions, e.g. { iron = 0.3, rock = 0.7 }");
        if (v.members.empty()) fail(v.where, field, "{}", "at least one material");
        double sum = 0;
        for (const auto& m : v.members) {
            const std::string f = field + "." + m.key;
            if (!material_density(d_, m.key)) {
                std::vector<std::string> names;
                for (const auto& mat : d_.materials) names.push_back(mat.name);
                for (const auto& mat : builtin_materials()) names.emplace_back(mat.name);
                const std::string hint = closest(m.key, names);
                fail(m.key_where, f, "",
                     fmt::format("a material from the built-in table or [materials] ({}); \"{}\" "
                                 "is not one{}",
                                 joined(names), m.key,
                                 hint.empty() ? "" : fmt::format("; did you mean \"{}\"?", hint)));
            }
            const double w = read_number(m.value, f, "a mass fraction from 0 to 1");
            if (w < 0 || w > 1)
                fail(m.value.where, f, describe(m.value), "a mass fraction from 0 to 1");
            sum += w;
            b.composition.push_back(material_fraction{m.key, w});
        }
        if (std::abs(sum - 1.0) > 1e-6)
            fail(v.where, field, fmt::format("fractions summing to {}", sum),
                 "mass fractions that sum to 1 (within 1e-6)");
        record(field, v);
    }

    void read_semi_axes(const value_node& v, body_spec& b, const std::string& field) {
        const std::string expected = "three lengths, longest first, e.g. [\"130 km\", \"110 km\", "
                                     "\"95 km\"]";
        expect_type(v, value_node::type::array, field, expected);
        if (v.items.size() != 3) fail(v.where, field, describe(v), expected);
        std::array<double, 3> axes{};
        for (std::size_t k = 0; k < 3; ++k)
            axes[k] = read_positive(v.items[k], fmt::format("{}[{}]", field, k), dimension::length,
                                    "km", "semi-axis");
        if (!(axes[0] >= axes[1] && axes[1] >= axes[2]))
            fail(v.where, field, describe(v), "semi-axes in order a >= b >= c (longest first)");
        record(field, v);
        b.semi_axes_m = axes;
    }

    orbit_spec read_orbit(const value_node& v, const std::string& name, body_places& places) {
        const std::string prefix = body_field(name, "orbit");
        expect_type(v, value_node::type::table, prefix,
                    "a table of elements, e.g. { a = \"60 Rp\", e = 0.01 }");
        check_keys(v, prefix, orbit_keys, "an orbit");
        record(prefix, v);
        orbit_spec o;
        const value_node* a = nullptr;
        const value_node* period = nullptr;
        const value_node* sense = nullptr;
        const value_node* incl = nullptr;
        for (const auto& m : v.members) {
            const std::string field = body_field(name, "orbit." + m.key);
            const value_node& x = m.value;
            if (m.key == "a") {
                const quantity q = read_quantity(x, field, dimension::length, "km", true);
                if (!(q.value > 0)) fail(x.where, field, describe(x), "a positive semi-major axis");
                o.a = q;
                a = &x;
                places.orbit_a = x.where;
            } else if (m.key == "period") {
                o.period_s = read_positive(x, field, dimension::time, "d", "orbital period");
                period = &x;
            } else if (m.key == "e") {
                o.e = read_number(x, field, "an eccentricity 0 <= e < 1");
                if (!(o.e >= 0 && o.e < 1))
                    fail(x.where, field, describe(x), "0 <= e < 1 for a bound orbit");
            } else if (m.key == "i") {
                o.i_rad = read_angle(x, field);
                if (*o.i_rad < 0 || *o.i_rad > c::pi + 1e-12)
                    fail(x.where, field, describe(x),
                         "an inclination from 0 to 180 deg (above 90 deg is retrograde)");
                incl = &x;
            } else if (m.key == "node") {
                o.node_rad = read_angle(x, field);
            } else if (m.key == "peri") {
                o.peri_rad = read_angle(x, field);
            } else if (m.key == "mean_anomaly") {
                o.mean_anomaly_rad = read_angle(x, field);
            } else if (m.key == "sense") {
                expect_type(x, value_node::type::string, field, "\"prograde\" or \"retrograde\"");
                if (x.text == "prograde")
                    o.sense = orbit_sense::prograde;
                else if (x.text == "retrograde")
                    o.sense = orbit_sense::retrograde;
                else
                    fail(x.where, field, describe(x), "\"prograde\" or \"retrograde\"");
                record(field, x);
                sense = &x;
            }
        }
        if (a && period)
            fail(period->where, body_field(name, "orbit.period"), describe(*period),
                 "a or period, not both (Kepler's third law gives one from the other)");
        if (!a && !period)
            fail(v.where, body_field(name, "orbit.a"), "",
                 "a semi-major axis a (or an orbital period) in the orbit");
        if (sense && incl) {
            // A written i above 90 deg is already retrograde: it cannot also be "prograde".
            // With sense = "retrograde", i up to 90 deg is the tilt of a reversed orbit
            // (resolved as 180 deg - i).
            const double half = c::pi / 2;
            if (*o.sense == orbit_sense::prograde && *o.i_rad > half + 1e-12)
                fail(sense->where, body_field(name, "orbit.sense"), describe(*sense),
                     fmt::format("\"retrograde\" or no sense: orbit.i = {} is above 90 deg",
                                 describe(*incl)));
        }
        return o;
    }

    /// Whether a body's radius can be known before resolution (for "Rp" lengths of its moons).
    static bool has_radius_route(const body_spec& b) {
        return b.radius_m || b.semi_axes_m ||
               (b.mass_kg && (b.density_kg_m3 || !b.composition.empty()));
    }

    void check_tree() {
        const std::size_t n = d_.bodies.size();
        std::map<std::string, std::size_t> index;
        for (std::size_t k = 0; k < n; ++k) index[d_.bodies[k].name] = k;

        // Exactly one star: the one body that orbits nothing.
        std::vector<std::size_t> roots;
        for (std::size_t k = 0; k < n; ++k)
            if (d_.bodies[k].orbits.empty()) roots.push_back(k);
        if (roots.empty())
            fail(places_[0].table, "body", "every body has an orbits key",
                 "exactly one star: one body without orbits");
        if (roots.size() > 1) {
            const auto& second = d_.bodies[roots[1]];
            fail(places_[roots[1]].table, body_field(second.name, "orbits"), "",
                 fmt::format("orbits = \"<parent>\": only one body may orbit nothing (the star), "
                             "and body[{}] already does",
                             d_.bodies[roots[0]].name));
        }

        // Parents exist.
        std::vector<std::string> names;
        for (const auto& b : d_.bodies) names.push_back(b.name);
        for (std::size_t k = 0; k < n; ++k) {
            const auto& b = d_.bodies[k];
            if (b.orbits.empty()) continue;
            if (b.orbits == b.name)
                fail(places_[k].orbits, body_field(b.name, "orbits"), quote_text(b.orbits),
                     "the name of another body (a body cannot orbit itself)");
            if (!index.count(b.orbits)) {
                const std::string hint = closest(b.orbits, names);
                fail(places_[k].orbits, body_field(b.name, "orbits"), quote_text(b.orbits),
                     fmt::format("the name of a body in this design ({}){}", joined(names),
                                 hint.empty() ? "" : fmt::format("; did you mean \"{}\"?", hint)));
            }
        }

        // No cycles; depth of every body.
        std::vector<int> depth(n, -1);
        for (std::size_t k = 0; k < n; ++k) {
            std::vector<std::size_t> chain;
            std::size_t cur = k;
            while (!d_.bodies[cur].orbits.empty() && chain.size() <= n) {
                chain.push_back(cur);
                cur = index.at(d_.bodies[cur].orbits);
            }
            if (!d_.bodies[cur].orbits.empty()) {
                // The walk never reached the star: report the cycle in file order.
                std::set<std::size_t> in_cycle;
                std::size_t p = k;
                for (std::size_t s = 0; s <= n; ++s) p = index.at(d_.bodies[p].orbits);
                std::vector<std::string> loop;
                std::size_t q = p;
                do {
                    in_cycle.insert(q);
                    q = index.at(d_.bodies[q].orbits);
                } while (q != p);
                const std::size_t first = *in_cycle.begin();
                q = first;
                do {
                    loop.push_back(d_.bodies[q].name);
                    q = index.at(d_.bodies[q].orbits);
                } while (q != first);
                loop.push_back(d_.bodies[first].name);
                std::string cycle;
                for (const auto& s : loop) cycle += (cycle.empty() ? "" : " -> ") + s;
                fail(places_[first].orbits, body_field(d_.bodies[first].name, "orbits"),
                     quote_text(d_.bodies[first].orbits),
                     fmt::format("a chain of parents that ends at the star, not a cycle ({})",
                                 cycle));
            }
            depth[k] = static_cast<int>(chain.size());
        }

        for (std::size_t k = 0; k < n; ++k) {
            const auto& b = d_.bodies[k];
            const auto& pl = places_[k];
            if (depth[k] > 3)
                fail(pl.orbits, body_field(b.name, "orbits"), quote_text(b.orbits),
                     "a parent at most three levels below the star (star > planet > moon > "
                     "submoon); a sub-submoon is not supported");
            const auto expected_kind = static_cast<body_kind>(depth[k]);
            if (b.kind && *b.kind != expected_kind) {
                std::string why =
                    depth[k] == 0
                        ? std::string("it orbits nothing, so it is the star")
                        : fmt::format("it orbits the {} {}, so it is a {}",
                                      body_kind_name(static_cast<body_kind>(depth[k] - 1)),
                                      b.orbits, body_kind_name(expected_kind));
                fail(pl.kind, body_field(b.name, "kind"), quote_text(body_kind_name(*b.kind)),
                     fmt::format("\"{}\" or no kind: {}", body_kind_name(expected_kind), why));
            }
            if (depth[k] == 0 && b.orbit)
                fail(pl.orbit, body_field(b.name, "orbit"), "an orbit",
                     "no orbit for the star (the body without orbits); give orbits = \"<parent>\" "
                     "if this body is not the star");
            if (depth[k] > 0 && !b.orbit)
                fail(pl.table, body_field(b.name, "orbit"), "",
                     fmt::format("an orbit around {} (orbit = {{ a = ..., e = ... }} or a "
                                 "[body.orbit] table)",
                                 b.orbits));
            if (b.orbit && b.orbit->a) {
                const auto& parent = d_.bodies[index.at(b.orbits)];
                if (b.orbit->a->ref == length_ref::parent_hill && depth[k] == 1)
                    fail(pl.orbit_a, body_field(b.name, "orbit.a"),
                         format_exact(b.orbit->a->value, "RH"),
                         "a length in m, km or AU: RH needs a parent with a Hill sphere, and "
                         "the star has none");
                if (b.orbit->a->ref == length_ref::parent_radii && !has_radius_route(parent))
                    fail(pl.orbit_a, body_field(b.name, "orbit.a"),
                         format_exact(b.orbit->a->value, "Rp"),
                         fmt::format("an absolute length, or a radius for body[{}]: Rp needs "
                                     "the parent's radius (radius, semi_axes, or mass with "
                                     "density or composition)",
                                     parent.name));
            }
        }
    }
};

design parse_tree(const value_node& root, std::string_view text, const std::string& source_name) {
    design d = design_reader(source_name).read(root);
    d.source_name = source_name;
    d.source_text = std::string(text);
    return d;
}

// ---------------------------------------------------------------------------------------------
// Writers. Quantities go out in SI units with 17 significant digits (format_exact), plain
// numbers in the shortest form that reads back to the same double ({fmt} "{}").

std::string length_text(const quantity& q) {
    switch (q.ref) {
    case length_ref::parent_radii:
        return format_exact(q.value, "Rp");
    case length_ref::parent_hill:
        return format_exact(q.value, "RH");
    case length_ref::absolute:
        break;
    }
    return format_exact(q.value, "m");
}

std::string plain(double x) {
    return fmt::format("{}", x);
}

std::string toml_string(std::string_view s) {
    std::string out = "\"";
    for (char ch : s) {
        switch (ch) {
        case '"':
            out += "\\\"";
            break;
        case '\\':
            out += "\\\\";
            break;
        case '\n':
            out += "\\n";
            break;
        case '\t':
            out += "\\t";
            break;
        case '\r':
            out += "\\r";
            break;
        default:
            if (static_cast<unsigned char>(ch) < 0x20 || ch == 0x7f)
                out +=
                    fmt::format("\\u{:04X}", static_cast<unsigned>(static_cast<unsigned char>(ch)));
            else
                out += ch;
        }
    }
    return out + "\"";
}

std::string toml_key(std::string_view k) {
    const bool bare = !k.empty() && std::all_of(k.begin(), k.end(), [](char ch) {
        return std::isalnum(static_cast<unsigned char>(ch)) || ch == '_' || ch == '-';
    });
    return bare ? std::string(k) : toml_string(k);
}

std::string sense_name(orbit_sense s) {
    return s == orbit_sense::prograde ? "prograde" : "retrograde";
}

/// The fields of a body in schema order, as (key, TOML text, JSON value) triples.
template <class Emit>
void emit_body_fields(const body_spec& b, Emit&& emit) {
    if (b.kind)
        emit("kind", toml_string(body_kind_name(*b.kind)),
             nlohmann::ordered_json(body_kind_name(*b.kind)));
    if (!b.orbits.empty()) emit("orbits", toml_string(b.orbits), nlohmann::ordered_json(b.orbits));
    auto q = [&](const char* key, const std::optional<double>& v, std::string_view unit) {
        if (v) {
            const std::string s = format_exact(*v, unit);
            emit(key, toml_string(s), nlohmann::ordered_json(s));
        }
    };
    auto p = [&](const char* key, const std::optional<double>& v) {
        if (v) emit(key, plain(*v), nlohmann::ordered_json(*v));
    };
    q("mass", b.mass_kg, "kg");
    q("radius", b.radius_m, "m");
    q("density", b.density_kg_m3, "kg/m3");
    if (!b.composition.empty()) {
        std::string t = "{ ";
        nlohmann::ordered_json jc = nlohmann::ordered_json::object();
        for (std::size_t k = 0; k < b.composition.size(); ++k) {
            const auto& f = b.composition[k];
            t += (k ? ", " : "") + toml_key(f.material) + " = " + plain(f.fraction);
            jc[f.material] = f.fraction;
        }
        emit("composition", t + " }", jc);
    }
    if (b.semi_axes_m) {
        std::string t = "[";
        nlohmann::ordered_json ja = nlohmann::ordered_json::array();
        for (std::size_t k = 0; k < 3; ++k) {
            const std::string s = format_exact((*b.semi_axes_m)[k], "m");
            t += (k ? ", " : "") + toml_string(s);
            ja.push_back(s);
        }
        emit("semi_axes", t + "]", ja);
    }
    q("rotation_period", b.rotation_period_s, "s");
    q("obliquity", b.obliquity_rad, "rad");
    p("J2", b.j2);
    p("J4", b.j4);
    p("k2", b.k2);
    p("Q", b.tidal_q);
    q("time_lag", b.time_lag_s, "s");
    q("luminosity", b.luminosity_w, "W");
    q("age", b.age_s, "s");
}

template <class Emit>
void emit_orbit_fields(const orbit_spec& o, Emit&& emit) {
    if (o.a) {
        const std::string s = length_text(*o.a);
        emit("a", toml_string(s), nlohmann::ordered_json(s));
    }
    if (o.period_s) {
        const std::string s = format_exact(*o.period_s, "s");
        emit("period", toml_string(s), nlohmann::ordered_json(s));
    }
    emit("e", plain(o.e), nlohmann::ordered_json(o.e));
    auto angle = [&](const char* key, const std::optional<double>& v) {
        if (v) {
            const std::string s = format_exact(*v, "rad");
            emit(key, toml_string(s), nlohmann::ordered_json(s));
        }
    };
    angle("i", o.i_rad);
    angle("node", o.node_rad);
    angle("peri", o.peri_rad);
    angle("mean_anomaly", o.mean_anomaly_rad);
    if (o.sense)
        emit("sense", toml_string(sense_name(*o.sense)),
             nlohmann::ordered_json(sense_name(*o.sense)));
}

} // namespace

design parse_design(std::string_view text, design_format format, const std::string& source_name) {
    const value_node root = format == design_format::toml ? parse_toml_tree(text, source_name)
                                                          : parse_json_tree(text, source_name);
    return parse_tree(root, text, source_name);
}

design load_design_file(const std::string& path) {
    const source_location where{path, 0, 0};
    std::string ext = lower(std::filesystem::path(path).extension().string());
    design_format format = design_format::toml;
    if (ext == ".toml")
        format = design_format::toml;
    else if (ext == ".json")
        format = design_format::json;
    else
        throw input_error(where, fmt::format("cannot tell the design format from the extension "
                                             "\"{}\": expected .toml or .json",
                                             ext));
    std::error_code ec;
    if (!std::filesystem::is_regular_file(path, ec))
        throw input_error(where, "cannot read the design file: expected an existing regular file");
    std::ifstream in(path, std::ios::binary);
    std::ostringstream buf;
    buf << in.rdbuf();
    if (!in && !in.eof()) throw input_error(where, "cannot read the design file");
    const std::string text = buf.str();
    return parse_design(text, format, path);
}

std::string design_to_json(const design& d) {
    nlohmann::ordered_json root = nlohmann::ordered_json::object();
    nlohmann::ordered_json sys = nlohmann::ordered_json::object();
    if (!d.name.empty()) sys["name"] = d.name;
    if (!d.description.empty()) sys["description"] = d.description;
    if (d.seed) sys["seed"] = *d.seed;
    if (!sys.empty()) root["system"] = sys;
    if (!d.materials.empty()) {
        nlohmann::ordered_json mats = nlohmann::ordered_json::object();
        for (const auto& m : d.materials) {
            nlohmann::ordered_json e = nlohmann::ordered_json::object();
            e["density"] = format_exact(m.density_kg_m3, "kg/m3");
            if (!m.source.empty()) e["source"] = m.source;
            mats[m.name] = e;
        }
        root["materials"] = mats;
    }
    nlohmann::ordered_json bodies = nlohmann::ordered_json::array();
    for (const auto& b : d.bodies) {
        nlohmann::ordered_json jb = nlohmann::ordered_json::object();
        jb["name"] = b.name;
        emit_body_fields(b, [&](const char* key, const std::string&, nlohmann::ordered_json v) {
            jb[key] = std::move(v);
        });
        if (b.orbit) {
            nlohmann::ordered_json jo = nlohmann::ordered_json::object();
            emit_orbit_fields(*b.orbit, [&](const char* key, const std::string&,
                                            nlohmann::ordered_json v) { jo[key] = std::move(v); });
            jb["orbit"] = jo;
        }
        bodies.push_back(jb);
    }
    root["body"] = bodies;
    return root.dump(2) + "\n";
}

std::string design_to_toml(const design& d) {
    std::string out;
    if (!d.name.empty() || !d.description.empty() || d.seed) {
        out += "[system]\n";
        if (!d.name.empty()) out += "name = " + toml_string(d.name) + "\n";
        if (!d.description.empty()) out += "description = " + toml_string(d.description) + "\n";
        if (d.seed) out += fmt::format("seed = {}\n", *d.seed);
        out += "\n";
    }
    if (!d.materials.empty()) {
        out += "[materials]\n";
        for (const auto& m : d.materials) {
            out += toml_key(m.name) +
                   " = { density = " + toml_string(format_exact(m.density_kg_m3, "kg/m3"));
            if (!m.source.empty()) out += ", source = " + toml_string(m.source);
            out += " }\n";
        }
        out += "\n";
    }
    for (const auto& b : d.bodies) {
        out += "[[body]]\nname = " + toml_string(b.name) + "\n";
        emit_body_fields(
            b, [&](const char* key, const std::string& text, const nlohmann::ordered_json&) {
                out += fmt::format("{} = {}\n", key, text);
            });
        if (b.orbit) {
            out += "[body.orbit]\n";
            emit_orbit_fields(*b.orbit, [&](const char* key, const std::string& text,
                                            const nlohmann::ordered_json&) {
                out += fmt::format("{} = {}\n", key, text);
            });
        }
        out += "\n";
    }
    return out;
}

} // namespace moonwright
