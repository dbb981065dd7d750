// Reading the capture experiment's short "key=value, key=value" specs into SI values.
#include "engine/capture_spec.hpp"

#include "engine/constants.hpp"
#include "engine/error.hpp"

#include <charconv>
#include <cmath>
#include <fmt/format.h>
#include <map>
#include <set>
#include <vector>

namespace moonwright {

namespace {

std::string_view trim(std::string_view s) {
    while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
    while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
    return s;
}

/// One key=value entry and the 1-based column where its key starts.
struct spec_entry {
    std::string key;
    std::string value;
    int column = 0;
};

/// Splits "k=v, k=v" and reports the field of every problem as "<label> <key>".
class spec_reader {
  public:
    spec_reader(std::string_view text, std::string label, std::set<std::string> known)
        : label_(std::move(label)), known_(std::move(known)) {
        std::size_t pos = 0;
        while (pos <= text.size()) {
            std::size_t comma = text.find(',', pos);
            if (comma == std::string_view::npos) comma = text.size();
            const std::string_view raw = text.substr(pos, comma - pos);
            const std::string_view item = trim(raw);
            const int column = static_cast<int>(pos + (raw.size() - trim_front(raw).size())) + 1;
            if (!item.empty()) {
                const auto eq = item.find('=');
                if (eq == std::string_view::npos)
                    throw input_error(source_location{label_, 1, column}, label_,
                                      "\"" + std::string(item) + "\"", "key=value");
                spec_entry e{std::string(trim(item.substr(0, eq))),
                             std::string(trim(item.substr(eq + 1))), column};
                if (!known_.contains(e.key)) {
                    std::string keys;
                    for (const auto& k : known_) keys += (keys.empty() ? "" : ", ") + k;
                    throw input_error(source_location{label_, 1, column}, label_,
                                      "\"" + e.key + "\"", "one of the keys " + keys);
                }
                if (entries_.contains(e.key))
                    throw input_error(source_location{label_, 1, column}, label_ + " " + e.key,
                                      "given twice", "each key once");
                entries_[e.key] = e;
            }
            pos = comma + 1;
        }
    }

    [[nodiscard]] bool has(const std::string& key) const { return entries_.contains(key); }

    [[noreturn]] void fail(const std::string& key, const std::string& found,
                           const std::string& expected) const {
        const auto it = entries_.find(key);
        const int column = it == entries_.end() ? 0 : it->second.column;
        throw input_error(source_location{label_, column > 0 ? 1 : 0, column}, label_ + " " + key,
                          found, expected);
    }
    [[noreturn]] void missing(const std::string& key, const std::string& expected) const {
        throw input_error(source_location{label_}, label_ + " " + key, "", expected);
    }

    [[nodiscard]] const std::string& raw(const std::string& key) const {
        return entries_.at(key).value;
    }

    quantity get(const std::string& key, dimension dim, std::string_view default_unit) const {
        try {
            return parse_quantity(raw(key), dim, default_unit);
        } catch (const quantity_error& e) {
            fail(key, e.found(), e.expected());
        }
    }
    double positive(const std::string& key, dimension dim, std::string_view default_unit) const {
        const quantity q = get(key, dim, default_unit);
        if (!(q.value > 0)) fail(key, "\"" + raw(key) + "\"", "a positive value");
        return q.value;
    }
    double number(const std::string& key) const {
        return get(key, dimension::dimensionless, "1").value;
    }
    double speed(const std::string& key) const {
        try {
            const double v = parse_speed(raw(key));
            if (!(v > 0)) fail(key, "\"" + raw(key) + "\"", "a positive speed");
            return v;
        } catch (const quantity_error& e) {
            fail(key, e.found(), e.expected());
        }
    }
    /// A length that may be absolute, in Rp or in RH.
    quantity length(const std::string& key) const {
        const quantity q = get(key, dimension::length, "m");
        if (!(q.value > 0)) fail(key, "\"" + raw(key) + "\"", "a positive length");
        return q;
    }
    /// "lo:hi <unit>" or a single length (lo = hi).
    std::pair<quantity, quantity> range(const std::string& key) const {
        const std::string& v = raw(key);
        const auto colon = v.find(':');
        if (colon == std::string::npos) {
            const quantity q = length(key);
            return {q, q};
        }
        // The unit follows the upper end and applies to both ends.
        const std::string hi_text = v.substr(colon + 1);
        std::string lo_text = v.substr(0, colon);
        std::string_view hi_view = trim(hi_text);
        std::size_t unit_at = 0;
        while (unit_at < hi_view.size() &&
               (std::isdigit(static_cast<unsigned char>(hi_view[unit_at])) ||
                std::string_view(".eE+-").find(hi_view[unit_at]) != std::string_view::npos))
            ++unit_at;
        lo_text += " " + std::string(trim(hi_view.substr(unit_at)));
        quantity lo, hi;
        try {
            lo = parse_quantity(lo_text, dimension::length, "m");
            hi = parse_quantity(hi_text, dimension::length, "m");
        } catch (const quantity_error& e) {
            fail(key, e.found(), "a range lo:hi of lengths, e.g. 0.1:1 RH (" + e.expected() + ")");
        }
        if (!(lo.value >= 0) || !(hi.value > lo.value))
            fail(key, "\"" + v + "\"", "a range lo:hi with 0 <= lo < hi");
        return {lo, hi};
    }

  private:
    static std::string_view trim_front(std::string_view s) {
        while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
        return s;
    }
    std::string label_;
    std::set<std::string> known_;
    std::map<std::string, spec_entry> entries_;
};

double parse_number(std::string_view s, bool& ok) {
    double x = 0;
    const char* first = s.data();
    const char* last = s.data() + s.size();
    if (first != last && *first == '+') ++first;
    const auto [ptr, ec] = std::from_chars(first, last, x);
    ok = ec == std::errc() && ptr == last && std::isfinite(x);
    return x;
}

} // namespace

std::string_view capture_mechanism_name(capture_mechanism m) {
    switch (m) {
    case capture_mechanism::gravity:
        return "gravity";
    case capture_mechanism::binary:
        return "binary";
    case capture_mechanism::drag:
        return "drag";
    }
    return "gravity";
}

capture_mechanism parse_capture_mechanism(std::string_view text) {
    for (auto m : {capture_mechanism::gravity, capture_mechanism::binary, capture_mechanism::drag})
        if (capture_mechanism_name(m) == text) return m;
    throw input_error(source_location{"<options>"}, "--mechanism", std::string(text),
                      "gravity, binary or drag");
}

double parse_speed(std::string_view text) {
    const std::string found = "\"" + std::string(text) + "\"";
    const std::string expected = "a speed as a number with a unit (m/s, km/s, AU/d, ...), or a "
                                 "bare number in m/s";
    const std::string_view s = trim(text);
    std::size_t at = 0;
    while (at < s.size() && (std::isdigit(static_cast<unsigned char>(s[at])) ||
                             std::string_view(".eE+-").find(s[at]) != std::string_view::npos))
        ++at;
    bool ok = false;
    const double number = parse_number(s.substr(0, at), ok);
    if (!ok) throw quantity_error(found, expected);
    const std::string_view unit = trim(s.substr(at));
    if (unit.empty()) return number;
    const auto slash = unit.find('/');
    if (slash == std::string_view::npos) throw quantity_error(found, expected);
    const unit_info* len = find_unit(trim(unit.substr(0, slash)));
    const unit_info* tim = find_unit(trim(unit.substr(slash + 1)));
    if (len == nullptr || tim == nullptr || len->dim != dimension::length ||
        len->ref != length_ref::absolute || tim->dim != dimension::time)
        throw quantity_error(found, expected);
    return number * len->to_si / tim->to_si;
}

intruder_spec parse_intruder_spec(std::string_view text, const std::string& label) {
    const spec_reader r(text, label,
                        {"mass", "radius", "density", "vinf", "b", "q", "start", "approach", "a",
                         "e", "i", "node", "peri", "M"});
    intruder_spec s;
    if (r.has("mass")) s.mass_kg = r.positive("mass", dimension::mass, "kg");
    if (r.has("radius")) {
        const quantity q = r.length("radius");
        if (q.ref != length_ref::absolute)
            r.fail("radius", "\"" + r.raw("radius") + "\"", "an absolute length (m, km)");
        s.radius_m = q.value;
    }
    if (r.has("density")) s.density_kg_m3 = r.positive("density", dimension::density, "kg/m3");

    const bool hyper = r.has("vinf") || r.has("b") || r.has("q");
    const bool helio = r.has("a");
    if (hyper && helio)
        r.fail("a", "\"" + r.raw("a") + "\"",
               "either vinf with b or q (planetocentric arrival) or a, e, i, ... (heliocentric), "
               "not both");
    if (!hyper && !helio)
        r.missing("vinf", "vinf=<speed> with b=<lo:hi> (or q=<lo:hi>), or heliocentric a=, e=");
    if (hyper) {
        s.arrival = arrival_kind::hyperbolic;
        if (!r.has("vinf")) r.missing("vinf", "the speed at infinity, e.g. vinf=1 km/s");
        s.vinf_m_s = r.speed("vinf");
        if (r.has("b") == r.has("q"))
            r.missing("b", "one impact-parameter range b=lo:hi or pericentre range q=lo:hi");
        const std::string key = r.has("b") ? "b" : "q";
        s.range_is_pericentre = key == "q";
        std::tie(s.range_min, s.range_max) = r.range(key);
        if (s.range_min.ref != s.range_max.ref)
            r.fail(key, "\"" + r.raw(key) + "\"", "both ends in the same unit");
        if (r.has("start")) s.start = r.length("start");
        if (r.has("approach")) {
            const std::string& a = r.raw("approach");
            if (a == "isotropic")
                s.planar = false;
            else if (a == "planar")
                s.planar = true;
            else
                r.fail("approach", a, "isotropic or planar");
        }
        for (const char* k : {"e", "i", "node", "peri", "M"})
            if (r.has(k))
                r.fail(k, "\"" + r.raw(k) + "\"",
                       "no heliocentric element with a planetocentric arrival (vinf, b/q)");
    } else {
        s.arrival = arrival_kind::heliocentric;
        const quantity a = r.length("a");
        if (a.ref != length_ref::absolute)
            r.fail("a", "\"" + r.raw("a") + "\"", "an absolute length (AU, km, m)");
        s.a_m = a.value;
        if (r.has("e")) s.e = r.number("e");
        if (!(s.e >= 0 && s.e < 1))
            r.fail("e", r.raw("e"), "0 <= e < 1 (a bound heliocentric orbit)");
        if (r.has("i")) s.i_rad = r.get("i", dimension::angle, "deg").value;
        if (r.has("node")) s.node_rad = r.get("node", dimension::angle, "deg").value;
        if (r.has("peri")) s.peri_rad = r.get("peri", dimension::angle, "deg").value;
        if (r.has("M")) s.mean_anomaly_rad = r.get("M", dimension::angle, "deg").value;
        for (const char* k : {"start", "approach"})
            if (r.has(k))
                r.fail(k, "\"" + r.raw(k) + "\"",
                       "no " + std::string(k) + " with a heliocentric arrival");
    }
    return s;
}

pair_spec parse_pair_spec(std::string_view text, const std::string& label) {
    const spec_reader r(text, label, {"m1", "m2", "r1", "r2", "sep", "e"});
    pair_spec p;
    if (!r.has("m1")) r.missing("m1", "the mass of member 1, e.g. m1=1e18 kg");
    if (!r.has("m2")) r.missing("m2", "the mass of member 2, e.g. m2=5e17 kg");
    if (!r.has("sep")) r.missing("sep", "the pair's separation (semi-major axis), e.g. sep=200 km");
    p.m1_kg = r.positive("m1", dimension::mass, "kg");
    p.m2_kg = r.positive("m2", dimension::mass, "kg");
    for (const char* k : {"r1", "r2", "sep"}) {
        if (!r.has(k)) continue;
        const quantity q = r.length(k);
        if (q.ref != length_ref::absolute)
            r.fail(k, "\"" + r.raw(k) + "\"", "an absolute length (m, km)");
        (std::string_view(k) == "r1"   ? p.r1_m
         : std::string_view(k) == "r2" ? p.r2_m
                                       : p.sep_m) = q.value;
    }
    if (r.has("e")) p.e = r.number("e");
    if (!(p.e >= 0 && p.e < 1)) r.fail("e", r.raw("e"), "0 <= e < 1 (a bound pair)");
    if (p.r1_m > 0 && p.r2_m > 0 && p.sep_m * (1 - p.e) <= p.r1_m + p.r2_m)
        r.fail("sep", "\"" + r.raw("sep") + "\"",
               "a pericentre sep (1 - e) larger than r1 + r2 (members apart)");
    return p;
}

envelope_spec parse_envelope_spec(std::string_view text, const std::string& label) {
    const spec_reader r(text, label, {"rho0", "k", "cutoff", "cd", "gas"});
    envelope_spec e;
    if (!r.has("rho0"))
        r.missing("rho0", "the gas density at the planet's surface, e.g. rho0=1e-6 kg/m3");
    e.rho0_kg_m3 = r.positive("rho0", dimension::density, "kg/m3");
    if (r.has("k")) {
        e.k = r.number("k");
        if (!(e.k >= 0)) r.fail("k", r.raw("k"), "a power-law index k >= 0");
    }
    if (r.has("cutoff")) {
        e.cutoff = r.length("cutoff");
        if (e.cutoff.ref == length_ref::parent_radii && e.cutoff.value <= 1)
            r.fail("cutoff", r.raw("cutoff"), "a cutoff beyond the planet's surface (> 1 Rp)");
    }
    if (r.has("cd")) e.drag_coefficient = r.positive("cd", dimension::dimensionless, "1");
    if (r.has("gas")) {
        const std::string& g = r.raw("gas");
        if (g == "static")
            e.corotating = false;
        else if (g == "corotating")
            e.corotating = true;
        else
            r.fail("gas", g, "static or corotating");
    }
    return e;
}

} // namespace moonwright
