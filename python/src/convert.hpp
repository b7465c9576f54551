// Exact numbers between pleat and Python: a Rational becomes a
// fractions.Fraction (numerator and denominator as Python ints, no rounding
// anywhere); numbers coming in arrive as text ("3/4", "-2", "0.125") that the
// Python layer wrote exactly, and are read with the command line's grammar
// and messages.
#pragma once

#include "core/matrix.hpp"
#include "core/network.hpp"
#include "core/pattern.hpp"
#include "core/rational.hpp"
#include "core/stop.hpp"
#include "enumerate/domain.hpp"

#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <optional>
#include <string>
#include <vector>

namespace pleat::python {

namespace py = pybind11;

py::object fraction(const Rational& value);
py::list fraction_list(const RationalVector& values);
py::list fraction_matrix(const RationalMatrix& matrix);

// Items as exact text; messages name `what` and the item as the CLI does
// ("at: item 2 ('1/0'): zero denominator").
RationalVector rational_vector(const std::vector<std::string>& items, const std::string& what);
// The same with a check of the length ("at: expected 2 coordinates, got 3").
RationalVector point_argument(const std::vector<std::string>& items, std::size_t dimension, const std::string& what);

// A domain described by the Python layer (pleat/__init__.py, _domain_spec):
//   None                        -> R^n
//   ("box", [lo...], [hi...])   -> the open box, one interval per axis
//   ("polytope", text, where)   -> a pleat-domain/1 document (where names it)
//   ("file", path)              -> a pleat-domain/1 file
Domain domain_argument(const py::object& spec, std::size_t input_dim);

std::string pattern_text(const Network& network, const ActivationPattern& pattern);

// None for an empty text, else the text.
py::object optional_text(const std::string& text);

// None when the run was not stopped, else the stop reason's word.
py::object stop_reason_value(StopReason reason);

// None, or the value as Python converts it.
template <class T>
py::object optional_value(const std::optional<T>& value) {
  return value ? py::cast(*value) : py::object(py::none());
}

}  // namespace pleat::python
