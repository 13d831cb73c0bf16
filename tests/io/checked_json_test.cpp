// The checked JSON reader: documents parsed by nlohmann::json (the reference parser here), read
// back through checked_json; every fault is one message naming the file and the key path.
#include "fxmimo/io/checked_json.hpp"

#include <gtest/gtest.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <functional>

namespace {

using fxmimo::io::checked_json;
using fxmimo::io::json_error;
using nlohmann::json;

std::string message_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const json_error& e) {
    return e.what();
  }
  return "no error";
}

const json doc = json::parse(R"({
  "name": "x", "n": 3, "neg": -2, "big": 18446744073709551615, "r": 0.25, "nil": null, "flag": true,
  "points": [{"bits": 4}, {"bits": "five"}],
  "fmt": {"format": "Q1.6", "word_bits": 8, "frac_bits": 6, "signed": true},
  "ufmt": {"format": "UQ2.6", "word_bits": 8, "frac_bits": 6},
  "bad_fmt": {"format": "Q1.6", "word_bits": 9, "frac_bits": 6}
})");

TEST(checked_json, reads_every_type_and_names_the_path_of_a_fault) {
  const checked_json top(doc, "f.json");
  EXPECT_EQ(top["name"].text(), "x");
  EXPECT_EQ(top["n"].count(), 3u);
  EXPECT_EQ(top["neg"].int_value(), -2);
  EXPECT_EQ(top["big"].count(), 18446744073709551615ull);
  EXPECT_EQ(top["r"].number(), 0.25);
  EXPECT_FALSE(top["nil"].number_or_null().has_value());
  EXPECT_EQ(top["n"].number_or_null(), 3.0);
  EXPECT_TRUE(top["flag"].boolean());
  EXPECT_EQ(top["points"].size(), 2u);
  EXPECT_EQ(top["points"][0]["bits"].int_value(), 4);
  EXPECT_TRUE(top.find("nil").has_value());
  EXPECT_FALSE(top.find_value("nil").has_value());
  EXPECT_FALSE(top.find("absent").has_value());
  EXPECT_EQ(top.keys().front(), "bad_fmt") << "keys in the document's (sorted) order";

  EXPECT_EQ(message_of([&] { top["points"][1]["bits"].int_value(); }), "f.json: points[1].bits: expected an integer");
  EXPECT_EQ(message_of([&] { top["points"][0]["evm"].number(); }), "f.json: points[0].evm: missing");
  EXPECT_EQ(message_of([&] { top["points"][2]; }), "f.json: points: no element 2");
  EXPECT_EQ(message_of([&] { top["neg"].count(); }), "f.json: neg: expected a non-negative integer");
  EXPECT_EQ(message_of([&] { top["big"].int_value(); }),
            "f.json: big: expected an integer in [-2147483648, 2147483647]");
  EXPECT_EQ(message_of([&] { top["n"].integer(4, 9); }), "f.json: n: expected an integer in [4, 9]");
  EXPECT_EQ(message_of([&] { top["name"].number(); }), "f.json: name: expected a number");
  EXPECT_EQ(message_of([&] { top["name"].number_or_null(); }), "f.json: name: expected a number or null");
  EXPECT_EQ(message_of([&] { top["n"].text(); }), "f.json: n: expected a string");
  EXPECT_EQ(message_of([&] { top["n"].boolean(); }), "f.json: n: expected true or false");
  EXPECT_EQ(message_of([&] { top["name"]["x"]; }), "f.json: name: expected an object");
  EXPECT_EQ(message_of([&] { top["name"].size(); }), "f.json: name: expected an array");
  EXPECT_EQ(message_of([&] { top.fail("wrong"); }), "f.json: top level: wrong");
}

TEST(checked_json, a_format_is_its_q_text_and_the_widths_beside_it_must_agree) {
  const checked_json top(doc, "m.json");
  const fxmimo::fixedpoint::format f = top["fmt"].format_fields();
  EXPECT_TRUE(f.is_signed);
  EXPECT_EQ(f.word_bits, 8);
  EXPECT_EQ(f.frac_bits, 6);
  const fxmimo::fixedpoint::format u = top["ufmt"].format_fields();
  EXPECT_FALSE(u.is_signed) << "UQ2.6 stays unsigned";
  EXPECT_EQ(u.word_bits, 8);
  EXPECT_EQ(message_of([&] { top["bad_fmt"].format_fields(); }),
            "m.json: bad_fmt.format: 'Q1.6' disagrees with word_bits 9, frac_bits 6");
}

TEST(read_json_file, a_broken_or_missing_file_is_one_line_naming_it) {
  const auto dir = std::filesystem::temp_directory_path() / ("fxmimo_io_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  std::ofstream(dir / "broken.json") << "{\"a\": 1,, }";
  std::ofstream(dir / "ok.json") << "{\"a\": [1, 2]}";
  EXPECT_EQ(fxmimo::io::read_json_file(dir / "ok.json")["a"][1], 2);
  const std::string broken = message_of([&] { fxmimo::io::read_json_file(dir / "broken.json"); });
  EXPECT_EQ(broken.rfind((dir / "broken.json").string() + ": not valid JSON: parse error at line 1, column 9", 0), 0u)
      << broken;
  EXPECT_EQ(broken.find('\n'), std::string::npos);
  EXPECT_EQ(message_of([&] { fxmimo::io::read_json_file(dir / "none.json"); }),
            (dir / "none.json").string() + ": cannot open the file");
  EXPECT_EQ(message_of([&] { fxmimo::io::read_json_file(dir); }), dir.string() + ": is a directory, not a file");
  std::filesystem::remove_all(dir);
}

}  // namespace
