// pleat.survey and pleat.read_survey: surveys of the functional dimension over
// random networks, run in-process as `pleat survey` runs them (the same file
// format, so either resumes the other's file), returned as dicts for
// pleat/_survey.py.
#pragma once

#include <pybind11/pybind11.h>

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace pleat::python {

namespace py = pybind11;

// Throws input_error (ValueError in Python) for a bad architecture, count,
// digits, shard or domain, with the command line's messages.
py::dict survey(const std::vector<std::size_t>& architecture, std::uint64_t samples, std::uint64_t seed,
                const std::string& init, std::uint64_t digits, const py::object& domain_spec, unsigned threads,
                double time_limit_each, const std::string& output, const std::string& shard_text);

// A survey file (pleat-survey/1) read back and summarised.
py::dict read_survey(const std::string& path);

}  // namespace pleat::python
