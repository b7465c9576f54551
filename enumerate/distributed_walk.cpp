#include "enumerate/distributed_walk.hpp"

#include "core/errors.hpp"
#include "core/stop.hpp"
#include "core/evaluate.hpp"
#include "enumerate/detail/pattern_store.hpp"
#include "enumerate/detail/prefix_pool.hpp"
#include "enumerate/detail/walk_adjacency.hpp"
#include "enumerate/region_codec.hpp"

#include <algorithm>
#include <bit>
#include <chrono>
#include <cstring>
#include <functional>
#include <memory>
#include <optional>
#include <thread>
#include <unordered_set>

namespace pleat {
namespace {

using Clock = std::chrono::steady_clock;

enum class Command : std::uint64_t { walk = 1, finish = 2, task = 3 };

// What rank 0 tells every rank about a walk: the settings that change the
// regions' work or when it stops. on_region, on_progress and max_regions stay
// on rank 0, which alone delivers regions.
struct WalkSettings {
  double time_limit_seconds = 0;
  bool keep_certificates = false;
  bool exact_only = false;
  unsigned threads = 0;
  bool has_side_work = false;  // every rank runs OwnedRegionWork beside the walk
};

// A command, the walk's settings, and its payload: the side work's setup
// (walk) or the task's bytes (task).
std::string encode_command(Command command, const WalkSettings& settings = {}, std::string_view payload = {}) {
  ByteWriter out;
  out.put_unsigned(static_cast<std::uint64_t>(command));
  out.put_unsigned(std::bit_cast<std::uint64_t>(settings.time_limit_seconds));
  out.put_bool(settings.keep_certificates);
  out.put_bool(settings.exact_only);
  out.put_unsigned(settings.threads);
  out.put_bool(settings.has_side_work);
  out.put_bytes(payload);
  return out.take();
}

struct DecodedCommand {
  Command command;
  WalkSettings settings;
  std::string payload;
};

DecodedCommand decode_command(std::string_view bytes) {
  ByteReader in(bytes);
  DecodedCommand decoded;
  decoded.command = static_cast<Command>(in.get_unsigned());
  decoded.settings.time_limit_seconds = std::bit_cast<double>(in.get_unsigned());
  decoded.settings.keep_certificates = in.get_bool();
  decoded.settings.exact_only = in.get_bool();
  decoded.settings.threads = static_cast<unsigned>(in.get_unsigned());
  decoded.settings.has_side_work = in.get_bool();
  decoded.payload = std::string(in.get_bytes());
  return decoded;
}

std::uint64_t code_of(StopReason reason) { return static_cast<std::uint64_t>(reason); }
StopReason reason_of(std::uint64_t code) { return static_cast<StopReason>(code); }

// The processed prefix of one rank's sorted share of a level.
struct LevelWork {
  std::vector<RegionWorker::Outcome> outcomes;  // for the first outcomes.size() patterns of the share
  StopReason stopped = StopReason::none;        // why the rank stopped before the end of its share
};

// Processes the patterns on the workers' threads as walk_regions processes a
// level (detail::run_prefix_pool): only the prefix finished without a gap is
// kept.
LevelWork process_share(std::vector<std::unique_ptr<RegionWorker>>& workers, const std::vector<ActivationPattern>& share,
                        const StopRequest& stop, const std::function<void(std::size_t)>& on_tick) {
  LevelWork work;
  std::vector<RegionWorker::Outcome> results(share.size());
  const detail::PrefixRun run = detail::run_prefix_pool(
      share.size(), workers.size(), stop,
      [&](std::size_t worker, std::size_t i) { results[i] = workers[worker]->process(share[i]); }, on_tick);
  results.resize(run.prefix);
  work.outcomes = std::move(results);
  work.stopped = run.stopped;
  return work;
}

// The neighbours that a rank's processed regions found. Those this rank
// owns go straight into its seen-set, and into next when new; the others,
// each once, make one message per owner (this rank's own message is empty).
std::vector<std::string> neighbors_by_owner(const LevelWork& work, std::size_t ranks, std::size_t rank,
                                             detail::PatternStore& owned, std::vector<ActivationPattern>& next) {
  std::unordered_set<ActivationPattern, PatternHash> found;
  std::vector<std::vector<const ActivationPattern*>> by_owner(ranks);
  for (const auto& outcome : work.outcomes) {
    if (!outcome.region) continue;
    for (const RegionFacet& facet : outcome.region->facets) {
      if (!facet.neighbor) continue;
      auto add = [&](const ActivationPattern& pattern) {
        const std::size_t owner = ranks == 1 ? 0 : owner_of_pattern(pattern, ranks);
        if (owner == rank) {
          if (owned.insert(pattern).second) next.push_back(pattern);
          return;
        }
        const auto [at, is_new] = found.insert(pattern);
        if (is_new) by_owner[owner].push_back(&*at);
      };
      add(*facet.neighbor);
      for (const auto& other : facet.other_neighbors) add(other);
    }
  }
  std::vector<std::string> outgoing(ranks);
  for (std::size_t r = 0; r < ranks; ++r) {
    if (r == rank) continue;
    ByteWriter out;
    out.put_unsigned(by_owner[r].size());
    for (const ActivationPattern* pattern : by_owner[r]) out.put_pattern(*pattern);
    outgoing[r] = out.take();
  }
  return outgoing;
}

// The side work's notes on a rank's processed prefix; a stop inside it cuts
// the prefix (and stops the walk) where the notes end.
std::vector<std::string> notes_on_level(OwnedRegionWork& side, LevelWork& work, const StopRequest& stop) {
  std::vector<const Region*> regions;
  regions.reserve(work.outcomes.size());
  for (const auto& outcome : work.outcomes) regions.push_back(outcome.region ? &*outcome.region : nullptr);
  std::vector<std::string> notes = side.notes_for_level(regions, stop);
  if (notes.size() > work.outcomes.size()) throw usage_error("OwnedRegionWork: more notes than regions");
  if (notes.size() < work.outcomes.size()) {
    work.outcomes.resize(notes.size());
    if (work.stopped == StopReason::none) work.stopped = stop.reason() != StopReason::none ? stop.reason() : StopReason::requested;
  }
  return notes;
}

// The level's processed prefix for rank 0, in the share's (pattern) order,
// each with its side-work note when there are notes, then the first pattern
// left undone, if any.
std::string level_message(const LevelWork& work, const std::vector<ActivationPattern>& share,
                          const std::vector<std::string>* notes) {
  ByteWriter out;
  out.put_unsigned(work.outcomes.size());
  for (std::size_t i = 0; i < work.outcomes.size(); ++i) {
    const auto& outcome = work.outcomes[i];
    out.put_bool(outcome.region.has_value());
    out.put_unsigned(outcome.degenerate_crossings);
    if (outcome.region) put_region(out, *outcome.region);
    else out.put_pattern(share[i]);
    if (notes) out.put_bytes((*notes)[i]);
  }
  const bool is_cut = work.outcomes.size() < share.size();
  out.put_bool(is_cut);
  if (is_cut) out.put_pattern(share[work.outcomes.size()]);
  return out.take();
}

// One processed pattern as rank 0 reads it back.
struct Delivered {
  ActivationPattern pattern;
  RegionWorker::Outcome outcome;
  std::string note;  // the side work's, when there is side work
};

struct RankLevel {
  std::vector<Delivered> items;  // sorted by pattern
  std::optional<ActivationPattern> first_undone;
};

// Rank 0's own share of a level as read_level_message would give it back,
// without the bytes: its records are moved, not copied.
RankLevel own_level(LevelWork& work, const std::vector<ActivationPattern>& share,
                    std::optional<std::vector<std::string>>& notes) {
  RankLevel level;
  level.items.resize(work.outcomes.size());
  for (std::size_t i = 0; i < work.outcomes.size(); ++i) {
    Delivered& item = level.items[i];
    item.pattern = share[i];
    item.outcome = std::move(work.outcomes[i]);
    if (notes) item.note = std::move((*notes)[i]);
  }
  if (work.outcomes.size() < share.size()) level.first_undone = share[work.outcomes.size()];
  work.outcomes.clear();
  return level;
}

RankLevel read_level_message(std::string_view bytes, bool has_notes) {
  ByteReader in(bytes);
  RankLevel level;
  level.items.resize(in.get_size());
  for (Delivered& item : level.items) {
    const bool is_region = in.get_bool();
    item.outcome.degenerate_crossings = in.get_unsigned();
    if (is_region) {
      item.outcome.region = get_region(in);
      item.pattern = item.outcome.region->pattern;
    } else {
      item.pattern = in.get_pattern();
    }
    if (has_notes) item.note = std::string(in.get_bytes());
  }
  if (in.get_bool()) level.first_undone = in.get_pattern();
  return level;
}

// Rank 0's record of the regions delivered in output order: what
// walk_regions keeps for its summary (the packed seen-set, ids, the streamed
// adjacency summary), the same numbering and the same summary at the end.
class Ledger {
 public:
  Ledger(const Network& network, const WalkOptions& options, OwnedRegionWork* side)
      : network_(network),
        options_(options),
        side_(side),
        seen_(network.relu_neuron_count()),
        adjacency_([this](std::uint32_t slot) { return maps_on_pattern(network_, seen_.pattern(slot)).output; }) {}

  // Merges the ranks' sorted streams of one level and delivers them in
  // pattern order up to the first pattern some rank left undone. Returns
  // max_regions or requested when the walk must stop here, else none.
  StopReason take_level(std::vector<RankLevel> ranks) {
    adjacency_.start_level(static_cast<std::uint32_t>(summary_.regions));
    std::vector<std::size_t> head(ranks.size(), 0);
    for (;;) {
      // The smallest next pattern over the ranks: a delivered one, or the
      // first one a rank left undone (which ends the level).
      std::optional<std::size_t> best;
      bool is_undone = false;
      const ActivationPattern* smallest = nullptr;
      for (std::size_t r = 0; r < ranks.size(); ++r) {
        const ActivationPattern* candidate = nullptr;
        bool is_candidate_undone = false;
        if (head[r] < ranks[r].items.size()) {
          candidate = &ranks[r].items[head[r]].pattern;
        } else if (ranks[r].first_undone) {
          candidate = &*ranks[r].first_undone;
          is_candidate_undone = true;
        }
        if (candidate && (!smallest || *candidate < *smallest)) {
          smallest = candidate;
          best = r;
          is_undone = is_candidate_undone;
        }
      }
      if (!best || is_undone) return StopReason::none;
      Delivered& item = ranks[*best].items[head[*best]++];
      if (const StopReason reason = deliver(item); reason != StopReason::none) return reason;
      item = Delivered{};  // free the record now: a level can be large
    }
  }

  // walk_regions' summary of what was delivered.
  WalkSummary finish(StopReason stop_reason, const lp::QueryCounts& counts, double seconds) {
    summary_.stop_reason = stop_reason;
    summary_.counts = counts;
    summary_.complete = stop_reason == StopReason::none;
    summary_.facets = adjacency_.facets();
    summary_.linear_regions = adjacency_.linear_regions();
    std::sort(region_slots_.begin(), region_slots_.end(),
              [&](std::uint32_t a, std::uint32_t b) { return seen_.less(a, b); });
    if (options_.keep_patterns) {
      summary_.patterns.reserve(region_slots_.size());
      for (std::uint32_t slot : region_slots_) summary_.patterns.push_back(seen_.pattern(slot));
    }
    const std::size_t relu_layers = network_.relu_layer_count();
    for (std::size_t k = 0; k < network_.depth(); ++k) {
      // A linear output layer adds no states: its prefix is the whole pattern.
      const std::size_t prefix_end = k < relu_layers ? network_.first_neuron_of_layer(k) + network_.layers[k].width()
                                                     : network_.relu_neuron_count();
      std::size_t prefixes = region_slots_.empty() ? 0 : 1;
      for (std::size_t i = 1; i < region_slots_.size(); ++i)
        prefixes += seen_.common_prefix(region_slots_[i - 1], region_slots_[i]) < prefix_end;
      summary_.regions_per_layer.push_back(prefixes);
    }
    summary_.certified = summary_.complete && adjacency_.all_neighbors_delivered() && !anomaly_;
    summary_.seconds = seconds;
    return std::move(summary_);
  }

  std::size_t regions() const { return summary_.regions; }

 private:
  std::pair<std::uint32_t, bool> remember(const ActivationPattern& pattern) {
    const auto inserted = seen_.insert(pattern);
    if (inserted.second) id_of_slot_.push_back(detail::no_region);
    return inserted;
  }

  // One processed pattern in output order, as walk_regions takes it.
  StopReason deliver(Delivered& item) {
    if (!item.outcome.region) {
      anomaly_ = true;
      return StopReason::none;
    }
    if (options_.max_regions && summary_.regions >= options_.max_regions) return StopReason::max_regions;
    Region& region = *item.outcome.region;
    region.id = summary_.regions++;
    summary_.bounded_regions += region.bounded;
    summary_.degenerate_crossings += item.outcome.degenerate_crossings;
    if (!region.nonsmooth_neurons.empty()) summary_.nonsmooth_regions.emplace_back(region.pattern, region.nonsmooth_neurons);
    const auto id = static_cast<std::uint32_t>(region.id);
    const std::uint32_t slot = remember(region.pattern).first;
    id_of_slot_[slot] = id;
    region_slots_.push_back(slot);
    neighbors_.clear();
    const auto add_neighbor = [&](const ActivationPattern& neighbor) {
      const std::uint32_t neighbor_slot = remember(neighbor).first;
      if (std::find(neighbors_.begin(), neighbors_.end(), neighbor_slot) == neighbors_.end())
        neighbors_.push_back(neighbor_slot);
    };
    for (const auto& facet : region.facets) {
      if (!facet.neighbor) continue;
      add_neighbor(*facet.neighbor);
      for (const auto& other : facet.other_neighbors) add_neighbor(other);
    }
    if (side_) side_->take_note(region, std::move(item.note));
    const bool is_stop_asked = options_.on_region && !options_.on_region(region);
    adjacency_.add_region(id, slot, neighbors_, std::move(region.affine), id_of_slot_);  // after on_region, which reads it
    return is_stop_asked ? StopReason::requested : StopReason::none;
  }

  const Network& network_;
  const WalkOptions& options_;
  OwnedRegionWork* side_;
  WalkSummary summary_;
  detail::PatternStore seen_;
  std::vector<std::uint32_t> id_of_slot_;    // detail::no_region until delivered
  std::vector<std::uint32_t> region_slots_;  // by region id
  std::vector<std::uint32_t> neighbors_;
  detail::WalkAdjacency adjacency_;
  bool anomaly_ = false;
};

// Every rank's part of one walk: the level loop. On rank 0 (leader_options
// set) the ledger delivers regions and the summary is returned; elsewhere the
// returned summary is empty.
WalkSummary walk_on_rank(const Network& network, const Domain& domain, const WalkSettings& settings,
                         const std::atomic<bool>* interrupt, WalkTransport& transport,
                         const WalkOptions* leader_options, DistributedWalkStatistics* statistics,
                         OwnedRegionWork* side) {
  const auto started = Clock::now();
  const std::uint64_t bytes_before = transport.bytes_sent();
  std::size_t levels = 0;
  auto elapsed = [&] { return std::chrono::duration<double>(Clock::now() - started).count(); };
  const StopRequest stop(interrupt, settings.time_limit_seconds, started);
  const std::size_t ranks = transport.size();
  const std::size_t rank = transport.rank();
  const unsigned threads = settings.threads ? settings.threads : std::max(1u, std::thread::hardware_concurrency());
  std::vector<std::unique_ptr<RegionWorker>> workers;
  for (unsigned t = 0; t < threads; ++t)
    workers.push_back(std::make_unique<RegionWorker>(network, domain, settings.keep_certificates, settings.exact_only));
  std::optional<Ledger> ledger;
  if (leader_options) ledger.emplace(network, *leader_options, side);

  // Rank 0 finds the start pattern (or is stopped first) and tells everyone.
  std::string start_message;
  if (rank == 0) {
    ByteWriter out;
    try {
      const StopScope scope(stop);
      const ActivationPattern start = walk_start_pattern(network, domain);
      out.put_unsigned(code_of(StopReason::none));
      out.put_pattern(start);
    } catch (const Stopped& stopped) {
      out.put_unsigned(code_of(stopped.reason()));
    }
    start_message = out.take();
  }
  start_message = transport.broadcast_from_leader(std::move(start_message));
  ByteReader start_reader(start_message);
  StopReason stop_reason = reason_of(start_reader.get_unsigned());
  std::vector<ActivationPattern> share;  // this rank's patterns of the level, sorted
  detail::PatternStore owned(network.relu_neuron_count());  // the patterns this rank owns, each once
  std::uint64_t level_size = 0;  // over all ranks
  if (stop_reason == StopReason::none) {
    ActivationPattern start = start_reader.get_pattern();
    level_size = 1;
    if (owner_of_pattern(start, ranks) == rank) {
      owned.insert(start);
      share.push_back(std::move(start));
    }
  }

  while (stop_reason == StopReason::none && level_size > 0) {
    std::function<void(std::size_t)> on_tick;
    if (leader_options && leader_options->on_progress)
      on_tick = [&](std::size_t finished) {
        // Rank 0 sees its own share only until the level is gathered.
        leader_options->on_progress(WalkProgress{ledger->regions() + finished, level_size - finished, elapsed()});
      };
    LevelWork work = process_share(workers, share, stop, on_tick);
    std::optional<std::vector<std::string>> notes;
    if (side) notes = notes_on_level(*side, work, stop);
    ++levels;

    // Neighbours to their owners, who keep the new ones as the next level.
    std::vector<ActivationPattern> next;
    std::vector<std::string> incoming = transport.exchange(neighbors_by_owner(work, ranks, rank, owned, next));
    for (std::size_t sender = 0; sender < ranks; ++sender) {
      if (sender == rank) continue;
      ByteReader in(incoming[sender]);
      for (std::size_t count = in.get_size(); count > 0; --count) {
        ActivationPattern pattern = in.get_pattern();
        if (owned.insert(pattern).second) next.push_back(std::move(pattern));
      }
    }
    std::sort(next.begin(), next.end());

    // The level's regions to rank 0, merged there into output order (rank
    // 0's own share stays in memory).
    const StopReason stopped_here = work.stopped;
    std::vector<std::string> gathered =
        transport.gather_to_leader(rank == 0 ? std::string() : level_message(work, share, notes ? &*notes : nullptr));
    StopReason leader_stop = StopReason::none;
    if (ledger) {
      std::vector<RankLevel> streams;
      streams.reserve(gathered.size());
      streams.push_back(own_level(work, share, notes));
      for (std::size_t sender = 1; sender < gathered.size(); ++sender) {
        streams.push_back(read_level_message(gathered[sender], side != nullptr));
        std::string().swap(gathered[sender]);
      }
      leader_stop = ledger->take_level(std::move(streams));
    }
    if (side) {  // rank 0's news of the level to the others, before their next level
      const std::string news = transport.broadcast_from_leader(ledger ? side->news_after_level() : std::string());
      if (!ledger) side->take_news(news);
    }

    // Agree: a stop during the level (any rank) ends the walk; a stop asked
    // for now ends it unless the next level is empty (then it is complete).
    const StopReason during = std::max(stopped_here, leader_stop);
    const std::vector<std::uint64_t> reasons = transport.maximum({code_of(during), code_of(stop.reason())});
    level_size = transport.sum({next.size()})[0];
    if (reasons[0] != code_of(StopReason::none)) stop_reason = reason_of(reasons[0]);
    else if (level_size > 0 && reasons[1] != code_of(StopReason::none)) stop_reason = reason_of(reasons[1]);
    if (leader_options && leader_options->on_progress)
      leader_options->on_progress(WalkProgress{ledger->regions(), level_size, elapsed()});
    share = std::move(next);
  }

  lp::QueryCounts local;
  for (const auto& worker : workers) local += worker->counts();
  const std::vector<std::uint64_t> totals = transport.sum(
      {local.lp_queries, local.filter_settled, local.exact_fallbacks, transport.bytes_sent() - bytes_before});
  if (statistics) *statistics = DistributedWalkStatistics{ranks, levels, totals[3]};
  if (!ledger) return WalkSummary{};
  const lp::QueryCounts counts{totals[0], totals[1], totals[2]};
  return ledger->finish(stop_reason, counts, elapsed());
}

}  // namespace

std::size_t owner_of_pattern(const ActivationPattern& pattern, std::size_t ranks) {
  if (ranks == 0) throw usage_error("owner_of_pattern: no ranks");
  // FNV-1a over the states, then a 64-bit finaliser (splitmix64) so that the
  // low bits are well mixed for any number of ranks.
  std::uint64_t hash = 0xcbf29ce484222325ull;
  for (NeuronState state : pattern.states) {
    hash ^= static_cast<std::uint64_t>(state);
    hash *= 0x100000001b3ull;
  }
  hash ^= hash >> 30;
  hash *= 0xbf58476d1ce4e5b9ull;
  hash ^= hash >> 27;
  hash *= 0x94d049bb133111ebull;
  hash ^= hash >> 31;
  return static_cast<std::size_t>(hash % ranks);
}

WalkSummary lead_distributed_walk(const Network& network, const Domain& domain, const WalkOptions& options,
                                  WalkTransport& transport, DistributedWalkStatistics* statistics,
                                  OwnedRegionWork* side, std::string_view side_setup) {
  if (domain.dim != network.input_dim) throw usage_error("lead_distributed_walk: domain and network dimensions differ");
  if (transport.rank() != 0) throw usage_error("lead_distributed_walk: only rank 0 leads");
  const WalkSettings settings{options.time_limit_seconds, options.keep_certificates, options.exact_only, options.threads,
                              side != nullptr};
  transport.broadcast_from_leader(encode_command(Command::walk, settings, side_setup));
  return walk_on_rank(network, domain, settings, options.interrupt, transport, &options, statistics, side);
}

void lead_distributed_task(WalkTransport& transport, std::string_view task) {
  if (transport.rank() != 0) throw usage_error("lead_distributed_task: only rank 0 leads");
  transport.broadcast_from_leader(encode_command(Command::task, {}, task));
}

void finish_distributed_walks(WalkTransport& transport) {
  if (transport.rank() != 0) throw usage_error("finish_distributed_walks: only rank 0 leads");
  transport.broadcast_from_leader(encode_command(Command::finish));
}

void follow_distributed_walks(const Network& network, const Domain& domain, WalkTransport& transport,
                              const std::atomic<bool>* interrupt, FollowerWork* work) {
  if (transport.rank() == 0) throw usage_error("follow_distributed_walks: rank 0 leads");
  for (;;) {
    const DecodedCommand decoded = decode_command(transport.broadcast_from_leader(""));
    if ((decoded.settings.has_side_work || decoded.command == Command::task) && !work)
      throw usage_error("follow_distributed_walks: rank 0 asked for work this rank cannot do");
    switch (decoded.command) {
      case Command::walk: {
        OwnedRegionWork* side = decoded.settings.has_side_work ? &work->start_walk(decoded.payload) : nullptr;
        walk_on_rank(network, domain, decoded.settings, interrupt, transport, nullptr, nullptr, side);
        break;
      }
      case Command::task:
        work->run_task(decoded.payload, transport);
        break;
      default:
        return;
    }
  }
}

}  // namespace pleat
