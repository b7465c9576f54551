// pleat.survey and pleat.read_survey: surveys of the functional dimension over
// random networks, run in-process as `pleat survey` runs them (the same file
// format, so either resumes the other's file), returned as dicts for
// pleat/_survey.py; and Network.random, one of those networks.
#pragma once

#include "core/network.hpp"

#include <pybind11/pybind11.h>

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

namespace pleat::python {

namespace py = pybind11;

// Throws input_error (ValueError in Python) for a bad architecture, count,
// digits, shard or domain, with the command line's messages.
py::dict survey(const std::vector<std::size_t>& architecture, std::uint64_t samples, std::uint64_t seed,
                const std::string& init, std::uint64_t digits, const py::object& domain_spec, unsigned threads,
                double time_limit_each, const std::string& output, const std::string& shard_text);

// The network `pleat random --arch A --seed S --sample I --init INIT --digits N`
// writes (survey sample I of seed S). Throws input_error for a bad
// architecture, init or digits, with the survey's messages.
std::shared_ptr<Network> random_network_of(const std::vector<std::size_t>& architecture, std::uint64_t seed,
                                           std::uint64_t sample, const std::string& init, std::uint64_t digits);

// A survey file (pleat-survey/1) read back and summarised.
py::dict read_survey(const std::string& path);

}  // namespace pleat::python
