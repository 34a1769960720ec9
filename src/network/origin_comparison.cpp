#include "cullcast/network/origin_comparison.hpp"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/network/connectivity_writer.hpp"

namespace cullcast::network {
namespace fs = std::filesystem;

std::vector<BackwardOrigin> read_backward_origins(const fs::path& path) {
  std::ifstream in(path);
  if (!in) throw InputError(path.string() + ": cannot read the backward origins (run cullcast disperse with [backward])");
  std::vector<BackwardOrigin> out;
  std::string line;
  int number = 0;
  bool header = false;
  while (std::getline(in, line)) {
    ++number;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line[0] == '#') continue;
    if (!header) {
      if (line.rfind("reef_id,", 0) != 0) {
        throw InputError(path.string() + " line " + std::to_string(number) +
                         ": expected the header reef_id,weight_s,share");
      }
      header = true;
      continue;
    }
    std::stringstream fields(line);
    std::string id, weight, share;
    std::getline(fields, id, ',');
    std::getline(fields, weight, ',');
    std::getline(fields, share, ',');
    double value = 0;
    try {
      std::size_t used = 0;
      value = std::stod(share, &used);
      if (used != share.size()) throw std::invalid_argument(share);
    } catch (const std::exception&) {
      throw InputError(path.string() + " line " + std::to_string(number) + ", column \"share\": expected a number, found \"" +
                       share + "\"");
    }
    if (id.empty() || !(value >= 0 && value <= 1)) {
      throw InputError(path.string() + " line " + std::to_string(number) +
                       ": expected a reef id and a share between 0 and 1");
    }
    out.push_back({id, value});
  }
  if (!header) throw InputError(path.string() + ": empty (expected the header reef_id,weight_s,share)");
  return out;
}

OriginComparison compare_origins(const Connectivity& c, const Attribution& matrix,
                                 const std::vector<BackwardOrigin>& backward) {
  OriginComparison out;
  out.sink_id = matrix.sink_id;
  std::map<std::string, OriginPair> by_id;
  for (const OriginShare& o : matrix.origins) {
    OriginPair& p = by_id[c.source_ids[o.source]];
    p.origin_id = c.source_ids[o.source];
    p.matrix_share += o.share;
    p.matrix_event_min = o.event_min;
    p.matrix_event_max = o.event_max;
  }
  for (const BackwardOrigin& b : backward) {
    OriginPair& p = by_id[b.reef_id];
    p.origin_id = b.reef_id;
    p.backward_share += b.share;
  }
  for (auto& [id, p] : by_id) {
    out.origins.push_back(p);
    out.total_variation += 0.5 * std::fabs(p.matrix_share - p.backward_share);
  }
  std::sort(out.origins.begin(), out.origins.end(), [](const OriginPair& a, const OriginPair& b) {
    const double ka = std::max(a.matrix_share, a.backward_share), kb = std::max(b.matrix_share, b.backward_share);
    return ka != kb ? ka > kb : a.origin_id < b.origin_id;
  });
  auto top5 = [&](auto share) {
    std::vector<OriginPair> v = out.origins;
    std::stable_sort(v.begin(), v.end(), [&](const OriginPair& a, const OriginPair& b) { return share(a) > share(b); });
    std::set<std::string> ids;
    for (std::size_t i = 0; i < v.size() && i < 5; ++i) {
      if (share(v[i]) > 0) ids.insert(v[i].origin_id);
    }
    return ids;
  };
  const auto a = top5([](const OriginPair& p) { return p.matrix_share; });
  const auto b = top5([](const OriginPair& p) { return p.backward_share; });
  for (const auto& id : a) out.top5_shared += b.count(id) ? 1 : 0;
  return out;
}

void write_origin_comparison_csv(const fs::path& path, const OriginComparison& comparison) {
  AtomicFile file(path);
  std::ostream& o = file.stream();
  o << "sink_reef_id,origin_id,matrix_share,matrix_event_min,matrix_event_max,backward_share\n";
  for (const OriginPair& p : comparison.origins) {
    o << comparison.sink_id << ',' << p.origin_id << ',' << csv_number(p.matrix_share) << ','
      << csv_number(p.matrix_event_min) << ',' << csv_number(p.matrix_event_max) << ','
      << csv_number(p.backward_share) << "\n";
  }
  o << "# total variation distance between the two share lists: " << csv_number(comparison.total_variation)
    << " (0 = same shares, 1 = disjoint)\n";
  o << "# origins named in both top-five lists: " << comparison.top5_shared << "\n";
  o << "# matrix: Bayes attribution over the modelled spawning nights; backward: backward drift from the sink "
       "(any spawning time; diffusion is not time-reversible)\n";
  file.commit();
}

}  // namespace cullcast::network
