// Plausible generated designs (a star, one to three planets, their moons) drawn from a seed by
// common-practice rules, for pipelines, tests and benchmarks: what `moonwright generate` writes.
#pragma once

#include "engine/constants.hpp"
#include "engine/design.hpp"

#include <cstdint>
#include <iosfwd>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace moonwright {

/// Which planets a generated design has: rocky planets only, giant planets only, or both
/// (rocky planets inside, giants outside).
enum class generator_kind { rocky, giant, mixed };

/// "rocky", "giant", "mixed".
std::string_view generator_kind_name(generator_kind k);
/// The kind with this name ("rocky", "giant", "mixed"), or empty for any other text.
std::optional<generator_kind> parse_generator_kind(std::string_view name);

// The rules the generator keeps. They are public so that callers and tests can see what a
// generated design promises.

/// Snow line of a star of luminosity L [W]: 2.7 AU (L / L_sun)^(1/2) [m] (2.7 AU for the Sun as
/// in Hayashi 1981, from memory; the square-root scaling with luminosity is common practice).
double snow_line(double luminosity_w);
/// Rocky planets are drawn from 0.1 to this mass [kg]: 4 Earth masses (common practice, no source).
inline constexpr double generated_rocky_max_mass_kg = 4.0 * constants::M_earth;
/// Giant planets are drawn from this mass [kg] up to 3 Jupiter masses: 0.05 Jupiter masses,
/// about 16 Earth masses (common practice, no source).
inline constexpr double generated_giant_min_mass_kg = 0.05 * constants::M_jup;
/// Neighbouring planets, and neighbouring moons of one planet, are at least this many mutual
/// Hill radii apart: above the 10 of Chambers, Wetherill & Boss (1996) with room to spare, and
/// their orbits (pericentre of the outer, apocentre of the inner) at least two mutual Hill radii
/// apart (a choice; common practice, no source).
inline constexpr double generated_min_hill_spacing = 12.0;
/// A moon's pericentre is at least this multiple of the fluid Roche limit and of the sum of the
/// two radii (a choice; common practice, no source).
inline constexpr double generated_roche_margin = 1.5;
/// A moon's semi-major axis is at most this fraction of the prograde stability limit of
/// Domingos, Winter & Yokoyama (2006) for its eccentricity and its planet's (a choice: "well
/// inside"; common practice, no source).
inline constexpr double generated_stability_fraction = 0.5;

/// Design number `index` of the batch `seed`. The design depends only on (seed, index, kind),
/// never on how many designs are generated or in which order. Every generated design passes
/// the loader's validation and gives no error finding under the check (see the rules above).
design generate_design(std::uint64_t seed, std::uint64_t index, generator_kind kind);

/// A design as one line of compact JSON in the design-file schema, without a trailing newline.
/// Needs the design loader's writer (design_to_json).
std::string design_to_json_line(const design& d);

/// Writes designs first .. first + count - 1 of the batch `seed` to `out` as JSON lines, one
/// design per line, each line ending in "\n". Throws io_error when the stream fails.
void write_generated_json_lines(std::ostream& out, std::uint64_t seed, std::uint64_t first,
                                std::uint64_t count, generator_kind kind);
/// Designs 0 .. count - 1 of the batch `seed` as JSON lines in one string.
std::string generate_json_lines(std::uint64_t seed, std::uint64_t count, generator_kind kind);

/// File name of generated design `index`: zero-padded index and the lower-case design name,
/// e.g. "000042-vessara.toml" for extension "toml".
std::string generated_file_name(std::uint64_t index, const design& d, std::string_view extension);
/// Writes designs first .. first + count - 1 of the batch `seed` as TOML files into `folder`
/// (created when missing), named by generated_file_name. Returns the paths written, in index
/// order. Throws io_error when the folder or a file cannot be written.
std::vector<std::string> write_generated_toml_files(const std::string& folder, std::uint64_t seed,
                                                    std::uint64_t first, std::uint64_t count,
                                                    generator_kind kind);

} // namespace moonwright
