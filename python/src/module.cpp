// pleat._core: the native half of the Python module. It holds pleat's own
// Network and runs the jobs of the command line (walk, certify, sample,
// inspect, eval, survey) in-process, without the GIL, returning plain
// Python values: exact numbers as fractions.Fraction, records as dicts.
// pleat/_results.py and _survey.py turn the dicts into documented result
// classes; keep the keys in step with them and with pleat/_core.pyi.
#include "convert.hpp"
#include "run_job.hpp"
#include "survey_jobs.hpp"

#include "cli/common.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/formats/survey_file.hpp"
#include "core/evaluate.hpp"
#include "core/jacobian.hpp"
#include "core/errors.hpp"
#include "core/network_io.hpp"
#include "core/onnx_io.hpp"
#include "core/random_network.hpp"
#include "enumerate/batch_dimension.hpp"
#include "enumerate/certified_by.hpp"
#include "enumerate/claim.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/region_record.hpp"
#include "enumerate/sampled_estimate.hpp"
#include "enumerate/survey.hpp"
#include "enumerate/walker.hpp"

#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <algorithm>
#include <memory>
#include <set>
#include <string>
#include <vector>

namespace pleat::python {
namespace {

// ---- Network ------------------------------------------------------------------

py::bytes onnx_bytes(const Network& network) { return py::bytes(write_onnx_model(network, PLEAT_VERSION).bytes); }

std::vector<std::size_t> widths(const Network& network) {
  std::vector<std::size_t> out{network.input_dim};
  for (const Layer& layer : network.layers) out.push_back(layer.width());
  return out;
}

py::list weight_matrices(const Network& network) {
  py::list out;
  for (const Layer& layer : network.layers) out.append(fraction_matrix(layer.weights));
  return out;
}

py::list bias_vectors(const Network& network) {
  py::list out;
  for (const Layer& layer : network.layers) out.append(fraction_list(layer.bias));
  return out;
}

// ---- Regions ------------------------------------------------------------------

py::dict facet_dict(const Network& network, const RegionFacet& facet) {
  py::dict out;
  out["neurons"] = facet.neurons;
  out["side"] = optional_value(facet.domain_side);
  out["normal"] = fraction_list(facet.normal);
  out["offset"] = fraction(facet.offset);
  out["neighbor"] = facet.neighbor ? py::object(py::str(pattern_text(network, *facet.neighbor))) : py::object(py::none());
  py::list others;
  for (const auto& other : facet.other_neighbors) others.append(pattern_text(network, other));
  out["other_neighbors"] = others;
  out["point"] = fraction_list(facet.relative_interior.point);
  return out;
}

py::dict region_dict(const Network& network, const Region& region) {
  py::dict out;
  out["id"] = region.id;
  out["pattern"] = pattern_text(network, region.pattern);
  out["point"] = fraction_list(region.interior.point);
  out["bounded"] = region.bounded;
  out["touches_domain_boundary"] = region.touches_domain_boundary;
  py::list facets;
  for (const auto& facet : region.facets) facets.append(facet_dict(network, facet));
  out["facets"] = facets;
  out["A"] = fraction_matrix(region.affine.linear);
  out["c"] = fraction_list(region.affine.offset);
  out["nonsmooth_neurons"] = region.nonsmooth_neurons;
  return out;
}

py::list nonsmooth_list(const Network& network,
                        const std::vector<std::pair<ActivationPattern, std::vector<std::size_t>>>& regions) {
  py::list out;
  for (const auto& [pattern, neurons] : regions) {
    py::dict entry;
    entry["pattern"] = pattern_text(network, pattern);
    entry["neurons"] = neurons;
    out.append(entry);
  }
  return out;
}

// The regions of a walk, held in C++ and handed out one at a time (the
// Python side converts a region only when it is looked at).
struct WalkRegions {
  std::shared_ptr<const Network> network;
  std::vector<Region> regions;
};

py::dict walk_summary_dict(const Network& network, const Domain& domain, const WalkSummary& summary) {
  py::dict out;
  out["domain"] = domain.describe();
  out["regions"] = summary.regions;
  out["bounded_regions"] = summary.bounded_regions;
  // Not a bound of a stopped walk (regions not found may join found pieces).
  if (summary.complete) out["linear_regions"] = summary.linear_regions;
  else out["linear_regions"] = py::none();
  out["regions_per_layer"] = summary.regions_per_layer;
  out["nonsmooth_regions"] = nonsmooth_list(network, summary.nonsmooth_regions);
  out["facets"] = summary.facets;
  out["complete"] = summary.complete;
  out["stop_reason"] = stop_reason_value(summary.stop_reason);
  out["certified"] = summary.certified;
  out["lp_queries"] = summary.counts.lp_queries;
  out["filter_settled"] = summary.counts.filter_settled;
  out["exact_fallbacks"] = summary.counts.exact_fallbacks;
  out["degenerate_crossings"] = summary.degenerate_crossings;
  out["seconds"] = summary.seconds;
  return out;
}

py::tuple walk(std::shared_ptr<Network> network, const py::object& domain_spec, unsigned threads,
               double time_limit, std::size_t max_regions, bool keep_regions) {
  const Domain domain = domain_argument(domain_spec, network->input_dim);
  auto regions = std::make_shared<WalkRegions>();
  regions->network = network;
  std::atomic<bool> interrupt{false};
  const WalkSummary summary = run_without_gil(
      [&] {
        WalkOptions options;
        options.threads = threads;
        options.time_limit_seconds = time_limit;
        options.max_regions = max_regions;
        options.interrupt = &interrupt;
        if (keep_regions)
          options.on_region = [&](const Region& region) {
            regions->regions.push_back(region);
            return true;
          };
        return walk_regions(*network, domain, options);
      },
      interrupt);
  return py::make_tuple(walk_summary_dict(*network, domain, summary), regions);
}

// ---- Certify ------------------------------------------------------------------

py::dict verdict_dict(const ClaimVerdict& verdict) {
  py::dict out;
  out["verdict"] = std::string(claim_word(verdict.verdict));
  out["reason"] = verdict.reason;
  return out;
}

py::dict certify_dict(const Network& network, const Domain& domain, const FunctionalDimensionResult& result) {
  py::dict out;
  out["domain"] = domain.describe();
  out["parametric_dimension"] = result.parametric_dimension;
  out["scaling_bound"] = result.scaling_bound;
  out["functional_dimension"] = optional_value(result.functional_dimension);
  out["lower_bound"] = result.lower_bound;
  out["upper_bound"] = result.upper_bound;
  out["certified"] = result.certified;
  out["regions_walked"] = result.regions_walked;
  out["regions_contributing"] = result.regions_contributing;
  out["walk_complete"] = result.walk_complete;
  out["early_stop"] = result.early_stop;
  // How the value was certified: "points" (no walk), "walk" (the rank met the
  // scaling bound during the walk), "kernel" (an exact kernel checked on
  // every region), None when not certified; as the CLI's --json.
  const std::optional<std::string_view> certified_by = certified_by_word(result);
  out["certified_by"] = certified_by ? py::cast(std::string(*certified_by)) : py::object(py::none());
  out["points_drawn"] = result.points_drawn;
  py::list witnesses;
  for (const RationalVector& point : result.witness_points) witnesses.append(fraction_list(point));
  out["witness_points"] = witnesses;
  out["stop_reason"] = stop_reason_value(result.stop_reason);
  out["regions_total"] = result.walk_complete ? py::cast(result.walk.regions) : py::object(py::none());
  out["nonsmooth_regions"] = nonsmooth_list(network, result.nonsmooth_regions);
  py::list extra;
  for (const auto& direction : result.extra_kernel) {
    py::dict entry;
    entry["vector"] = fraction_list(direction.dense());
    entry["mechanism"] = optional_text(std::string(mechanism_word(direction.mechanism)));
    entry["neurons"] = direction.neurons;
    extra.append(entry);
  }
  out["extra_kernel"] = extra;
  py::list summary;
  for (const auto& group : mechanism_groups(result)) {
    py::dict entry;
    entry["mechanism"] = optional_text(std::string(mechanism_word(group.mechanism)));
    entry["neurons"] = group.neurons;
    entry["directions"] = group.directions;
    summary.append(entry);
  }
  if (const auto limit = region_limit(network, result)) {
    py::dict entry;
    entry["mechanism"] = "too-few-regions";
    entry["regions"] = limit->smooth_regions;
    entry["rows_per_region"] = limit->rows_per_region;
    summary.append(entry);
  }
  out["extra_kernel_summary"] = summary;
  out["kernel"] = fraction_matrix(result.kernel);
  out["seconds"] = result.seconds;
  out["walk_seconds"] = result.walk.seconds;  // of which the walk (0 when none ran)
  out["points_seconds"] = result.points_seconds;  // and the points and lines before it
  return out;
}

py::dict certify(const Network& network, const py::object& domain_spec, unsigned threads, double time_limit,
                 bool full_walk, const std::optional<std::vector<std::vector<std::string>>>& point_texts,
                 const std::optional<std::uint64_t>& claim) {
  const Domain domain = domain_argument(domain_spec, network.input_dim);
  std::vector<RationalVector> points;
  if (point_texts)
    for (std::size_t i = 0; i < point_texts->size(); ++i)
      points.push_back(point_argument((*point_texts)[i], network.input_dim, "points[" + std::to_string(i) + "]"));
  std::atomic<bool> interrupt{false};
  BatchDimension batch;
  // time_limit covers the batch stage and the walk after it; a stop in the
  // batch stage leaves its bounds and no walk.
  const FunctionalDimensionResult result = run_without_gil(
      [&] {
        const StopRequest stop(&interrupt, time_limit);
        if (point_texts) {
          batch = batch_dimension(
              network, domain, points, [](std::size_t i) { return "points[" + std::to_string(i) + "]"; }, stop, threads);
          if (batch.stop_reason != StopReason::none) return certify_result_not_started(network, batch.stop_reason);
        }
        FunctionalDimensionOptions options;
        options.walk.threads = threads;
        options.walk.time_limit_seconds = time_limit > 0 ? time_limit - stop.elapsed_seconds() : 0;
        if (time_limit > 0 && options.walk.time_limit_seconds <= 0)
          return certify_result_not_started(network, StopReason::time_limit);
        options.walk.interrupt = &interrupt;
        // Counting the regions the points miss needs every region.
        options.stop_at_scaling_bound = !full_walk && !point_texts;
        options.keep_kernel = true;  // the result dict carries the exact kernel
        return certify_functional_dimension(network, domain, options);
      },
      interrupt);
  py::dict out = certify_dict(network, domain, result);
  if (point_texts) {
    py::dict batch_out;
    batch_out["points"] = batch.points;
    batch_out["batch_functional_dimension"] = optional_value(batch.batch.value());
    batch_out["lower_bound"] = batch.batch.lower;
    batch_out["upper_bound"] = batch.batch.upper;
    batch_out["points_checked"] = batch.points_checked;
    batch_out["regions_touched"] = batch.regions_touched;
    if (claim) batch_out["claim"] = verdict_dict(judge_claim_at_points(*claim, batch.batch.lower, batch.batch.upper));
    out["batch"] = batch_out;
  } else {
    out["batch"] = py::none();
  }
  if (claim) {
    py::dict verdict = verdict_dict(judge_claim(*claim, result));
    verdict["value"] = *claim;
    out["claim"] = verdict;
  } else {
    out["claim"] = py::none();
  }
  return out;
}

// ---- Sample -------------------------------------------------------------------

py::dict sample(const Network& network, std::uint64_t batch, std::uint64_t seed, const py::object& box, bool is_float32,
                unsigned threads, double time_limit) {
  if (batch == 0) throw input_error("batch: give at least 1 point");
  SampleOptions options;
  options.batch = batch;
  options.seed = seed;
  if (!box.is_none()) {
    const py::tuple bounds = box.cast<py::tuple>();
    const RationalVector lower = rational_vector(bounds[0].cast<std::vector<std::string>>(), "dist");
    const RationalVector upper = rational_vector(bounds[1].cast<std::vector<std::string>>(), "dist");
    if (lower.size() != network.input_dim)
      throw input_error("dist: expected (LO, HI) or " + std::to_string(network.input_dim) +
                        " intervals (one per axis), got " + std::to_string(lower.size()));
    options.dist = box_distribution(lower, upper, "dist");
  }
  options.is_float32 = is_float32;
  check_batch_size(batch, network, "batch");
  std::atomic<bool> interrupt{false};
  const SampleResult result = run_without_gil(
      [&] {
        options.walk.threads = threads;
        options.walk.time_limit_seconds = time_limit;
        options.walk.interrupt = &interrupt;
        return run_sampled_estimate(network, options);
      },
      interrupt);
  py::dict out;
  out["batch"] = batch;
  out["seed"] = seed;
  out["dtype"] = is_float32 ? "float32" : "float64";
  out["domain"] = distribution_domain(options.dist, network.input_dim).describe();
  if (result.interrupted_while_sampling) {
    out["interrupted_while_sampling"] = true;
    out["drawn"] = result.drawn;
    return out;
  }
  const FunctionalDimensionResult& certified = result.certified;
  out["interrupted_while_sampling"] = false;
  out["drawn"] = result.drawn;
  out["rank"] = result.rank.customary;
  out["rank_rtol_1e-6"] = result.rank.relative_1e6;
  out["rank_rtol_1e-10"] = result.rank.relative_1e10;
  out["sigma_max"] = result.rank.sigma_max;
  out["regions_touched"] = result.regions_touched;
  out["regions_total"] = certified.walk_complete ? py::cast(certified.walk.regions) : py::object(py::none());
  out["regions_walked"] = certified.walk.regions;
  out["certified_value"] = optional_value(certified.functional_dimension);
  out["certified"] = certified.certified;
  out["verdict"] = result.verdict ? py::object(py::str(std::string(sample_word(*result.verdict)))) : py::object(py::none());
  out["first_batch_reaching"] = optional_value(result.first_batch_reaching);
  out["points_on_bent_hyperplanes"] = result.points_on_bent_hyperplanes;
  out["lower_bound"] = certified.lower_bound;
  out["upper_bound"] = certified.upper_bound;
  out["scaling_bound"] = certified.scaling_bound;
  out["parametric_dimension"] = certified.parametric_dimension;
  out["stop_reason"] = stop_reason_value(result.stop_reason());
  py::list points;
  for (const RationalVector& point : result.points) points.append(fraction_list(point));
  out["points"] = points;
  out["seconds"] = result.seconds;
  return out;
}

// ---- Inspect and eval -----------------------------------------------------------

py::dict record_dict(const Network& network, const RegionRecord& record) {
  py::dict out = region_dict(network, record.region);
  py::list facets = out["facets"];
  for (std::size_t i = 0; i < record.region.facets.size(); ++i) {
    py::list layers;
    for (std::size_t neuron : record.region.facets[i].neurons) layers.append(network.layer_of_neuron(neuron) + 1);
    facets[i]["layers"] = layers;
  }
  auto list = [](const std::vector<RationalVector>& vectors) {
    py::list rows;
    for (const auto& v : vectors) rows.append(fraction_list(v));
    return rows;
  };
  out["bounded_in_domain"] = record.vertices.is_bounded();
  out["vertices"] = list(record.vertices.points);
  out["vertex_order"] = network.input_dim == 2 && record.vertices.lines.empty() ? py::object(py::str("counter-clockwise"))
                                                                                 : py::object(py::none());
  out["rays"] = list(record.vertices.rays);
  out["lines"] = list(record.vertices.lines);
  out["volume"] = record.volume ? fraction(*record.volume) : py::object(py::none());
  out["rank_contribution"] = record.rank;
  return out;
}

py::dict inspect(const Network& network, const py::object& domain_spec, const std::optional<std::vector<std::string>>& at,
                 const std::optional<std::string>& pattern_text_in) {
  const Domain domain = domain_argument(domain_spec, network.input_dim);
  py::dict out;
  out["domain"] = domain.describe();
  std::vector<RegionRecord> records;
  if (at) {
    const RationalVector point = point_argument(*at, network.input_dim, "at");
    const PointIncidence incidence = regions_at_point(network, domain, point);
    for (const auto& pattern : incidence.regions) {
      auto region = describe_region(network, domain, pattern);
      if (!region) throw std::logic_error("inspect: an incident cell lost its interior");
      records.push_back(make_region_record(network, std::move(*region)));
    }
    out["at"] = fraction_list(point);
    out["on_boundary"] = !incidence.vanishing_neurons.empty();
    out["vanishing_neurons"] = incidence.vanishing_neurons;
  } else {
    const ActivationPattern pattern = [&] {
      try {
        return parse_pattern(network, *pattern_text_in);
      } catch (const input_error& fault) {
        throw input_error(std::string("pattern: ") + fault.what());
      }
    }();
    auto region = describe_region(network, domain, pattern);
    if (!region)
      throw input_error("pattern " + *pattern_text_in + ": no region has this pattern on " + domain.describe() +
                        " (its cell has empty interior)");
    records.push_back(make_region_record(network, std::move(*region)));
    out["pattern"] = pattern_text(network, pattern);
  }
  py::list regions;
  for (const auto& record : records) regions.append(record_dict(network, record));
  out["regions"] = regions;
  return out;
}

py::dict evaluate(const Network& network, const std::vector<std::string>& x) {
  const RationalVector point = point_argument(x, network.input_dim, "x");
  const Evaluation result = evaluate_exact(network, point);
  const ActivationPattern around = pattern_around_point(network, point);  // 'z' where identically zero
  std::vector<std::size_t> zeros, identically_zero;
  for (std::size_t i = 0; i < around.states.size(); ++i) {
    if (around.states[i] == NeuronState::zero_at_point || around.states[i] == NeuronState::zero_on_region)
      zeros.push_back(i);
    if (around.states[i] == NeuronState::zero_on_region) identically_zero.push_back(i);
  }
  py::dict out;
  out["point"] = fraction_list(point);
  out["pattern"] = pattern_text(network, around);
  out["output"] = fraction_list(result.output);
  py::list preactivations;
  for (const RationalVector& layer : result.preactivation) preactivations.append(fraction_list(layer));
  out["preactivations"] = preactivations;
  out["zero_neurons"] = zeros;
  out["identically_zero_neurons"] = identically_zero;
  return out;
}

// ---- Errors -------------------------------------------------------------------

// pleat's exceptions as Python's: bad input and misuse are ValueError (the
// message names the field, file or line, as on the command line), a
// documented limit is pleat.LimitError, an unwritable result OSError.
void register_exceptions(py::module_& module) {
  static py::exception<limit_error> limit(module, "LimitError", PyExc_RuntimeError);
  py::register_exception_translator([](std::exception_ptr pointer) {
    try {
      if (pointer) std::rethrow_exception(pointer);
    } catch (const input_error& fault) {
      PyErr_SetString(PyExc_ValueError, fault.what());
    } catch (const usage_error& fault) {
      PyErr_SetString(PyExc_ValueError, fault.what());
    } catch (const limit_error& fault) {
      PyErr_SetString(limit.ptr(), fault.what());
    } catch (const cli::output_error& fault) {
      PyErr_SetString(PyExc_OSError, fault.what());
    }
  });
}

}  // namespace
}  // namespace pleat::python

PYBIND11_MODULE(_core, module) {
  using namespace pleat;
  using namespace pleat::python;
  module.doc() = "pleat's native core (use the pleat package, not this module)";
  module.attr("__version__") = PLEAT_VERSION;
  register_exceptions(module);

  py::class_<Network, std::shared_ptr<Network>>(module, "Network")
      .def_static("from_json", [](const std::string& text) { return std::make_shared<Network>(parse_network(text)); })
      .def_static("from_file", [](const std::string& path) { return std::make_shared<Network>(read_network_any(path)); })
      .def_static("random", &random_network_of)
      .def_static("from_onnx_bytes",
                  [](const py::bytes& bytes, const std::string& name) {
                    return std::make_shared<Network>(parse_onnx_model(std::string(bytes), name));
                  })
      .def("to_json", [](const Network& network) { return write_network(network); })
      .def("to_onnx_bytes", &onnx_bytes)
      .def_property_readonly("input_dim", [](const Network& network) { return network.input_dim; })
      .def_property_readonly("output_dim", &Network::output_dim)
      .def_property_readonly("widths", &widths)
      .def_property_readonly("output_relu", &Network::has_output_relu)
      .def_property_readonly("name", [](const Network& network) { return network.name; })
      .def_property_readonly("parametric_dimension", &Network::parametric_dimension)
      .def_property_readonly("hidden_neurons", &Network::hidden_neuron_count)
      .def_property_readonly("scaling_bound", [](const Network& network) { return scaling_bound(network); })
      .def("parameter_name", &Network::parameter_name)
      .def("weights", &weight_matrices)
      .def("biases", &bias_vectors)
      .def("__eq__", [](const Network& a, const Network& b) { return a == b; });

  py::class_<WalkRegions, std::shared_ptr<WalkRegions>>(module, "WalkRegions")
      .def("__len__", [](const WalkRegions& walk) { return walk.regions.size(); })
      .def("region", [](const WalkRegions& walk, std::size_t index) {
        if (index >= walk.regions.size()) throw py::index_error("region index out of range");
        return region_dict(*walk.network, walk.regions[index]);
      });

  module.def("walk", &walk);
  module.def("certify", &certify);
  module.def("sample", &sample);
  module.def("inspect", &inspect);
  module.def("evaluate", &evaluate);
  module.def("survey", &survey);
  module.def("read_survey", &read_survey);
}
