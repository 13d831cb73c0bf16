// The fxmimo Python module: the rooms' own functions with numpy arrays in and out. A thin layer:
// every word it returns is computed by the C++ core (requantizer, datapath, vectors), nothing
// is reimplemented here.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>
#include <pybind11/stl/filesystem.h>

#include <fstream>
#include <sstream>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/golden/trial.hpp"
#include "fxmimo/report/records.hpp"
#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/vector_set.hpp"

namespace py = pybind11;
namespace fp = fxmimo::fixedpoint;
namespace dp = fxmimo::datapath;
namespace an = fxmimo::analysis;
namespace vec = fxmimo::vectors;

namespace {

using int_array = py::array_t<std::int64_t, py::array::c_style | py::array::forcecast>;
using double_array = py::array_t<double, py::array::c_style | py::array::forcecast>;

fp::target target_of(const std::string& format, const std::string& rounding, const std::string& overflow) {
  fp::target t;
  t.fmt = fp::parse_format(format);
  const auto r = fp::parse_rounding_mode(rounding);
  const auto o = fp::parse_overflow_mode(overflow);
  if (!r) throw py::value_error("unknown rounding '" + rounding + "'");
  if (!o) throw py::value_error("unknown overflow '" + overflow + "'");
  if (t.fmt.container_bits() > 64) throw py::value_error(format + ": words wider than 64 bits do not fit int64");
  t.rounding = *r;
  t.overflow = *o;
  return t;
}

std::vector<py::ssize_t> shape_of(const py::array& a) { return {a.shape(), a.shape() + a.ndim()}; }

/// Words of `from_format` brought into the target; returns (words, overflow count).
py::tuple requantize(const int_array& words, const std::string& from_format, const std::string& to_format,
                     const std::string& rounding, const std::string& overflow) {
  const fp::format from = fp::parse_format(from_format);
  if (from.container_bits() > 64) throw py::value_error(from_format + ": words wider than 64 bits do not fit int64");
  const fp::requantizer<fp::int128> q(target_of(to_format, rounding, overflow));
  int_array out(shape_of(words));
  const std::int64_t* in = words.data();
  std::int64_t* res = out.mutable_data();
  const std::int64_t lo = from.is_signed ? -(std::int64_t{1} << (from.word_bits - 1)) : 0;
  const std::int64_t hi = from.is_signed         ? (std::int64_t{1} << (from.word_bits - 1)) - 1
                          : from.word_bits >= 63 ? INT64_MAX
                                                 : (std::int64_t{1} << from.word_bits) - 1;
  fp::counters c;
  for (py::ssize_t i = 0; i < words.size(); ++i) {
    if (in[i] < lo || in[i] > hi) {
      throw py::value_error("word " + std::to_string(in[i]) + " at flat index " + std::to_string(i) + " is outside " +
                            fp::to_q_string(from));
    }
    res[i] = static_cast<std::int64_t>(q(fp::int128{in[i]}, from.frac_bits, c));
  }
  return py::make_tuple(out, c.overflowed);
}

/// Doubles brought into a format exactly (no rounding before the target's own).
py::tuple quantize(const double_array& values, const std::string& format, const std::string& rounding,
                   const std::string& overflow) {
  const fp::requantizer<fp::int128> q(target_of(format, rounding, overflow));
  int_array out(shape_of(values));
  const double* in = values.data();
  std::int64_t* res = out.mutable_data();
  fp::counters c;
  for (py::ssize_t i = 0; i < values.size(); ++i) {
    if (std::isnan(in[i])) throw py::value_error("NaN at flat index " + std::to_string(i));
    res[i] = static_cast<std::int64_t>(fp::from_double(in[i], q, c));
  }
  return py::make_tuple(out, c.overflowed);
}

/// word * 2^-F as doubles (the nearest double of each value).
double_array values_of(const int_array& words, const std::string& format) {
  const fp::format f = fp::parse_format(format);
  double_array out(shape_of(words));
  for (py::ssize_t i = 0; i < words.size(); ++i) out.mutable_data()[i] = fp::to_double(words.data()[i], f.frac_bits);
  return out;
}

py::object json_to_python(const nlohmann::json& j) { return py::module_::import("json").attr("loads")(j.dump()); }

/// A node's words as numpy arrays shaped by its named dimensions.
struct node_words_py {
  vec::node_words words;

  py::array part(const std::vector<std::int64_t>& v) const {
    std::vector<py::ssize_t> shape(words.dim_sizes.begin(), words.dim_sizes.end());
    int_array a(shape);
    std::copy(v.begin(), v.end(), a.mutable_data());
    return a;
  }
};

node_words_py make_node_words(const std::string& node, const std::string& direction, const std::string& port,
                              const std::string& format, const std::string& rounding, const std::string& overflow,
                              const std::vector<std::string>& dims, const int_array& re, const py::object& im) {
  node_words_py out;
  vec::node_words& w = out.words;
  w.node = node;
  w.direction = direction;
  w.port = port;
  w.spec = target_of(format, rounding, overflow);
  w.dim_names = dims;
  if (static_cast<std::size_t>(re.ndim()) != dims.size()) {
    throw py::value_error("re has " + std::to_string(re.ndim()) + " dimensions, dims names " +
                          std::to_string(dims.size()));
  }
  for (py::ssize_t d = 0; d < re.ndim(); ++d) w.dim_sizes.push_back(static_cast<std::size_t>(re.shape(d)));
  w.re.assign(re.data(), re.data() + re.size());
  w.is_complex = !im.is_none();
  if (w.is_complex) {
    const int_array im_array = im.cast<int_array>();
    if (shape_of(im_array) != shape_of(re)) throw py::value_error("re and im differ in shape");
    w.im.assign(im_array.data(), im_array.data() + im_array.size());
  }
  vec::validate(w);
  return out;
}

/// A scenario file read once, with the runs the commands make of it.
struct scenario_py {
  std::string path;
  std::string text;
  fxmimo::golden::scenario scen;
  dp::datapath_config config;

  explicit scenario_py(const std::string& file) : path(file) {
    std::ifstream in(file, std::ios::binary);
    if (!in) throw py::value_error(file + ": cannot open the scenario file");
    std::ostringstream s;
    s << in.rdbuf();
    text = s.str();
    const auto doc = fxmimo::golden::parse_scenario_document(text, file);
    scen = fxmimo::golden::parse_scenario(doc);
    config = dp::parse_datapath_config(doc);
  }

  std::vector<std::uint64_t> trial_list(const py::object& trials) const {
    if (trials.is_none()) return an::first_trials(scen.num_trials);
    if (py::isinstance<py::int_>(trials)) return an::first_trials(trials.cast<int>());
    return trials.cast<std::vector<std::uint64_t>>();
  }

  std::vector<std::string> nodes() const {
    std::vector<std::string> out;
    for (dp::node_id id : dp::stages_for(scen).nodes()) out.emplace_back(dp::node_name(id));
    return out;
  }

  py::object run(const py::object& trials, unsigned threads) const {
    an::run_results r;
    {
      py::gil_scoped_release release;
      r = an::run_trials(scen, config, trial_list(trials), threads);
    }
    fxmimo::report::run_record rec = fxmimo::report::make_record(r);
    rec.scenario.source = path;
    return json_to_python(fxmimo::report::to_json(rec));
  }

  py::object sweep(const std::vector<std::string>& node_names, int lo, int hi, const std::string& vary,
                   const py::object& trials, unsigned threads) const {
    std::vector<dp::node_id> ids;
    for (const std::string& n : node_names) {
      const auto id = dp::parse_node_name(n);
      if (!id) throw py::value_error("unknown node '" + n + "' (nodes: " + dp::list_node_names() + ")");
      ids.push_back(*id);
    }
    const an::sweep_axis axis = vary == "frac"   ? an::sweep_axis::frac
                                : vary == "word" ? an::sweep_axis::word
                                : vary == "int"  ? an::sweep_axis::int_bits
                                                 : throw py::value_error("vary: expected frac, word or int");
    an::sweep_results r;
    {
      py::gil_scoped_release release;
      r = an::run_sweep(scen, config, ids, lo, hi, axis, trial_list(trials), threads);
    }
    return json_to_python(fxmimo::report::to_json(fxmimo::report::make_record(r)));
  }

  /// Every active node's words in one trial, by name.
  py::dict trial_words(std::uint64_t trial) const {
    if (trial >= static_cast<std::uint64_t>(scen.num_trials)) {
      throw py::value_error("trial " + std::to_string(trial) + " is outside the scenario's " +
                            std::to_string(scen.num_trials) + " trials");
    }
    const dp::datapath_plan plan = dp::stages_for(scen);
    const dp::fixed_trial fixed = dp::run_fixed_datapath(plan, scen, config, fxmimo::golden::run_trial(scen, trial));
    py::dict out;
    for (dp::node_id id : plan.nodes()) {
      const dp::word_matrix& m = fixed.words[dp::index_of(id)];
      node_words_py w;
      w.words.node = std::string(dp::node_name(id));
      w.words.direction = "out";
      w.words.spec = config[id].spec;
      const std::array<dp::dim, 2> dims = dp::dims_of(id);
      w.words.dim_names = {std::string(plan.dims.name(dims[0]))};
      w.words.dim_sizes = {static_cast<std::size_t>(m.rows)};
      if (dims[1] != dp::dim::one) {
        w.words.dim_names.emplace_back(plan.dims.name(dims[1]));
        w.words.dim_sizes.push_back(static_cast<std::size_t>(m.cols));
      }
      w.words.is_complex = m.is_complex;
      w.words.re = m.re;
      w.words.im = m.im;
      out[py::str(w.words.node)] = std::move(w);
    }
    return out;
  }
};

py::dict read_set(const std::filesystem::path& dir) {
  const vec::vector_set set = vec::read_vector_set(dir);
  py::dict out;
  out["scenario_name"] = set.man.info.scenario_name;
  out["scenario_text"] = set.man.info.scenario_text;
  out["seed"] = set.man.info.seed;
  out["trials"] = set.man.info.trials;
  out["form"] = std::string(vec::to_string(set.man.form));
  py::list records;
  for (const vec::node_words& r : set.records) records.append(node_words_py{r});
  out["records"] = records;
  return out;
}

void write_set(const std::filesystem::path& dir, const std::vector<node_words_py>& records,
               const std::string& scenario_name, const std::string& scenario_text, std::uint64_t seed,
               const std::vector<std::uint64_t>& trials, const std::string& form, const std::string& layout) {
  vec::manifest_info info;
  info.scenario_name = scenario_name;
  info.scenario_text = scenario_text;
  info.seed = seed;
  info.trials = trials;
  const auto f = vec::parse_file_form(form);
  const auto l = vec::parse_complex_layout(layout);
  if (!f) throw py::value_error("form: expected hex, bin or npy");
  if (!l) throw py::value_error("layout: expected split or interleaved");
  std::vector<vec::node_words> words;
  for (const node_words_py& r : records) words.push_back(r.words);
  vec::write_vector_set(dir, info, words, *f, *l);
}

}  // namespace

PYBIND11_MODULE(fxmimo, m) {
  m.doc() =
      "fxmimo: the bit-true fixed-point model of a massive-MIMO baseband datapath, with numpy arrays in and out. "
      "Results are simulations; sign-off belongs to RTL/gate-level verification and the applicable conformance "
      "tests.";
  py::register_exception<fp::format_error>(m, "FormatError", PyExc_ValueError);
  py::register_exception<vec::vector_error>(m, "VectorError", PyExc_ValueError);

  py::class_<fp::format>(m, "Format", "A fixed-point format: signed Qm.n (1+m+n bits) or unsigned UQm.n")
      .def(py::init([](const std::string& text) { return fp::parse_format(text); }), py::arg("text"))
      .def_readonly("word_bits", &fp::format::word_bits)
      .def_readonly("frac_bits", &fp::format::frac_bits)
      .def_readonly("signed", &fp::format::is_signed)
      .def_property_readonly("int_bits", &fp::format::int_bits)
      .def_property_readonly("lsb", &fp::format::lsb)
      .def_property_readonly("min_value", &fp::format::min_value)
      .def_property_readonly("max_value", &fp::format::max_value)
      .def("__str__", [](const fp::format& f) { return fp::to_q_string(f); })
      .def("__repr__", [](const fp::format& f) { return "Format('" + fp::to_q_string(f) + "')"; })
      .def("__eq__", [](const fp::format& a, const fp::format& b) { return a == b; });

  m.def("requantize", &requantize, py::arg("words"), py::arg("from_format"), py::arg("to_format"),
        py::arg("rounding") = "half_even", py::arg("overflow") = "saturate",
        "Words (int64 array) of from_format brought into to_format by rounding, then overflow handling; "
        "returns (words, number that overflowed).");
  m.def("quantize", &quantize, py::arg("values"), py::arg("format"), py::arg("rounding") = "half_even",
        py::arg("overflow") = "saturate",
        "Doubles brought into a format exactly; returns (words, number that overflowed).");
  m.def("values", &values_of, py::arg("words"), py::arg("format"), "word * 2^-F as doubles.");

  py::class_<node_words_py>(m, "NodeWords", "One node's words in one direction, shaped by its named dimensions")
      .def(py::init(&make_node_words), py::arg("node"), py::arg("direction"), py::arg("port"), py::arg("format"),
           py::arg("rounding"), py::arg("overflow"), py::arg("dims"), py::arg("re"), py::arg("im") = py::none())
      .def_property_readonly("node", [](const node_words_py& w) { return w.words.node; })
      .def_property_readonly("direction", [](const node_words_py& w) { return w.words.direction; })
      .def_property_readonly("port", [](const node_words_py& w) { return w.words.port_name(); })
      .def_property_readonly("format", [](const node_words_py& w) { return w.words.spec.fmt; })
      .def_property_readonly("rounding",
                             [](const node_words_py& w) { return std::string(fp::to_string(w.words.spec.rounding)); })
      .def_property_readonly("overflow",
                             [](const node_words_py& w) { return std::string(fp::to_string(w.words.spec.overflow)); })
      .def_property_readonly("dims", [](const node_words_py& w) { return py::tuple(py::cast(w.words.dim_names)); })
      .def_property_readonly("shape", [](const node_words_py& w) { return py::tuple(py::cast(w.words.dim_sizes)); })
      .def_property_readonly("is_complex", [](const node_words_py& w) { return w.words.is_complex; })
      .def_property_readonly("re", [](const node_words_py& w) { return w.part(w.words.re); })
      .def_property_readonly("im",
                             [](const node_words_py& w) -> py::object {
                               if (!w.words.is_complex) return py::none();
                               return w.part(w.words.im);
                             })
      .def("__repr__", [](const node_words_py& w) {
        std::string dims;
        for (std::size_t i = 0; i < w.words.dim_names.size(); ++i) {
          dims += (i ? ", " : "") + w.words.dim_names[i] + "=" + std::to_string(w.words.dim_sizes[i]);
        }
        return "NodeWords(" + vec::record_label(w.words) + ", " + fp::to_q_string(w.words.spec.fmt) + ", [" + dims +
               "])";
      });

  py::class_<scenario_py>(m, "Scenario", "A scenario file, read once")
      .def(py::init<const std::string&>(), py::arg("path"))
      .def_property_readonly("name", [](const scenario_py& s) { return s.scen.name; })
      .def_property_readonly("trials", [](const scenario_py& s) { return s.scen.num_trials; })
      .def_property_readonly("nodes", &scenario_py::nodes, "The active nodes in datapath order")
      .def("run", &scenario_py::run, py::arg("trials") = py::none(), py::arg("threads") = 0,
           "Golden model and bit-true datapath side by side: the run results (as `fxmimo run --json` writes them). "
           "trials: a count (0..n-1), a list of indices, or None for the scenario's own.")
      .def("sweep", &scenario_py::sweep, py::arg("nodes"), py::arg("lo"), py::arg("hi"), py::arg("vary") = "frac",
           py::arg("trials") = py::none(), py::arg("threads") = 0,
           "One node's width varied at a time (as `fxmimo sweep --json` writes it).")
      .def("trial_words", &scenario_py::trial_words, py::arg("trial"),
           "Every active node's words in one trial: {name: NodeWords}.");

  m.def("read_vector_set", &read_set, py::arg("dir"),
        "A vector set read and checked (sizes, SHA-256, words): its manifest facts and its records.");
  m.def("write_vector_set", &write_set, py::arg("dir"), py::arg("records"), py::arg("scenario_name") = "",
        py::arg("scenario_text") = "", py::arg("seed") = 0, py::arg("trials") = std::vector<std::uint64_t>{},
        py::arg("form") = "hex", py::arg("layout") = "split",
        "Writes records (NodeWords) as a vector set (hex for $readmemh and hread, bin, or npy).");
}
