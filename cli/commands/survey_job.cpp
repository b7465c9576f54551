// pleat survey in an MPI job (cli/commands/survey_job.hpp).
#include "cli/commands/survey_job.hpp"

#include "cli/common.hpp"
#include "cli/formats/survey_file.hpp"
#include "cli/process_group.hpp"
#include "enumerate/region_codec.hpp"

#include <chrono>
#include <condition_variable>
#include <deque>
#include <exception>
#include <mutex>
#include <thread>
#include <utility>

namespace pleat::cli {
namespace {

// The messages of ranks other than 0 to rank 0 during a survey: a finished
// sample ("s" and its line), or the end of the rank's share ("e0"; "e1" when
// it was interrupted).
constexpr char sample_message = 's';

}  // namespace

std::vector<std::uint64_t> share_of_samples(WalkTransport& group, const std::vector<std::uint64_t>& todo) {
  ByteWriter out;
  if (group.rank() == 0) {
    out.put_unsigned(todo.size());
    for (std::uint64_t sample : todo) out.put_unsigned(sample);
  }
  const std::string bytes = group.broadcast_from_leader(out.take());
  ByteReader in(bytes);
  std::vector<std::uint64_t> share;
  const std::size_t count = in.get_size();
  for (std::size_t j = 0; j < count; ++j) {
    const std::uint64_t sample = in.get_unsigned();
    if (j % group.size() == group.rank()) share.push_back(sample);
  }
  return share;
}

SurveyRunResult run_survey_in_job(const SurveyConfiguration& configuration, const std::vector<std::uint64_t>& share,
                                  SurveyRunOptions options, std::size_t ranks, bool is_leader) {
  const auto deliver = std::move(options.on_sample);
  std::mutex mutex;
  std::condition_variable wake;
  std::deque<SurveySample> finished;
  bool is_done = false;
  std::exception_ptr error;
  SurveyRunResult result;
  options.on_sample = [&](const SurveySample& sample) {
    {
      std::lock_guard lock(mutex);
      finished.push_back(sample);
    }
    wake.notify_one();
  };
  std::thread runner([&] {
    try {
      result = run_survey(configuration, share, options);
    } catch (...) {
      error = std::current_exception();
    }
    {
      std::lock_guard lock(mutex);
      is_done = true;
    }
    wake.notify_one();
  });
  std::size_t followers_running = is_leader ? ranks - 1 : 0;
  bool is_interrupted_elsewhere = false;
  try {
    for (;;) {
      std::deque<SurveySample> batch;
      bool is_runner_done = false;
      {
        std::unique_lock lock(mutex);
        wake.wait_for(lock, std::chrono::milliseconds(20), [&] { return is_done || !finished.empty(); });
        batch.swap(finished);
        is_runner_done = is_done;
      }
      for (const SurveySample& sample : batch) {
        if (is_leader) deliver(sample);
        else send_to_leader(sample_message + json_text(sample_json(sample), false));
      }
      if (is_leader) {
        while (auto message = receive_at_leader()) {
          const auto& [rank, bytes] = *message;
          if (!bytes.empty() && bytes.front() == sample_message) {
            deliver(sample_from_json(Json::parse(bytes.substr(1)), "the sample from rank " + std::to_string(rank)));
          } else {
            --followers_running;
            is_interrupted_elsewhere = is_interrupted_elsewhere || bytes == "e1";
          }
        }
      }
      if (!is_runner_done || error) {
        if (error) break;
        continue;
      }
      if (!is_leader) {
        send_to_leader(result.is_interrupted ? "e1" : "e0");
        break;
      }
      if (followers_running == 0) break;
    }
  } catch (...) {
    runner.detach();  // the job is about to be aborted (main: ProcessGroupSession::fail)
    throw;
  }
  runner.join();
  if (error) std::rethrow_exception(error);
  result.is_interrupted = result.is_interrupted || is_interrupted_elsewhere;
  return result;
}

}  // namespace pleat::cli
