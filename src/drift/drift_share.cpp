#include "cullcast/drift/drift_share.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <stdexcept>
#include <string>

namespace cullcast::drift {

std::vector<ReleaseBatch> list_batches(const study::Study& study, std::size_t source_count) {
  const double dt_s = study.motion.dt_minutes * 60.0;
  const double life_s = (study.larvae.precompetent_days + study.larvae.competent_days) * 86400.0;
  std::vector<ReleaseBatch> out;
  out.reserve(study.spawning.size() * source_count);
  for (std::size_t e = 0; e < study.spawning.size(); ++e) {
    const auto& event = study.spawning[e];
    // As run_drift counts them (the nominal lifetime; longer only with
    // temperature-dependent development, which the estimate ignores).
    const double steps = std::ceil((event.hours * 3600.0 + life_s) / dt_s - 1e-9);
    for (std::size_t s = 0; s < source_count; ++s) {
      ReleaseBatch b;
      b.event = static_cast<std::uint32_t>(e);
      b.source = static_cast<std::uint32_t>(s);
      b.particles = static_cast<std::uint64_t>(std::max(0, event.larvae_per_reef));
      b.steps = static_cast<std::uint64_t>(std::max(0.0, steps));
      out.push_back(b);
    }
  }
  return out;
}

std::vector<std::size_t> split_by_cost(const std::vector<ReleaseBatch>& batches, std::size_t parts) {
  if (parts == 0) throw std::invalid_argument("split_by_cost: zero parts");
  std::vector<double> before(batches.size() + 1, 0.0);  // cost of batches [0, i)
  for (std::size_t i = 0; i < batches.size(); ++i) before[i + 1] = before[i] + batches[i].cost();
  const double total = before.back();
  std::vector<std::size_t> cuts(parts + 1, 0);
  cuts[parts] = batches.size();
  for (std::size_t k = 1; k < parts; ++k) {
    const double target = total * static_cast<double>(k) / static_cast<double>(parts);
    // First boundary at or after the target, or the one before it if nearer.
    auto at = static_cast<std::size_t>(std::lower_bound(before.begin(), before.end(), target) - before.begin());
    if (at > 0 && target - before[at - 1] < before[at] - target) --at;
    cuts[k] = std::clamp(at, cuts[k - 1], batches.size());
  }
  return cuts;
}

namespace {

// Both lists are sorted by (step, source, particle); merges them into `into`.
void merge_records(EventOutcome& into, const EventOutcome& other) {
  auto key = [](const EventOutcome& o, std::size_t i) {
    const std::uint64_t k = o.record_keys[i];
    return std::array<std::uint64_t, 3>{k >> 32, o.records[i].source, k & 0xFFFFFFFFu};
  };
  std::vector<SettlementRecord> records;
  std::vector<std::uint64_t> keys;
  records.reserve(into.records.size() + other.records.size());
  keys.reserve(records.capacity());
  std::size_t i = 0, j = 0;
  while (i < into.records.size() || j < other.records.size()) {
    bool take_other = i == into.records.size();
    if (!take_other && j < other.records.size()) {
      const auto a = key(into, i), b = key(other, j);
      if (a == b) {
        throw std::logic_error("merge_outcome: two processes drifted larva " + std::to_string(a[2]) +
                               " of source " + std::to_string(a[1]));
      }
      take_other = b < a;
    }
    const EventOutcome& from = take_other ? other : into;
    std::size_t& at = take_other ? j : i;
    records.push_back(from.records[at]);
    keys.push_back(from.record_keys[at]);
    ++at;
  }
  into.records = std::move(records);
  into.record_keys = std::move(keys);
}

void add_counts(EventOutcome& into, const EventOutcome& other) {
  for (std::size_t s = 0; s < into.fates.size(); ++s) {
    FateCounts& a = into.fates[s];
    const FateCounts& b = other.fates[s];
    a.released += b.released;
    a.settled += b.settled;
    a.died += b.died;
    a.stranded += b.stranded;
    a.lost += b.lost;
    a.drifting += b.drifting;
    a.settled_weight += b.settled_weight;  // one of the two is exactly 0: the sum is exact
  }
  into.particle_steps += other.particle_steps;
  into.land_contacts += other.land_contacts;
  into.off_water += other.off_water;
  into.max_speed_m_s = std::max(into.max_speed_m_s, other.max_speed_m_s);
}

}  // namespace

void merge_outcome(EventOutcome& into, const EventOutcome& other) {
  if (into.fates.size() != other.fates.size()) {
    throw std::logic_error("merge_outcome: " + std::to_string(into.fates.size()) + " and " +
                           std::to_string(other.fates.size()) + " sources");
  }
  if (other.records.empty()) {
    // nothing to interleave (with the contiguous split most ranks hold no part of an event)
  } else if (into.records.empty()) {
    into.records = other.records;
    into.record_keys = other.record_keys;
  } else {
    merge_records(into, other);
  }
  add_counts(into, other);
}

DriftShare DriftShare::of(const std::vector<ReleaseBatch>& all, std::size_t first, std::size_t last,
                          std::size_t event_count, std::size_t source_count) {
  DriftShare share;
  share.batches.assign(event_count, std::vector<std::uint8_t>(source_count, 0));
  for (std::size_t i = first; i < last && i < all.size(); ++i) {
    const ReleaseBatch& b = all[i];
    if (b.event >= event_count || b.source >= source_count) {
      throw std::invalid_argument("DriftShare::of: batch (event " + std::to_string(b.event) + ", source " +
                                  std::to_string(b.source) + ") outside the study");
    }
    share.batches[b.event][b.source] = 1;
  }
  return share;
}

std::vector<std::uint32_t> DriftShare::sources_of(std::size_t event, std::size_t source_count) const {
  std::vector<std::uint32_t> out;
  for (std::size_t s = 0; s < source_count; ++s) {
    if (batches.empty() || (event < batches.size() && s < batches[event].size() && batches[event][s] != 0)) {
      out.push_back(static_cast<std::uint32_t>(s));
    }
  }
  return out;
}

}  // namespace cullcast::drift
