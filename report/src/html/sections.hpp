#pragma once
// The HTML report's sections, one file per kind of results file: each gives its section title,
// its line for the page's summary table, the number of trials it rests on, and draws its body
// from the typed record (records.hpp), never from raw JSON.

#include <cstdint>
#include <optional>
#include <string>

#include "fxmimo/report/records.hpp"
#include "markup.hpp"

namespace fxmimo::report::html {

std::string section_title(const run_record& r);
std::string headline(const run_record& r);
std::optional<std::uint64_t> trials_of(const run_record& r);
void render_section(page& pg, const run_record& r);

std::string section_title(const range_record& r);
std::string headline(const range_record& r);
std::optional<std::uint64_t> trials_of(const range_record& r);
void render_section(page& pg, const range_record& r);

std::string section_title(const sweep_record& r);
std::string headline(const sweep_record& r);
std::optional<std::uint64_t> trials_of(const sweep_record& r);
void render_section(page& pg, const sweep_record& r);

std::string section_title(const tune_record& r);
std::string headline(const tune_record& r);
std::optional<std::uint64_t> trials_of(const tune_record& r);
void render_section(page& pg, const tune_record& r);

std::string section_title(const key_sweep_record& r);
std::string headline(const key_sweep_record& r);
std::optional<std::uint64_t> trials_of(const key_sweep_record& r);
void render_section(page& pg, const key_sweep_record& r);

/// The percentiles of a run or a verification as a sentence and the empirical CDF of the
/// per-(trial, user) SINR loss (with the loss limit, where given, as a dashed line).
void render_distribution(page& pg, const distribution_record& d, const std::optional<double>& loss_limit,
                         const std::string& limit_label);

/// count / bits (a bit-error or LLR-flip rate); no value when no bit was sent.
metric per_bit(std::uint64_t count, std::uint64_t bits);

/// "12", or "?" when the file does not say.
std::string trials_text(const std::optional<std::uint64_t>& trials);

}  // namespace fxmimo::report::html
