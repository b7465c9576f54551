// pleat survey in an MPI job (mpirun -n P pleat survey ...): rank 0 alone
// reads and writes the survey file; the samples still to run are split across
// the ranks, and every finished sample travels to rank 0 as its JSON line.
#pragma once

#include "enumerate/distributed_walk.hpp"
#include "enumerate/survey.hpp"

#include <cstddef>
#include <cstdint>
#include <vector>

namespace pleat::cli {

// Rank 0's list of the samples still to run (it alone reads the file), and
// this rank's share of it: every P-th one from its rank on. Collective: every
// rank calls it; only rank 0's `todo` is read.
std::vector<std::uint64_t> share_of_samples(WalkTransport& group, const std::vector<std::uint64_t>& todo);

// Runs this rank's share (run_survey, on its threads) while the calling
// thread, the only one that calls MPI, passes each finished sample to rank 0;
// rank 0 hands every sample of the job, its own and the others', to
// options.on_sample as they arrive, and returns once every rank is done. On
// rank 0 is_interrupted covers every rank. Collective: every rank calls it.
SurveyRunResult run_survey_in_job(const SurveyConfiguration& configuration, const std::vector<std::uint64_t>& share,
                                  SurveyRunOptions options, std::size_t ranks, bool is_leader);

}  // namespace pleat::cli
