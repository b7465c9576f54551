#include "enumerate/distributed_certify.hpp"

#include "core/errors.hpp"
#include "core/jacobian.hpp"
#include "enumerate/detail/kernel_check.hpp"
#include "enumerate/detail/parallel_for.hpp"
#include "enumerate/region_codec.hpp"

#include <algorithm>
#include <bit>
#include <chrono>
#include <optional>
#include <string>
#include <string_view>
#include <thread>
#include <unordered_set>

namespace pleat {
namespace {

using Clock = std::chrono::steady_clock;

void put_modular_row(ByteWriter& out, const ModularVector& row) {
  for (std::uint64_t value : row) out.put_unsigned(value);
}

ModularVector get_modular_row(ByteReader& in, std::size_t columns, std::uint64_t prime) {
  ModularVector row(columns);
  for (std::uint64_t& value : row) {
    value = in.get_unsigned();
    if (value >= prime) throw std::runtime_error("truncated or corrupt message");
  }
  return row;
}

// What every rank needs to reduce its regions' rows as rank 0 would.
std::string reduction_setup(std::uint64_t prime, unsigned threads, const ModularMatrix& start_rows,
                            const std::set<ActivationPattern>& skip) {
  ByteWriter out;
  out.put_unsigned(prime);
  out.put_unsigned(threads);
  out.put_unsigned(start_rows.rows());
  for (std::size_t r = 0; r < start_rows.rows(); ++r) put_modular_row(out, start_rows.row(r));
  out.put_unsigned(skip.size());
  for (const ActivationPattern& pattern : skip) out.put_pattern(pattern);
  return out.take();
}

// One rank's part in the reduction of the rows of certify's walk (its side
// work), and the smooth regions it owns, for the check after the walk.
//
// Rank 0 (is_leader) computes the rows of its own regions as it delivers
// them, as certify alone does: certify's basis is the only basis that keeps
// rows. Every other rank keeps a replica of that basis as it stood after the
// previous level (the points' rows, then each level's kept rows, rank 0's
// news), computes its regions' rows in parallel and sends rank 0 only those
// outside the replica's span (its random screen: a nonzero product proves a
// row outside; zero means inside but for a chance of 1/p, as certify's own
// screen). A row inside is dependent on rows before it in the walk's order,
// so certify would not have kept it.
class RowReduction final : public OwnedRegionWork {
 public:
  RowReduction(const Network& network, std::string_view setup, bool is_leader)
      : RowReduction(network, ByteReader(setup), is_leader) {}

  std::vector<std::string> notes_for_level(const std::vector<const Region*>& regions,
                                           const StopRequest& stop) override {
    std::vector<std::string> notes;
    notes.reserve(regions.size());
    // Rows computed in parallel a chunk at a time (a level can hold 10^5
    // regions).
    const std::size_t chunk = 64 * std::size_t{threads_};
    for (std::size_t begin = 0; begin < regions.size(); begin += chunk) {
      if (stop.is_requested()) break;
      const std::size_t end = std::min(regions.size(), begin + chunk);
      std::vector<ModularMatrix> rows(end - begin);
      if (replica_)
        detail::parallel_for(end - begin, threads_, [&](std::size_t i) {
          if (has_rows(regions[begin + i])) rows[i] = coefficient_blocks_mod(modular_, regions[begin + i]->pattern);
        });
      for (std::size_t i = 0; i < rows.size(); ++i) {
        const Region* region = regions[begin + i];
        if (region && region->nonsmooth_neurons.empty()) smooth_.push_back(region->pattern);
        ByteWriter out;
        if (!replica_) {  // rank 0: its rows are computed on delivery
          out.put_unsigned(own_note);
        } else {
          std::vector<std::size_t> sent;
          const bool is_full = replica_->rank() == replica_->columns();
          for (std::size_t r = 0; r < rows[i].rows(); ++r)
            if (!is_full && replica_->passes_screen(rows[i].row(r))) sent.push_back(r);
          out.put_unsigned(rows_note);
          out.put_unsigned(sent.size());
          for (std::size_t r : sent) {
            out.put_unsigned(r);
            put_modular_row(out, rows[i].row(r));
          }
        }
        notes.push_back(out.take());
      }
    }
    return notes;
  }

  void take_note(const Region& region, std::string note) override {
    ByteReader in(note);
    current_.clear();
    if (in.get_unsigned() == own_note) {
      if (!has_rows(&region)) return;
      const ModularMatrix rows = coefficient_blocks_mod(modular_, region.pattern);
      for (std::size_t r = 0; r < rows.rows(); ++r) current_.emplace_back(r, rows.row(r));
      return;
    }
    for (std::size_t count = in.get_size(); count > 0; --count) {
      const std::size_t index = in.get_unsigned();
      current_.emplace_back(index, get_modular_row(in, columns_, prime_));
    }
  }

  // Rank 0: a row certify's basis kept, for the followers' replicas.
  void record_kept(const ModularVector& row) { kept_this_level_.push_back(row); }

  std::string news_after_level() override {
    ByteWriter out;
    out.put_unsigned(kept_this_level_.size());
    for (const ModularVector& row : kept_this_level_) put_modular_row(out, row);
    kept_this_level_.clear();
    return out.take();
  }

  void take_news(std::string_view news) override {
    ByteReader in(news);
    for (std::size_t count = in.get_size(); count > 0; --count)
      replica_->add_row(get_modular_row(in, columns_, prime_));
  }

  const CertifyAcross::IndexedRows& current_rows() const { return current_; }
  const std::vector<ActivationPattern>& smooth() const { return smooth_; }

 private:
  static constexpr std::uint64_t rows_note = 0;  // then the rows outside the replica's span
  static constexpr std::uint64_t own_note = 1;   // rank 0's own region

  // Reads reduction_setup's bytes, in its order.
  RowReduction(const Network& network, ByteReader in, bool is_leader)
      : modular_(modular_network(network, in.get_unsigned())),
        threads_(resolved_threads(in.get_unsigned())),
        prime_(modular_.prime),
        columns_(network.parametric_dimension()) {
    if (!is_leader) replica_.emplace(prime_, columns_);
    for (std::size_t count = in.get_size(); count > 0; --count) {
      const ModularVector row = get_modular_row(in, columns_, prime_);
      if (replica_) replica_->add_row(row);
    }
    for (std::size_t count = in.get_size(); count > 0; --count) skip_.insert(in.get_pattern());
  }

  static ModularNetwork modular_network(const Network& network, std::uint64_t prime) {
    std::optional<ModularNetwork> modular = reduce_modulo(network, prime);
    if (!modular) throw usage_error("RowReduction: the prime divides a parameter's denominator");
    return std::move(*modular);
  }

  static unsigned resolved_threads(std::uint64_t threads) {
    return threads ? static_cast<unsigned>(std::min<std::uint64_t>(threads, 1024))
                   : std::max(1u, std::thread::hardware_concurrency());
  }

  bool has_rows(const Region* region) const {
    return region && region->nonsmooth_neurons.empty() && !skip_.contains(region->pattern);
  }

  ModularNetwork modular_;
  unsigned threads_ = 1;
  std::uint64_t prime_;
  std::size_t columns_;
  std::optional<ModularRowBasis> replica_;  // followers: certify's basis after the previous level
  std::unordered_set<ActivationPattern, PatternHash> skip_;
  std::vector<ActivationPattern> smooth_;  // in the order processed
  CertifyAcross::IndexedRows current_;     // rank 0: the rows of the region being delivered
  std::vector<ModularVector> kept_this_level_;  // rank 0: what certify's basis kept this level
};

// ---- The check after the walk ------------------------------------------------

struct CheckTask {
  RationalMatrix candidate;
  unsigned threads = 1;
  double time_limit_seconds = 0;  // what is left of certify's; 0: none
};

std::string encode_check(const CheckTask& task) {
  ByteWriter out;
  out.put_unsigned(task.candidate.rows());
  out.put_unsigned(task.candidate.cols());
  for (std::size_t r = 0; r < task.candidate.rows(); ++r)
    for (std::size_t c = 0; c < task.candidate.cols(); ++c) out.put_rational(task.candidate(r, c));
  out.put_unsigned(task.threads);
  out.put_unsigned(std::bit_cast<std::uint64_t>(task.time_limit_seconds));
  return out.take();
}

CheckTask decode_check(std::string_view bytes) {
  ByteReader in(bytes);
  CheckTask task;
  const std::size_t rows = in.get_size();
  const std::size_t cols = in.get_unsigned();
  task.candidate = RationalMatrix(rows, cols);
  for (std::size_t r = 0; r < rows; ++r)
    for (std::size_t c = 0; c < cols; ++c) task.candidate(r, c) = in.get_rational();
  task.threads = static_cast<unsigned>(in.get_unsigned());
  task.time_limit_seconds = std::bit_cast<double>(in.get_unsigned());
  return task;
}

struct ShareVerdict {
  bool is_rejected = false;
  StopReason stopped = StopReason::none;
};

// The check on one rank's smooth regions.
ShareVerdict check_share(const Network& network, const std::vector<ActivationPattern>& smooth,
                         const RationalMatrix& candidate, unsigned threads, const StopRequest& stop,
                         const std::function<void(std::size_t, std::size_t)>& progress) {
  ShareVerdict verdict;
  if (smooth.empty() || candidate.rows() == 0) return verdict;
  try {
    const StopScope scope(stop);  // the check's construction polls it
    const detail::AnnihilationCheck check(network, candidate, detail::CheckScale(network), std::max(1u, threads));
    bool stopped = false;
    verdict.is_rejected = detail::first_rejected_pattern(check, smooth, std::max(1u, threads), stop, stopped, progress)
                              .has_value();
    if (stopped) verdict.stopped = stop.reason() != StopReason::none ? stop.reason() : StopReason::requested;
  } catch (const Stopped& stopped) {
    verdict.stopped = stopped.reason();
  }
  return verdict;
}

// Every rank's verdict, agreed: rejected when any rank rejected, stopped
// (with the largest reason) when any rank was stopped.
ShareVerdict agree(WalkTransport& transport, const ShareVerdict& mine) {
  const std::vector<std::uint64_t> all =
      transport.maximum({mine.is_rejected ? 1u : 0u, static_cast<std::uint64_t>(mine.stopped)});
  return ShareVerdict{all[0] != 0, static_cast<StopReason>(all[1])};
}

class LeaderCertifyAcross final : public CertifyAcross {
 public:
  LeaderCertifyAcross(WalkTransport& transport, double time_limit_seconds)
      : transport_(transport), time_limit_seconds_(time_limit_seconds), started_(Clock::now()) {}

  WalkSummary walk(const Network& network, const Domain& domain, const WalkOptions& options, std::uint64_t prime,
                   const ModularMatrix& start_rows, const std::set<ActivationPattern>& skip) override {
    if (reduction_) throw usage_error("CertifyAcross::walk: called twice");
    if (start_rows.cols() != network.parametric_dimension() && start_rows.rows() > 0)
      throw usage_error("CertifyAcross::walk: the start rows need one entry per parameter");
    network_ = &network;
    const std::string setup = reduction_setup(prime, options.threads, start_rows, skip);
    reduction_ = std::make_unique<RowReduction>(network, setup, true);
    return lead_distributed_walk(network, domain, options, transport_, nullptr, reduction_.get(), setup);
  }

  void row_kept(const ModularVector& row) override {
    if (reduction_) reduction_->record_kept(row);
  }

  const IndexedRows& region_rows() const override {
    static const IndexedRows none;
    return reduction_ ? reduction_->current_rows() : none;
  }

  bool annihilates_every_region(const RationalMatrix& candidate, unsigned threads, const StopRequest& stop,
                                bool& stopped,
                                const std::function<void(std::size_t, std::size_t)>& progress) override {
    if (!reduction_) throw usage_error("CertifyAcross::annihilates_every_region: no walk yet");
    CheckTask task{candidate, threads, 0};
    if (time_limit_seconds_ > 0)
      task.time_limit_seconds =
          std::max(1e-9, time_limit_seconds_ - std::chrono::duration<double>(Clock::now() - started_).count());
    lead_distributed_task(transport_, encode_check(task));
    const ShareVerdict verdict =
        agree(transport_, check_share(*network_, reduction_->smooth(), candidate, threads, stop, progress));
    stop_reason_ = verdict.stopped;
    if (verdict.stopped != StopReason::none) {
      stopped = true;
      return false;
    }
    return !verdict.is_rejected;
  }

  StopReason stop_reason() const override { return stop_reason_; }

 private:
  WalkTransport& transport_;
  double time_limit_seconds_;
  Clock::time_point started_;
  const Network* network_ = nullptr;
  std::unique_ptr<RowReduction> reduction_;
  StopReason stop_reason_ = StopReason::none;
};

class CertifyFollower final : public FollowerWork {
 public:
  CertifyFollower(const Network& network, const std::atomic<bool>* interrupt, const CertifyFollowerOptions& options)
      : network_(network), interrupt_(interrupt), options_(options) {}

  OwnedRegionWork& start_walk(std::string_view setup) override {
    reduction_ = std::make_unique<RowReduction>(network_, setup, false);
    return *reduction_;
  }

  void run_task(std::string_view bytes, WalkTransport& transport) override {
    CheckTask task = decode_check(bytes);
    if (options_.alter_candidate && task.candidate.rows() > 0)
      for (std::size_t c = 0; c < task.candidate.cols(); ++c) task.candidate(0, c) += 1;
    const StopRequest stop(interrupt_, task.time_limit_seconds);
    static const std::vector<ActivationPattern> none;
    agree(transport, check_share(network_, reduction_ ? reduction_->smooth() : none, task.candidate, task.threads,
                                 stop, {}));
  }

 private:
  const Network& network_;
  const std::atomic<bool>* interrupt_;
  CertifyFollowerOptions options_;
  std::unique_ptr<RowReduction> reduction_;
};

}  // namespace

std::unique_ptr<CertifyAcross> lead_certify_across(WalkTransport& transport, double time_limit_seconds) {
  if (transport.rank() != 0) throw usage_error("lead_certify_across: only rank 0 leads");
  return std::make_unique<LeaderCertifyAcross>(transport, time_limit_seconds);
}

std::unique_ptr<FollowerWork> certify_follower_work(const Network& network, const std::atomic<bool>* interrupt,
                                                    const CertifyFollowerOptions& options) {
  return std::make_unique<CertifyFollower>(network, interrupt, options);
}

}  // namespace pleat
