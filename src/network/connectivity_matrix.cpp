#include "cullcast/network/connectivity_matrix.hpp"

#include <map>
#include <string>

#include "cullcast/base/error.hpp"

namespace cullcast::network {

Connectivity build_connectivity(const drift::SettlementData& data,
                                const std::filesystem::path& file) {
  Connectivity c;
  c.source_ids = data.tables.source_ids;
  c.source_kinds = data.tables.source_kinds;
  c.source_reefs = data.tables.source_reefs;
  c.sink_ids = data.tables.reef_ids;
  c.event_labels = data.tables.event_labels;
  const std::size_t ns = c.sources(), nr = c.sinks(), ne = c.event_labels.size();
  if (c.source_kinds.size() != ns || c.source_reefs.size() != ns) {
    throw InputError(file.string() + ": source tables disagree in length (source_id " +
                     std::to_string(ns) + ", source_kind " + std::to_string(c.source_kinds.size()) +
                     ", source_reef " + std::to_string(c.source_reefs.size()) + ")");
  }
  if (data.fates.size() != ne * ns) {
    throw InputError(file.string() + ": variable 'released' has " +
                     std::to_string(data.fates.size()) + " values, expected event x source = " +
                     std::to_string(ne * ns));
  }
  for (std::size_t s = 0; s < ns; ++s) {
    if (c.source_reefs[s] < -1 || c.source_reefs[s] >= static_cast<std::int32_t>(nr)) {
      throw InputError(file.string() + ": variable 'source_reef' of source " + std::to_string(s) +
                       " (id \"" + c.source_ids[s] + "\") is " + std::to_string(c.source_reefs[s]) +
                       ", expected -1 or a reef index below " + std::to_string(nr));
    }
  }
  // Accumulate per event in ordered maps keyed by (source, sink): the number
  // of links, not sources x sinks, bounds memory.
  std::vector<std::map<std::pair<std::uint32_t, std::uint32_t>, std::pair<double, double>>> links(ne);
  for (std::size_t k = 0; k < data.records.size(); ++k) {
    const auto& r = data.records[k];
    if (r.event >= ne || r.source >= ns || r.reef < 0 || r.reef >= static_cast<std::int32_t>(nr)) {
      throw InputError(file.string() + ": settlement record " + std::to_string(k) + " (event " +
                       std::to_string(r.event) + ", source " + std::to_string(r.source) +
                       ", reef " + std::to_string(r.reef) + ") points outside the tables (" +
                       std::to_string(ne) + " events, " + std::to_string(ns) + " sources, " +
                       std::to_string(nr) + " reefs)");
    }
    if (!(r.weight >= 0)) {
      throw InputError(file.string() + ": settlement record " + std::to_string(k) +
                       ": variable 'weight' is " + std::to_string(r.weight) + ", expected >= 0");
    }
    auto& cell = links[r.event][{r.source, static_cast<std::uint32_t>(r.reef)}];
    cell.first += 1;
    cell.second += r.weight;
  }
  c.events.resize(ne);
  for (std::size_t e = 0; e < ne; ++e) {
    EventMatrices& m = c.events[e];
    m.released.resize(ns);
    for (std::size_t s = 0; s < ns; ++s) m.released[s] = data.fates[e * ns + s].released;
    std::vector<Eigen::Triplet<double>> tc, tw, tp;
    std::vector<double> row_count(ns, 0.0);
    for (const auto& [key, value] : links[e]) {
      const auto [s, j] = key;
      const double released = static_cast<double>(m.released[s]);
      tc.emplace_back(s, j, value.first);
      tw.emplace_back(s, j, value.second);
      tp.emplace_back(s, j, released > 0 ? value.second / released : 0.0);
      row_count[s] += value.first;
    }
    for (std::size_t s = 0; s < ns; ++s) {
      if (row_count[s] > static_cast<double>(m.released[s])) {
        throw InputError(file.string() + ": event " + std::to_string(e) + " (\"" +
                         c.event_labels[e] + "\"), source \"" + c.source_ids[s] + "\": " +
                         std::to_string(static_cast<std::int64_t>(row_count[s])) +
                         " settlement records but variable 'released' is " +
                         std::to_string(m.released[s]));
      }
    }
    const auto rows = static_cast<Eigen::Index>(ns), cols = static_cast<Eigen::Index>(nr);
    m.count.resize(rows, cols);
    m.settled.resize(rows, cols);
    m.probability.resize(rows, cols);
    m.count.setFromTriplets(tc.begin(), tc.end());
    m.settled.setFromTriplets(tw.begin(), tw.end());
    m.probability.setFromTriplets(tp.begin(), tp.end());
  }
  return c;
}

SparseMatrix realised_matrix(const SparseMatrix& probability, const std::vector<double>& output) {
  if (output.size() != static_cast<std::size_t>(probability.rows())) {
    throw std::invalid_argument("realised_matrix: " + std::to_string(output.size()) +
                                " larval outputs for " + std::to_string(probability.rows()) +
                                " sources");
  }
  SparseMatrix r = probability;
  for (Eigen::Index i = 0; i < r.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(r, i); it; ++it) it.valueRef() *= output[i];
  }
  return r;
}

SparseMatrix reef_probability(const Connectivity& c, std::size_t event) {
  const EventMatrices& m = c.events.at(event);
  const std::size_t nr = c.sinks();
  std::vector<double> released(nr, 0.0);
  std::vector<Eigen::Triplet<double>> t;
  for (std::size_t s = 0; s < c.sources(); ++s) {
    if (c.source_kinds[s] != 0 || c.source_reefs[s] < 0) continue;
    released[c.source_reefs[s]] += static_cast<double>(m.released[s]);
  }
  for (std::size_t s = 0; s < c.sources(); ++s) {
    if (c.source_kinds[s] != 0 || c.source_reefs[s] < 0) continue;
    const int r = c.source_reefs[s];
    for (SparseMatrix::InnerIterator it(m.settled, static_cast<Eigen::Index>(s)); it; ++it) {
      if (released[r] > 0) t.emplace_back(r, it.col(), it.value() / released[r]);
    }
  }
  SparseMatrix p(static_cast<Eigen::Index>(nr), static_cast<Eigen::Index>(nr));
  p.setFromTriplets(t.begin(), t.end());  // duplicates (several sources on one reef) are summed
  return p;
}

std::vector<double> reef_output(const Connectivity& c, const std::vector<double>& source_output) {
  std::vector<double> out(c.sinks(), 0.0);
  for (std::size_t s = 0; s < c.sources() && s < source_output.size(); ++s) {
    if (c.source_kinds[s] == 0 && c.source_reefs[s] >= 0) out[c.source_reefs[s]] += source_output[s];
  }
  return out;
}

std::vector<double> row_sums(const SparseMatrix& m) {
  std::vector<double> out(static_cast<std::size_t>(m.rows()), 0.0);
  for (Eigen::Index i = 0; i < m.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(m, i); it; ++it) out[i] += it.value();
  }
  return out;
}

}  // namespace cullcast::network
