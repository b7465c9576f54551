// pleat certify: the functional dimension, certified exactly; the batch
// functional dimension at given points; a verdict on someone else's estimate.
#include "cli/commands/certify_files.hpp"
#include "cli/formats/batch_json.hpp"
#include "cli/formats/bundle_json.hpp"
#include "cli/command.hpp"
#include "cli/common.hpp"
#include "cli/domain_options.hpp"
#include "cli/formats/output_file.hpp"
#include "cli/formats/points_file.hpp"
#include "cli/process_group.hpp"
#include "cli/progress.hpp"
#include "cli/formats/region_json.hpp"
#include "cli/signals.hpp"
#include "cli/walk_options.hpp"
#include "core/network_io.hpp"
#include "core/jacobian.hpp"
#include "enumerate/batch_dimension.hpp"
#include "enumerate/certified_by.hpp"
#include "enumerate/claim.hpp"
#include "enumerate/distributed_certify.hpp"
#include "enumerate/functional_dimension.hpp"
#include "enumerate/proof_bundle.hpp"
#include "enumerate/walker.hpp"

#include <fstream>
#include <iostream>
#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <memory>
#include <optional>
#include <set>
#include <sstream>

namespace pleat::cli {
namespace {

struct CertifyArguments {
  std::string network_path;
  DomainOptions domain;
  bool json = false;
  bool quiet = false;
  bool full_walk = false;
  WalkLimitOptions limits;
  std::string rows_path;
  std::string kernel_path;
  std::string witness_path;
  std::string points_path;
  std::string bundle_path;
  std::optional<std::uint64_t> claim;
  std::uint64_t claim_value = 0;
};

// --kernel-out, --witness-out and --rows-out (its rows written as the run
// formed them: rows, when given) of the network's certify run (with --points
// too: the run beside the points' rank, or none when stopped_in_batch), after
// the result is printed: a file that cannot be written (exit 1) does not take
// the printed value with it. Returns true when a Ctrl-C cut the rows short (exit 130).
bool write_result_files(const CertifyArguments& arguments, const FunctionalDimensionResult& result, RowsOut* rows,
                        bool stopped_in_batch = false) {
  if (!arguments.kernel_path.empty()) write_kernel(arguments.kernel_path, result);
  if (!arguments.witness_path.empty()) write_witnesses(arguments.witness_path, result, stopped_in_batch);
  return rows && rows->finish(result, stopped_in_batch);  // last: it may throw a failure met during the run
}

// --rows-out's file, taking each region's rows as the run forms them; null without it.
std::unique_ptr<RowsOut> rows_out(const CertifyArguments& arguments) {
  return arguments.rows_path.empty() ? nullptr : std::make_unique<RowsOut>(arguments.rows_path);
}

Json verdict_json(const ClaimVerdict& verdict) { return Json{{"verdict", claim_word(verdict.verdict)}, {"reason", verdict.reason}}; }

// The mechanism's word, or null when none was recognised.
Json mechanism_json(Mechanism mechanism) {
  return mechanism == Mechanism::none ? Json(nullptr) : Json(std::string(mechanism_word(mechanism)));
}

// "dead neuron 5: 5 directions", "zero outgoing weights of neuron 2: 2 directions"
std::string mechanism_text(const MechanismGroup& group) {
  std::string numbers;
  for (std::size_t i = 0; i < group.neurons.size(); ++i) numbers += (i ? ", " : "") + std::to_string(group.neurons[i]);
  const std::string neuron = group.neurons.size() > 1 ? "neurons " : "neuron ";
  std::string text;
  switch (group.mechanism) {
    case Mechanism::dead_neuron: text = "dead " + neuron + numbers; break;
    case Mechanism::always_active_neuron: text = "always-active " + neuron + numbers; break;
    case Mechanism::zero_outgoing_weights: text = "zero outgoing weights of " + neuron + numbers; break;
    case Mechanism::duplicate_neurons: text = "duplicate neurons " + numbers; break;
    case Mechanism::none: text = "no recognised mechanism"; break;
  }
  return text + ": " + std::to_string(group.directions) + (group.directions == 1 ? " direction" : " directions");
}

Json mechanism_summary_json(const Network& network, const FunctionalDimensionResult& result) {
  Json summary = Json::array();
  for (const auto& group : mechanism_groups(result))
    summary.push_back({{"mechanism", mechanism_json(group.mechanism)},
                       {"neurons", group.neurons},
                       {"directions", group.directions}});
  if (const auto limit = region_limit(network, result))
    summary.push_back({{"mechanism", "too-few-regions"},
                       {"regions", limit->smooth_regions},
                       {"rows_per_region", limit->rows_per_region}});
  return summary;
}

Json result_to_json(const Network& network, const Domain& domain, const FunctionalDimensionResult& result) {
  Json nonsmooth = Json::array();
  for (const auto& [pattern, neurons] : result.nonsmooth_regions)
    nonsmooth.push_back({{"pattern", format_pattern(network, pattern)}, {"neurons", neurons}});
  Json extra = Json::array();
  for (const auto& direction : result.extra_kernel) {
    Json vector = Json::object();
    for (const auto& [c, value] : direction.entries) vector[network.parameter_name(c)] = format_rational(value);
    extra.push_back({{"vector", vector},
                     {"mechanism", mechanism_json(direction.mechanism)},
                     {"neurons", direction.neurons}});
  }
  Json out;
  out["format"] = "pleat-certify/1";
  out["domain"] = domain_to_json(domain);
  out["parametric_dimension"] = result.parametric_dimension;
  out["scaling_bound"] = result.scaling_bound;
  out["functional_dimension"] = result.functional_dimension ? Json(*result.functional_dimension) : Json(nullptr);
  out["lower_bound"] = result.lower_bound;
  out["upper_bound"] = result.upper_bound;
  out["certified"] = result.certified;
  out["regions_walked"] = result.regions_walked;
  out["regions_contributing"] = result.regions_contributing;
  out["walk_complete"] = result.walk_complete;
  out["early_stop"] = result.early_stop;
  const std::optional<std::string_view> certified_by = certified_by_word(result);
  out["certified_by"] = certified_by ? Json(std::string(*certified_by)) : Json(nullptr);
  out["points_drawn"] = result.points_drawn;
  Json witnesses = Json::array();
  for (const RationalVector& point : result.witness_points) {
    Json coordinates = Json::array();
    for (const Rational& value : point) coordinates.push_back(format_rational(value));
    witnesses.push_back(std::move(coordinates));
  }
  out["witness_points"] = std::move(witnesses);
  out["stop_reason"] = stop_reason_json(result.stop_reason);
  out["nonsmooth_regions"] = std::move(nonsmooth);
  out["extra_kernel"] = std::move(extra);
  out["extra_kernel_summary"] = mechanism_summary_json(network, result);
  out["seconds"] = result.seconds;
  out["walk_seconds"] = result.walk.seconds;  // of which the walk (0 when none ran)
  out["points_seconds"] = result.points_seconds;  // and the points and lines before it
  return out;
}

// Stopped while drawing points, before any walk began: the walk's own
// summary is then untouched (neither complete nor stopped).
bool stopped_before_walk(const FunctionalDimensionResult& result) {
  return result.stop_reason != StopReason::none && !result.walk.complete &&
         result.walk.stop_reason == StopReason::none;
}

// The bounds of a result not certified. A run cut short prints bounds, never
// a certified value (design: "Certified, meaning"), even when its proved
// bounds happen to meet (certify --full-walk stopped after the rank reached
// the scaling bound): then the one value is said once, not "between 48 and 48".
std::string uncertified_bounds_text(const FunctionalDimensionResult& result) {
  if (result.lower_bound == result.upper_bound && result.stop_reason != StopReason::none)
    return std::to_string(result.lower_bound) + "  (its proved bounds meet) NOT certified: the run was cut short";
  return "between " + std::to_string(result.lower_bound) + " and " + std::to_string(result.upper_bound) +
         "  NOT certified";
}

void print_result(const Network& network, const Domain& domain, const FunctionalDimensionResult& result,
                  std::ostream& out) {
  out << "domain                " << domain.describe() << "\n";
  out << "parametric dimension  " << result.parametric_dimension << "\n";
  out << "scaling bound         " << result.scaling_bound << "  (D minus the rank of the "
      << network.hidden_neuron_count() << " hidden neurons' scaling directions)\n";
  if (result.certified) {
    out << "functional dimension  " << *result.functional_dimension << "  certified\n";
    if (result.certified_by_points)
      out << "                      lower bound from " << count_of(result.witness_points.size(), "exact point")
          << " met the scaling bound (the rows of their regions have a\n"
             "                      nonsingular minor mod p; the points: --witness-out or --json);\n"
             "                      upper bound: the scaling directions, an exact kernel\n";
    else if (result.early_stop || !result.walk_complete)  // upper bound from the scaling directions alone
      out << "                      lower bound: rows of " << count_of(result.regions_contributing, "region")
          << (result.regions_contributing == 1 ? " has" : " have") << " a nonsingular minor (mod p);\n"
             "                      upper bound: the scaling directions, an exact kernel\n";
    else
      out << "                      lower bound: exact rank of the rows of " << count_of(result.regions_contributing, "region")
          << ";\n                      upper bound: an exact kernel checked on every smooth region\n";
  } else {
    out << "functional dimension  " << uncertified_bounds_text(result) << " ("
        << (result.stop_reason == StopReason::none
                ? std::string("the walk could not be certified")
                : std::string(result.walk_complete       ? "stopped after the walk: "
                                          : stopped_before_walk(result) ? "stopped before the walk: "
                                                                        : "walk stopped: ") +
                      to_string(result.stop_reason))
        << ")\n";
  }
  if (result.certified_by_points || stopped_before_walk(result))
    out << "regions               none walked (" << count_of(result.points_drawn, "point") << " drawn, "
        << result.regions_contributing << " of their regions contributed new rows)\n";
  else
    out << "regions               " << result.regions_walked << " walked"
        << (result.early_stop ? " (stopped early: the rank met the scaling bound)"
                              : result.walk_complete ? " (all regions)" : " (walk cut short)")
        << ", " << result.regions_contributing << " contributed new rows"
        << (result.points_drawn ? " (with " + count_of(result.points_drawn, "point") + " drawn first)" : "")
        << "\n";
  if (!result.nonsmooth_regions.empty()) {
    out << "left out              " << count_of(result.nonsmooth_regions.size(), "non-smooth region")
        << " (a neuron identically zero there with a nonzero backward signal):\n";
    for (const auto& [pattern, neurons] : result.nonsmooth_regions) {
      out << "                      " << format_pattern(network, pattern) << "  neuron";
      for (std::size_t n : neurons) out << " " << n;
      out << "\n";
    }
  }
  if (!result.extra_kernel.empty()) {
    out << "extra flat directions " << result.extra_kernel.size()
        << " beyond the scaling ones, by mechanism (every direction: --kernel-out or --json):\n";
    for (const auto& group : mechanism_groups(result)) out << "  " << mechanism_text(group) << "\n";
    if (const auto limit = region_limit(network, result))
      out << "  rank limited by the number of regions: " << limit->smooth_regions << " smooth regions x "
          << limit->rows_per_region << " rows per region = " << limit->smooth_regions * limit->rows_per_region
          << " < scaling bound " << result.scaling_bound << " (so at least "
          << result.scaling_bound - limit->smooth_regions * limit->rows_per_region << " below it)\n";
  }
}

// The progress line of a phase after the walk (or of the points before it).
std::string phase_text(const CertifyProgress& state) {
  std::string text = std::string("certifying: ") + state.phase;
  if (std::string(state.phase) == "kernel")
    text += state.done == 0   ? " (the extra directions from the walk's prime)"
            : state.done == 1 ? " (the extra directions, further primes)"
                              : " (the extra directions, exact solve)";
  else if (std::string(state.phase) == "points")
    text += ", rank " + std::to_string(state.done) + " of the scaling bound " + std::to_string(state.total);
  else
    text += " " + std::to_string(state.done) + "/" + std::to_string(state.total) +
            (std::string(state.phase) == "naming" ? " directions" : " regions");  // check, rows (--rows-out)
  return text;
}

// The walk and ranks of certify_functional_dimension, with the progress line,
// interrupt handling and the command's limits.
FunctionalDimensionResult certify_with_progress(const CertifyArguments& arguments, const Network& network,
                                                const Domain& domain, bool stop_at_scaling_bound, RowsOut* rows) {
  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  FunctionalDimensionOptions options;
  apply_walk_limits(arguments.limits, interrupt.flag(), options.walk);
  options.walk.on_progress = [&](const WalkProgress& state) {
    progress.update([&] {
      return "certifying: " + std::to_string(state.regions) + " regions walked, frontier " +
             std::to_string(state.frontier);
    });
  };
  options.on_phase = [&](const CertifyProgress& state) { progress.update([&] { return phase_text(state); }); };
  options.stop_at_scaling_bound = stop_at_scaling_bound;
  // In an MPI job the walk, the reduction of its regions' rows and the
  // exact check of every region run across its processes; the kernel's
  // lift and the naming stay here on rank 0.
  std::unique_ptr<CertifyAcross> across;
  if (WalkTransport* group = process_group()) {
    across = lead_certify_across(*group, arguments.limits.time_limit);
    options.across = across.get();
  }
  options.keep_rows = rows != nullptr;
  if (rows) options.on_region_rows = [rows](const RationalMatrix& region_rows) { return rows->add(region_rows); };
  options.keep_kernel = !arguments.kernel_path.empty() || !arguments.bundle_path.empty();  // both print it
  FunctionalDimensionResult result = certify_functional_dimension(network, domain, options);
  finish_walks_across();
  progress.finish();
  return result;
}

// "12 regions", or "at least 12 regions" when the walk was cut short.
std::string regions_total_text(const FunctionalDimensionResult& result, std::size_t touched) {
  return result.walk_complete ? count_of(result.walk.regions, "region")
                              : "at least " + count_of(std::max(result.walk.regions, touched), "region");
}

// "284", or "between 250 and 496" when a stop left bounds.
std::string rank_text(const RankBounds& bounds) {
  if (bounds.is_exact()) return std::to_string(bounds.lower);
  return "between " + std::to_string(bounds.lower) + " and " + std::to_string(bounds.upper);
}

void print_batch_points(const CertifyArguments& arguments, const BatchDimension& batch,
                        const FunctionalDimensionResult& result, std::ostream& out) {
  out << "points                " << batch.points << " from " << arguments.points_path;
  if (batch.points_checked < batch.points)
    out << "; stopped (" << to_string(batch.stop_reason) << ") after deciding the regions of " << batch.points_checked
        << ": " << count_of(batch.regions_touched, "region") << " so far\n";
  else if (result.regions_walked == 0 && !result.walk_complete)  // no walk counted the domain's regions
    out << ", in " << count_of(batch.regions_touched, "region") << " (decided exactly)\n";
  else
    out << ", in " << batch.regions_touched << " of " << regions_total_text(result, batch.regions_touched)
        << " (decided exactly)\n";
}

void print_batch(const Network& network, const Domain& domain, const CertifyArguments& arguments,
                 const BatchDimension& batch, const FunctionalDimensionResult& result, std::ostream& out) {
  out << "domain                " << domain.describe() << "\n";
  print_batch_points(arguments, batch, result, out);
  const std::string stopped = "  (stopped: " + to_string(batch.stop_reason) + "; proved bounds)\n";
  out << "batch functional dimension " << rank_text(batch.batch);
  if (batch.batch.is_exact())
    out << "  (exact rank of the " << batch.points * network.output_dim() << " x " << network.parametric_dimension()
        << " parameter Jacobian at these points)\n";
  else
    out << stopped;
  out << "rank of their regions " << rank_text(batch.regions);
  if (batch.regions.is_exact())
    out << "  (exact rank of the coefficient-block rows of the " << count_of(batch.regions_touched, "region")
        << ": the Jacobians at every point of them)\n";
  else
    out << stopped;
  if (result.certified)
    out << "functional dimension  " << *result.functional_dimension << "  certified (every region of the domain)\n";
  else
    out << "functional dimension  " << uncertified_bounds_text(result) << " (stopped"
        << (stopped_before_walk(result) && result.regions_walked == 0 && result.points_drawn == 0 ? " before the walk" : "")
        << ": " << to_string(result.stop_reason) << ")\n";
  const auto value = batch.batch.value();
  if (result.certified && value && *value < *result.functional_dimension) {
    out << "                      the points fall short by " << *result.functional_dimension - *value;
    if (result.walk_complete && batch.regions_touched == result.walk.regions)
      out << ": they reach every region, but a region gives up to " << network.output_dim() * (network.input_dim + 1)
          << " independent rows (take more points per region)\n";
    else
      out << ": they reach " << batch.regions_touched << " of " << regions_total_text(result, batch.regions_touched)
          << "\n";
  }
}

void print_claim(std::uint64_t value, const std::optional<ClaimVerdict>& at_points, const ClaimVerdict& network_verdict,
                 std::ostream& out) {
  out << "claim                 " << value << "\n";
  if (at_points) out << "  at these points     " << claim_word(at_points->verdict) << ": " << at_points->reason << "\n";
  out << "  for the network     " << claim_word(network_verdict.verdict) << ": " << network_verdict.reason << "\n";
}

// 0 when every verdict is "consistent", 1 otherwise (documented in --help).
int claim_status(const std::optional<ClaimVerdict>& at_points, const ClaimVerdict& network_verdict) {
  const bool is_consistent = network_verdict.verdict == Verdict::consistent &&
                             (!at_points || at_points->verdict == Verdict::consistent);
  return is_consistent ? 0 : 1;
}

BatchDimension batch_with_progress(const CertifyArguments& arguments, const Network& network, const Domain& domain,
                                   const PointsFile& file, const StopRequest& stop) {
  ProgressLine progress(arguments.quiet);
  BatchDimension batch = batch_dimension(
      network, domain, file.points, [&](std::size_t i) { return file.places[i]; },
      stop, static_cast<unsigned>(arguments.limits.threads), [&](const char* phase, std::size_t done, std::size_t total) {
        progress.update([&] {
          return std::string("batch: ") + phase + " " + std::to_string(done) + "/" + std::to_string(total);
        });
      });
  progress.finish();
  return batch;
}

// The batch stage, then the walk in what is left of --time-limit (it covers
// the whole command); a stop in the batch stage leaves bounds and no walk.
int run_points(const CertifyArguments& arguments, const Network& network) {
  const InterruptGuard interrupt;
  const StopRequest stop(&interrupt.flag(), arguments.limits.time_limit);
  const PointsFile file = read_points_file(arguments.points_path, network.input_dim);
  const Domain domain = make_domain(arguments.domain, network.input_dim);
  const BatchDimension batch = batch_with_progress(arguments, network, domain, file, stop);
  CertifyArguments walk_arguments = arguments;
  StopReason walk_stopped_by = batch.stop_reason;
  if (arguments.limits.time_limit > 0) {
    walk_arguments.limits.time_limit -= stop.elapsed_seconds();
    if (walk_arguments.limits.time_limit <= 0 && walk_stopped_by == StopReason::none)
      walk_stopped_by = StopReason::time_limit;
  }
  // Every region must be walked to count them (no early stop at the scaling bound).
  if (walk_stopped_by != StopReason::none) finish_walks_across();  // an MPI job's other ranks wait for a walk
  const std::unique_ptr<RowsOut> rows = rows_out(arguments);
  const FunctionalDimensionResult result =
      walk_stopped_by == StopReason::none
          ? certify_with_progress(walk_arguments, network, domain, false, rows.get())
          : certify_result_not_started(network, walk_stopped_by);
  std::optional<ClaimVerdict> at_points, network_verdict;
  if (arguments.claim) {
    at_points = judge_claim_at_points(*arguments.claim, batch.batch.lower, batch.batch.upper);
    network_verdict = judge_claim(*arguments.claim, result);
  }
  if (arguments.json) {
    Json out = batch_to_json(network, domain, batch, result);
    if (arguments.claim) {
      out["claim"] = verdict_json(*network_verdict);
      out["claim"]["value"] = *arguments.claim;
      out["claim"]["at_points"] = verdict_json(*at_points);
    }
    out["seconds"] = stop.elapsed_seconds();
    std::cout << json_text(out);
  } else {
    print_batch(network, domain, arguments, batch, result, std::cout);
    if (arguments.claim) print_claim(*arguments.claim, at_points, *network_verdict, std::cout);
  }
  const bool rows_cut_short =
      write_result_files(arguments, result, rows.get(), walk_stopped_by != StopReason::none);
  if (result.stop_reason == StopReason::interrupted || rows_cut_short) return 130;
  return arguments.claim ? claim_status(at_points, *network_verdict) : 0;
}

std::string why_evidence_stopped(StopReason reason) {
  const std::string walk = "the second walk, which gathers the evidence, ";
  if (reason == StopReason::interrupted) return walk + "was interrupted (the value above stands)";
  if (reason == StopReason::time_limit) return walk + "ran out of --time-limit (the value above stands)";
  return walk + "did not reproduce the value's evidence";
}

// The proof bundle of a certified value; nothing for bounds (said on stderr).
// A second walk gathers the evidence within what is left of --time-limit.
// Returns false when an interrupt stopped it.
bool write_bundle(const CertifyArguments& arguments, const Network& network, const Domain& domain,
                  const FunctionalDimensionResult& result) {
  if (!result.certified) {
    say_not_written("bundle", arguments.bundle_path, "the functional dimension was not certified (bounds only)");
    return true;
  }
  WalkOptions walk;
  walk.threads = static_cast<unsigned>(arguments.limits.threads);
  if (arguments.limits.time_limit > 0) {
    walk.time_limit_seconds = arguments.limits.time_limit - result.seconds;
    if (walk.time_limit_seconds <= 0) {
      say_not_written("bundle", arguments.bundle_path, "the time limit ran out before the evidence was gathered");
      return true;
    }
  }
  ProgressLine progress(arguments.quiet);
  const InterruptGuard interrupt;
  walk.interrupt = &interrupt.flag();
  walk.on_progress = [&](const WalkProgress& state) {
    progress.update([&] { return "bundle: " + std::to_string(state.regions) + " regions walked"; });
  };
  const bool needs_every_region = result.upper_bound < result.scaling_bound;
  StopReason stopped_by = StopReason::none;
  const auto bundle = gather_proof_bundle(network, domain, *result.functional_dimension, needs_every_region,
                                          walk, &stopped_by);
  progress.finish();
  if (!bundle) {
    say_not_written("bundle", arguments.bundle_path, why_evidence_stopped(stopped_by));
    return !interrupt.flag().load();
  }
  write_output(arguments.bundle_path, json_text(bundle_to_json(network, domain, result, *bundle), false));
  if (!arguments.json)
    std::cout << "bundle                " << arguments.bundle_path << " (" << bundle->regions.size()
              << (bundle->has_every_region ? " regions, every one with its certificates; upper bound: an exact kernel"
                                           : " regions holding the minor; upper bound: the scaling directions")
              << ")\n";
  return true;
}

// Test hook (tests/mpi/certify_test.sh): PLEAT_TEST_ALTER_CANDIDATE_ON_RANK=R
// makes rank R check a wrong candidate, which must not be certified.
CertifyFollowerOptions follower_options_for_tests() {
  CertifyFollowerOptions options;
  if (const char* rank = std::getenv("PLEAT_TEST_ALTER_CANDIDATE_ON_RANK"))
    options.alter_candidate = std::to_string(process_group()->rank()) == rank;
  return options;
}

int run_certify(const CertifyArguments& arguments) {
  const InterruptGuard early_interrupt;  // before reading: a Ctrl-C while reading stops cleanly too (signals.hpp)
  const Network network = read_network_input(arguments.network_path);
  if (!arguments.points_path.empty() && arguments.points_path != "-") note_input_file(arguments.points_path, "points file");
  for (const std::string* output : {&arguments.rows_path, &arguments.kernel_path, &arguments.witness_path,
                                    &arguments.bundle_path})
    refuse_overwriting_input(*output);  // before the run, not after it
  refuse_shared_outputs({{"--rows-out", arguments.rows_path}, {"--kernel-out", arguments.kernel_path},
                         {"--witness-out", arguments.witness_path}, {"--bundle", arguments.bundle_path}});
  if (is_follower_process()) {  // an MPI job's rank other than 0: its share of the walk, no output
    const InterruptGuard interrupt;
    const auto work = certify_follower_work(network, &interrupt.flag(), follower_options_for_tests());
    return follow_walks(network, make_domain(arguments.domain, network.input_dim), interrupt.flag(), work.get());
  }
  // Each file tried now (rank 0 writes them), not after the run: a missing
  // directory cost a whole run, and for --rows-out its printed result too.
  for (const std::string* output : {&arguments.rows_path, &arguments.kernel_path, &arguments.witness_path,
                                    &arguments.bundle_path})
    refuse_unwritable_output(*output);
  if (!arguments.points_path.empty()) {
    if (!arguments.bundle_path.empty()) throw usage_error("--bundle certifies the network's value; leave out --points");
    return run_points(arguments, network);
  }
  const Domain domain = make_domain(arguments.domain, network.input_dim);
  const std::unique_ptr<RowsOut> rows = rows_out(arguments);
  const FunctionalDimensionResult result =
      certify_with_progress(arguments, network, domain, !arguments.full_walk, rows.get());
  Json document = result_to_json(network, domain, result);
  std::optional<ClaimVerdict> verdict;
  if (arguments.claim) {
    verdict = judge_claim(*arguments.claim, result);
    document["claim"] = Json{{"value", *arguments.claim}, {"verdict", claim_word(verdict->verdict)}, {"reason", verdict->reason}};
  }
  if (arguments.json) {
    std::cout << json_text(document);
  } else {
    print_result(network, domain, result, std::cout);
    if (arguments.claim) print_claim(*arguments.claim, std::nullopt, *verdict, std::cout);
  }
  const bool rows_cut_short = write_result_files(arguments, result, rows.get());
  bool is_bundle_done = true;
  if (!arguments.bundle_path.empty()) {
    check_standard_output();  // the result stands even if the bundle's walk is interrupted
    is_bundle_done = write_bundle(arguments, network, domain, result);
  }
  if (result.stop_reason == StopReason::interrupted || rows_cut_short || !is_bundle_done) return 130;
  return arguments.claim ? claim_status(std::nullopt, *verdict) : 0;
}

}  // namespace

void register_certify(CommandTable& commands) {
  auto arguments = std::make_shared<CertifyArguments>();
  CLI::App& command = commands.add(
      "certify", "Certify the functional dimension of a network's parameters, exactly",
      "The functional dimension is the rank of the Jacobian of the network's output with\n"
      "respect to its parameters, taken over all inputs: how many independent directions\n"
      "of parameter change actually change the function. Rescaling a hidden neuron never\n"
      "does, so it is at most the scaling bound. 'certify' walks the regions, stacks each\n"
      "region's exact Jacobian rows, and proves a lower bound (a nonsingular minor) and an\n"
      "upper bound (the scaling directions, or an exact kernel checked on every region).\n"
      "It first draws exact points inside the domain: when the rows of the regions they land\n"
      "in already reach the scaling bound, that is the value and no walk is needed (the\n"
      "points: --witness-out; re-check them with --points).\n\n"
      "Examples:\n"
      "  pleat certify data/fold2d.json\n"
      "  pleat certify data/fold2d.json --box -1,1 --json\n"
      "  pleat certify data/fold2d.json --bundle proof.json   # then: python3 scripts/check_bundle.py proof.json\n"
      "  pleat certify net.json --claim 37          # check someone's sampled estimate\n"
      "  pleat certify net.json --points pts.csv    # exact batch dimension at these points\n"
      "  pleat certify net.json --points pts.npy --claim 37   # judge an estimate made at pts\n"
      "  mpirun -n 4 pleat certify net.json --threads 1   # its walk across 4 processes (MPI builds)\n\n"
      "--points FILE: the exact rank of the parameter Jacobian stacked at the points (text:\n"
      "comma- or whitespace-separated values, an optional header line, '#' comments; or a\n"
      "float64/float32 .npy array), how many of the domain's regions the points touch, and\n"
      "the certified value beside it. Points outside --box/--domain or on a bent hyperplane\n"
      "are an error naming the point.\n"
      "--claim N: the verdict on N against the proved bounds, and with --points also\n"
      "against the exact rank at those points: consistent, too-low or impossible.\n\n"
      "Exit status: 0 done (with --claim: every verdict consistent); 1 a --claim verdict\n"
      "is too-low or impossible; 2 bad input; 130 interrupted.",
      [arguments] { return run_certify(*arguments); });
  command.add_option("network", arguments->network_path, "Network file (pleat-network/1 JSON or .onnx; - reads JSON from stdin)")
      ->required();
  add_domain_options(command, arguments->domain);
  command.add_flag("--json", arguments->json, "Print the result as JSON (pleat-certify/1)");
  add_walk_limit_options(command, arguments->limits, "Worker threads (default: all cores)", "--time-limit",
                         "Stop after this many seconds (result: bounds)");
  command.add_flag("--full-walk", arguments->full_walk,
                   "Walk every region: no certifying from points first, no stop when the rank meets "
                   "the scaling bound");
  command.add_option("--rows-out", arguments->rows_path,
                     "Write the exact Jacobian rows of the contributing regions (one row per line; computed once the run "
                     "has ended, after a --time-limit too, and written as formed; a run not certified, or a Ctrl-C while they are formed, writes "
                     "first a line '# partial: ...')");
  command.add_option("--kernel-out", arguments->kernel_path,
                     "Write a basis of the exact kernel of a certified value: the scaling directions, then the extra "
                     "ones checked on every region (one row per line; none written for bounds)");
  command.add_option("--bundle", arguments->bundle_path,
                     "Write a proof of the certified value that scripts/check_bundle.py re-checks "
                     "(pleat-bundle/1; none when not certified)");
  command.add_option("--witness-out", arguments->witness_path,
                     "Write the exact points whose regions' rows raised the rank (re-check: --points FILE; a run not certified writes first a line '# partial: ...': they prove the lower bound only)");
  command.add_option("--points", arguments->points_path,
                     "Also: the exact batch functional dimension at these points (text or .npy)");
  CLI::Option* claim = add_unsigned_option(command, "--claim", arguments->claim_value,
                                           "Judge a claimed value: consistent (exit 0), too-low or impossible (exit 1)");
  claim->each([arguments](const std::string& text) { arguments->claim = parse_unsigned(text, "--claim"); });
  command.add_flag("-q,--quiet", arguments->quiet, "No progress line on standard error");
}

}  // namespace pleat::cli
