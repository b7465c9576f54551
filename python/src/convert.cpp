#include "convert.hpp"

#include "cli/common.hpp"
#include "core/domain_io.hpp"

#include <Python.h>

#include <climits>

namespace pleat::python {
namespace {

// A GMP integer as a Python int, exactly (through base-16 text beyond a long).
py::object python_int(const mpz_class& value) {
  if (value.fits_slong_p()) return py::reinterpret_steal<py::object>(PyLong_FromLong(value.get_si()));
  const std::string digits = value.get_str(16);
  PyObject* number = PyLong_FromString(digits.c_str(), nullptr, 16);
  if (!number) throw py::error_already_set();
  return py::reinterpret_steal<py::object>(number);
}

std::string joined(const std::vector<std::string>& items) {
  std::string text;
  for (std::size_t i = 0; i < items.size(); ++i) text += (i ? "," : "") + items[i];
  return text;
}

// A comma inside an item would split it: refuse it with the item's number.
void check_items(const std::vector<std::string>& items, const std::string& what) {
  for (std::size_t i = 0; i < items.size(); ++i)
    if (items[i].find(',') != std::string::npos || items[i].empty())
      throw input_error(what + ": item " + std::to_string(i + 1) + " ('" + items[i] + "') is not a number");
}

}  // namespace

py::object fraction(const Rational& value) {
  static PyObject* fraction_type = nullptr;  // fractions.Fraction, kept for the process's life
  // One Fraction(0) for every zero (Fractions are immutable): the kernel and the
  // extra directions certify returns are mostly zeros (221 071 of the kernel's
  // 223 366 entries on 2,15,15,15,15,1), and a Fraction built from two ints costs
  // a gcd and a call into Python's fractions module each.
  static PyObject* zero = nullptr;
  if (!fraction_type) fraction_type = py::object(py::module_::import("fractions").attr("Fraction")).release().ptr();
  const auto make = [&](const mpz_class& num, const mpz_class& den) {
    return py::reinterpret_borrow<py::object>(fraction_type)(python_int(num), python_int(den));
  };
  if (sgn(value.get_num()) != 0) return make(value.get_num(), value.get_den());
  if (!zero) zero = make(0, 1).release().ptr();
  return py::reinterpret_borrow<py::object>(zero);
}

py::list fraction_list(const RationalVector& values) {
  py::list out;
  for (const Rational& value : values) out.append(fraction(value));
  return out;
}

py::list fraction_matrix(const RationalMatrix& matrix) {
  py::list rows;
  for (std::size_t r = 0; r < matrix.rows(); ++r) rows.append(fraction_list(matrix.row(r)));
  return rows;
}

RationalVector rational_vector(const std::vector<std::string>& items, const std::string& what) {
  if (items.empty()) return {};
  check_items(items, what);
  return cli::parse_number_list(joined(items), what);
}

RationalVector point_argument(const std::vector<std::string>& items, std::size_t dimension, const std::string& what) {
  if (items.empty()) return cli::parse_point("", dimension, what);
  check_items(items, what);
  return cli::parse_point(joined(items), dimension, what);
}

Domain domain_argument(const py::object& spec, std::size_t input_dim) {
  if (spec.is_none()) return make_whole_space(input_dim);
  const py::tuple parts = spec.cast<py::tuple>();
  const std::string kind = parts[0].cast<std::string>();
  if (kind == "box") {
    const RationalVector lower = rational_vector(parts[1].cast<std::vector<std::string>>(), "domain");
    const RationalVector upper = rational_vector(parts[2].cast<std::vector<std::string>>(), "domain");
    if (lower.size() != input_dim)
      throw input_error("domain: expected (LO, HI) or " + std::to_string(input_dim) +
                        " intervals (one per axis), got " + std::to_string(lower.size()));
    try {
      return make_box(lower, upper);
    } catch (const input_error& fault) {
      throw input_error(std::string("domain: ") + fault.what());
    }
  }
  PolytopeDocument document;
  std::string where;
  if (kind == "file") {
    where = parts[1].cast<std::string>();
    document = read_domain_file(where);
  } else if (kind == "polytope") {
    where = parts[2].cast<std::string>();
    try {
      document = parse_domain(parts[1].cast<std::string>());
    } catch (const input_error& fault) {
      throw input_error(where + ": " + fault.what());
    }
  } else {
    throw usage_error("domain: unknown kind '" + kind + "'");
  }
  if (document.input_dim != input_dim)
    throw input_error(where + ": input_dim is " + std::to_string(document.input_dim) + " but the network has " +
                      std::to_string(input_dim) + " inputs");
  std::vector<lp::Constraint> constraints;
  for (const auto& [normal, offset] : document.constraints) constraints.push_back(lp::Constraint{normal, offset});
  try {
    return make_polytope(input_dim, std::move(constraints));
  } catch (const input_error& fault) {
    throw input_error(where + ": " + fault.what());
  }
}

std::string pattern_text(const Network& network, const ActivationPattern& pattern) {
  return format_pattern(network, pattern);
}

py::object optional_text(const std::string& text) { return text.empty() ? py::object(py::none()) : py::str(text); }

py::object stop_reason_value(StopReason reason) {
  return reason == StopReason::none ? py::object(py::none()) : py::str(to_string(reason));
}

}  // namespace pleat::python
