// Vector sets: manifest contents, SHA-256 of every file checked by a fresh hash (coreutils
// sha256sum where present, else our FIPS 180-4 implementation), round trips in every form and
// layout, the all-or-nothing write, and the reader's validation.
#include "fxmimo/vectors/vector_set.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>
#include <random>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"
#include "fxmimo/vectors/sha256.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

namespace fs = std::filesystem;
using testing::run_command;
using testing::scratch_dir;
using testing::slurp;
using testing::spit;

constexpr std::uint64_t seed = 7201;

node_words make_record(std::string node, std::string direction, std::string port, fp::format fmt,
                       std::vector<std::string> names, std::vector<std::size_t> sizes, bool is_complex,
                       std::mt19937_64& rng) {
  node_words r;
  r.node = std::move(node);
  r.direction = std::move(direction);
  r.port = std::move(port);
  r.spec = {fmt, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  r.dim_names = std::move(names);
  r.dim_sizes = std::move(sizes);
  r.is_complex = is_complex;
  const int w = fmt.word_bits;
  auto draw = [&] { return static_cast<std::int64_t>(rng() << (64 - w)) >> (64 - w); };  // full range, signed
  for (std::size_t i = 0; i < r.num_elements(); ++i) {
    r.re.push_back(draw());
    if (is_complex) r.im.push_back(draw());
  }
  r.re[0] = -(std::int64_t{1} << (w - 1));  // the most negative word is always present
  return r;
}

std::vector<node_words> sample_records() {
  std::mt19937_64 rng(seed);
  return {make_record("tx_acc", "in", "weights", {true, 16, 14}, {"antenna", "user"}, {4, 3}, true, rng),
          make_record("tx_acc", "in", "symbols", {true, 12, 10}, {"user", "symbol"}, {3, 5}, true, rng),
          make_record("tx_acc", "out", "", {true, 22, 16}, {"antenna", "symbol"}, {4, 5}, true, rng),
          make_record("norm", "out", "", {true, 18, 17}, {}, {}, false, rng),
          make_record("dac", "out", "", {true, 13, 11}, {"trial", "antenna", "symbol"}, {2, 4, 5}, true, rng)};
}

manifest_info sample_info() {
  manifest_info info;
  info.scenario_name = "harbour-crane-16.toml";
  info.scenario_text = "# a scenario of our own\n[array]\nantennas = 4\n";
  info.seed = 99;
  info.trials = {0, 3};
  return info;
}

void expect_same_records(const std::vector<node_words>& got, const std::vector<node_words>& want) {
  ASSERT_EQ(got.size(), want.size());
  for (std::size_t i = 0; i < want.size(); ++i) {
    EXPECT_EQ(got[i].node, want[i].node);
    EXPECT_EQ(got[i].direction, want[i].direction);
    EXPECT_EQ(got[i].port_name(), want[i].port_name());
    EXPECT_EQ(got[i].spec, want[i].spec);
    EXPECT_EQ(got[i].dim_names, want[i].dim_names);
    EXPECT_EQ(got[i].dim_sizes, want[i].dim_sizes);
    EXPECT_EQ(got[i].is_complex, want[i].is_complex);
    EXPECT_EQ(got[i].re, want[i].re) << record_label(want[i]) << " seed " << seed;
    EXPECT_EQ(got[i].im, want[i].im) << record_label(want[i]) << " seed " << seed;
  }
}

struct form_case {
  file_form form;
  complex_layout layout;
};

class VectorSetRoundTrip : public ::testing::TestWithParam<form_case> {};

TEST_P(VectorSetRoundTrip, ReadBackEqualsWritten) {
  const auto dir = scratch_dir("set");
  const auto records = sample_records();
  write_vector_set(dir, sample_info(), records, GetParam().form, GetParam().layout);
  const vector_set set = read_vector_set(dir);
  expect_same_records(set.records, records);
  EXPECT_EQ(set.man.form, GetParam().form);
  EXPECT_EQ(set.man.layout, GetParam().layout);
  // Only the manifest and the listed files: no temporaries left.
  std::size_t entries = 0;
  for (const auto& e : fs::directory_iterator(dir)) {
    ++entries;
    EXPECT_EQ(e.path().filename().string().find(".partial"), std::string::npos) << e.path();
  }
  EXPECT_EQ(entries, set.man.files.size() + 1);
}

INSTANTIATE_TEST_SUITE_P(Forms, VectorSetRoundTrip,
                         ::testing::Values(form_case{file_form::hex, complex_layout::split},
                                           form_case{file_form::bin, complex_layout::split},
                                           form_case{file_form::npy, complex_layout::split},
                                           form_case{file_form::hex, complex_layout::interleaved},
                                           form_case{file_form::npy, complex_layout::interleaved}),
                         [](const auto& param_info) {
                           return std::string(to_string(param_info.param.form)) + "_" +
                                  std::string(to_string(param_info.param.layout));
                         });

TEST(VectorSetManifest, AnInterleavedFilesDimsEndWithThePartAxisAndCountEveryWord) {
  // A testbench that sizes its memory from dims must get every word: word_count = product(dims).
  const auto dir = scratch_dir("set");
  write_vector_set(dir, sample_info(), sample_records(), file_form::hex, complex_layout::interleaved);
  nlohmann::json m = nlohmann::json::parse(slurp(dir / "manifest.json"));
  EXPECT_EQ(m["schema"], 2);
  std::size_t interleaved = 0;
  for (const auto& f : m["files"]) {
    std::size_t product = 1;
    for (const auto& d : f["dims"]) product *= d["size"].get<std::size_t>();
    EXPECT_EQ(f["word_count"].get<std::size_t>(), product) << f["file"];
    if (f["part"] == "re_im") {
      ++interleaved;
      EXPECT_EQ(f["dims"].back(), nlohmann::json({{"name", "part"}, {"size", 2}})) << f["file"];
    }
  }
  EXPECT_GT(interleaved, 0u);
  const vector_set now = read_vector_set(dir);

  // The same set as schema 1 wrote it (no part axis) reads into the same records.
  nlohmann::json old = m;
  old["schema"] = 1;
  for (auto& f : old["files"]) {
    if (f["part"] == "re_im") f["dims"].erase(f["dims"].size() - 1);
  }
  spit(dir / "manifest.json", old.dump(2));
  expect_same_records(read_vector_set(dir).records, now.records);

  // A word count that is not the product of the dims is one error naming the key.
  nlohmann::json bad = m;
  bad["files"][0]["word_count"] = bad["files"][0]["word_count"].get<std::size_t>() + 1;
  spit(dir / "manifest.json", bad.dump(2));
  try {
    read_vector_set(dir);
    ADD_FAILURE() << "no error for a word count beside its dims";
  } catch (const vector_error& e) {
    EXPECT_NE(std::string(e.what()).find("files[0].word_count: "), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("is not the product of the dims"), std::string::npos) << e.what();
  }
}

TEST(VectorSet, ManifestRecordsEveryField) {
  const auto dir = scratch_dir("set");
  const auto records = sample_records();
  const manifest_info info = sample_info();
  write_vector_set(dir, info, records);
  const auto j = nlohmann::json::parse(slurp(dir / "manifest.json"));
  EXPECT_EQ(j["kind"], "fxmimo vector set");
  EXPECT_EQ(j["schema"], 2);  // 2 since interleaved files list their part axis in dims
  EXPECT_FALSE(j["tool"]["version"].get<std::string>().empty());
  EXPECT_EQ(j["scenario"]["text"], info.scenario_text);
  EXPECT_EQ(j["scenario"]["name"], info.scenario_name);
  EXPECT_EQ(j["seed"], 99);
  EXPECT_EQ(j["trials"], nlohmann::json::array({0, 3}));
  EXPECT_EQ(j["form"], "hex");
  EXPECT_EQ(j["complex_layout"], "split");

  const bool have_sha256sum = testing::have_program("sha256sum");
  // The scenario digest, from a fresh hash of the text.
  if (have_sha256sum) {
    spit(dir.parent_path() / "scenario.txt", info.scenario_text);
    const auto r =
        run_command("sha256sum '" + (dir.parent_path() / "scenario.txt").string() + "'", dir.parent_path() / "log.txt");
    EXPECT_EQ(j["scenario"]["sha256"], r.output.substr(0, 64));
  }
  EXPECT_EQ(j["scenario"]["sha256"], sha256_hex(info.scenario_text));

  // tx_acc/out is complex and split: two files with identical metadata.
  std::vector<nlohmann::json> acc;
  for (const auto& f : j["files"]) {
    if (f["node"] == "tx_acc" && f["direction"] == "out") acc.push_back(f);
    // Every file's SHA-256 and size equal a fresh look at the file (sha256sum: independent).
    const fs::path path = dir / f["file"].get<std::string>();
    EXPECT_EQ(f["bytes"].get<std::uint64_t>(), fs::file_size(path)) << path;
    if (have_sha256sum) {
      const auto r = run_command("sha256sum '" + path.string() + "'", dir.parent_path() / "log.txt");
      EXPECT_EQ(f["sha256"], r.output.substr(0, 64)) << path;
    } else {
      EXPECT_EQ(f["sha256"], sha256_file_hex(path)) << path;
    }
  }
  ASSERT_EQ(acc.size(), 2U);
  EXPECT_EQ(acc[0]["file"], "tx_acc.out.re.hex");
  EXPECT_EQ(acc[1]["file"], "tx_acc.out.im.hex");
  EXPECT_EQ(acc[0]["part"], "re");
  EXPECT_EQ(acc[1]["part"], "im");
  EXPECT_EQ(acc[0]["format"], "Q5.16");  // signed Qm.n = 1 + m + n bits: 22 = 1 + 5 + 16
  EXPECT_EQ(acc[0]["word_bits"], 22);
  EXPECT_EQ(acc[0]["frac_bits"], 16);
  EXPECT_EQ(acc[0]["signed"], true);
  EXPECT_EQ(acc[0]["rounding"], "half_even");
  EXPECT_EQ(acc[0]["overflow"], "saturate");
  EXPECT_EQ(acc[0]["dims"], nlohmann::json::parse(R"([{"name":"antenna","size":4},{"name":"symbol","size":5}])"));
  EXPECT_EQ(acc[0]["word_count"], 20);
  // File names of ports and real records.
  std::vector<std::string> names;
  for (const auto& f : j["files"]) names.push_back(f["file"]);
  EXPECT_NE(std::find(names.begin(), names.end(), "tx_acc.in.weights.re.hex"), names.end());
  EXPECT_NE(std::find(names.begin(), names.end(), "norm.out.hex"), names.end());
  // Words in the file: 22 bits -> 6 hex digits per line, 20 lines.
  const std::string text = slurp(dir / "tx_acc.out.re.hex");
  EXPECT_EQ(text.size(), 20U * 7U);
}

TEST(VectorSet, ValidationFailureWritesNothing) {
  const auto dir = scratch_dir("set");
  fs::remove(dir);
  auto records = sample_records();
  records.back().re.back() = std::int64_t{1} << 20;  // outside Q1.11 (13 bits): checked before any write
  EXPECT_THROW(write_vector_set(dir, sample_info(), records), vector_error);
  EXPECT_FALSE(fs::exists(dir));
  records = sample_records();
  records.push_back(records.front());  // the same record twice
  EXPECT_THROW(write_vector_set(dir, sample_info(), records), vector_error);
  EXPECT_FALSE(fs::exists(dir));
}

TEST(VectorSet, FailureMidwayLeavesNothingCompleteLooking) {
  // A set is written; then a second run fails at its last data file (a directory stands where
  // the file must go, so the rename fails). Afterwards: no manifest, no temporaries, none of the
  // second run's files, and the reader refuses the directory.
  const auto dir = scratch_dir("set");
  auto records = sample_records();
  write_vector_set(dir, sample_info(), std::vector<node_words>(records.begin(), records.begin() + 2));
  fs::create_directories(dir / "dac.out.im.hex" / "blocker");
  try {
    write_vector_set(dir, sample_info(), records);
    FAIL() << "the write should have failed";
  } catch (const vector_error& e) {
    EXPECT_NE(std::string(e.what()).find("dac.out.im.hex"), std::string::npos) << e.what();
  }
  EXPECT_FALSE(fs::exists(dir / "manifest.json"));
  for (const auto& e : fs::directory_iterator(dir)) {
    const std::string name = e.path().filename().string();
    EXPECT_EQ(name.find(".partial"), std::string::npos) << name;
    // Only the blocker remains, and the hidden marker that names the files a rewrite may leave.
    EXPECT_TRUE(name == "dac.out.im.hex" || name == rewrite_marker_name) << "left behind: " << name;
  }
  EXPECT_THROW(read_vector_set(dir), vector_error);
  // With the blocker gone, the next writer takes the directory for the earlier set it was.
  fs::remove_all(dir / "dac.out.im.hex");
  write_vector_set(dir, sample_info(), records);
  EXPECT_EQ(read_vector_set(dir).records.size(), records.size());
  EXPECT_FALSE(fs::exists(dir / rewrite_marker_name));
}

TEST(VectorSet, AWriterKilledHalfWayLeavesADirectoryTheNextOneCleans) {
  // What SIGKILL leaves in the middle of a first write (tests/cli/kill_test.cpp does it for real):
  // the marker, some files renamed into place, a temporary, no manifest.
  const auto dir = scratch_dir("set");
  const auto records = sample_records();
  const std::string first = file_name_for(records.front(), "real", file_form::hex);
  spit(dir / std::string(rewrite_marker_name), nlohmann::json(std::vector<std::string>{first}).dump());
  spit(dir / first, "half\n");
  spit(dir / ("." + first + ".partial-12345"), "hal");
  EXPECT_THROW(read_vector_set(dir), vector_error) << "not a set";
  write_vector_set(dir, sample_info(), records);
  EXPECT_EQ(read_vector_set(dir).records.size(), records.size());
  for (const auto& e : fs::directory_iterator(dir)) {
    const std::string name = e.path().filename().string();
    EXPECT_NE(name[0], '.') << "left behind: " << name;
  }
}

TEST(VectorSet, RefusesAMarkerThatIsNotAListOfNames) {
  const auto dir = scratch_dir("set");
  spit(dir / std::string(rewrite_marker_name), "[\"../outside\"]");
  EXPECT_THROW(write_vector_set(dir, sample_info(), sample_records()), vector_error);
  EXPECT_FALSE(fs::exists(dir / "manifest.json"));
}

TEST(VectorSet, RewriteReplacesAnEarlierSet) {
  const auto dir = scratch_dir("set");
  const auto records = sample_records();
  write_vector_set(dir, sample_info(), records);
  // A smaller set in the same place: the files only the old set had are gone.
  write_vector_set(dir, sample_info(), std::vector<node_words>(records.begin(), records.begin() + 1));
  EXPECT_FALSE(fs::exists(dir / "norm.out.hex"));
  EXPECT_EQ(read_vector_set(dir).records.size(), 1U);
}

TEST(VectorSet, RefusesAForeignDirectory) {
  const auto dir = scratch_dir("set");
  spit(dir / "notes.txt", "someone's notes\n");
  EXPECT_THROW(write_vector_set(dir, sample_info(), sample_records()), vector_error);
  EXPECT_EQ(slurp(dir / "notes.txt"), "someone's notes\n");
}

TEST(VectorSet, ReaderCatchesTamperedFiles) {
  const auto dir = scratch_dir("set");
  write_vector_set(dir, sample_info(), sample_records());
  const std::string original = slurp(dir / "norm.out.hex");
  // Same size, one digit changed: only the SHA-256 can tell.
  std::string changed = original;
  changed[0] = changed[0] == '0' ? '1' : '0';
  spit(dir / "norm.out.hex", changed);
  try {
    (void)read_vector_set(dir);
    FAIL() << "tampering not detected";
  } catch (const vector_error& e) {
    EXPECT_NE(std::string(e.what()).find("SHA-256"), std::string::npos) << e.what();
  }
  spit(dir / "norm.out.hex", original.substr(0, original.size() - 1));
  EXPECT_THROW(read_vector_set(dir), vector_error);
  spit(dir / "norm.out.hex", original);
  EXPECT_NO_THROW(read_vector_set(dir));
  // A manifest whose format text disagrees with its widths.
  auto j = nlohmann::json::parse(slurp(dir / "manifest.json"));
  j["files"][0]["format"] = "Q3.3";
  spit(dir / "manifest.json", j.dump());
  EXPECT_THROW(read_vector_set(dir), vector_error);
}

TEST(VectorSet, FindByNodeAndPort) {
  const auto dir = scratch_dir("set");
  write_vector_set(dir, sample_info(), sample_records());
  const vector_set set = read_vector_set(dir);
  ASSERT_NE(set.find("tx_acc", "out"), nullptr);
  EXPECT_EQ(set.find("tx_acc", "in", "symbols")->dim_names, (std::vector<std::string>{"user", "symbol"}));
  EXPECT_THROW((void)set.find("tx_acc", "in"), vector_error);  // two ports: ambiguous
  EXPECT_EQ(set.find("gram", "out"), nullptr);
}

TEST(NodeWords, CoordinatesAreRowMajor) {
  node_words r;
  r.dim_names = {"trial", "antenna", "symbol"};
  r.dim_sizes = {2, 4, 5};
  // flat = (trial * 4 + antenna) * 5 + symbol
  EXPECT_EQ(r.coordinates(0), (std::vector<std::size_t>{0, 0, 0}));
  EXPECT_EQ(r.coordinates(7), (std::vector<std::size_t>{0, 1, 2}));
  EXPECT_EQ(r.coordinates(39), (std::vector<std::size_t>{1, 3, 4}));
  EXPECT_EQ(r.coordinates((1 * 4 + 2) * 5 + 3), (std::vector<std::size_t>{1, 2, 3}));
}

}  // namespace
}  // namespace fxmimo::vectors
