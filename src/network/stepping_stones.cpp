#include "cullcast/network/stepping_stones.hpp"

#include <algorithm>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/network/connectivity_writer.hpp"

namespace cullcast::network {

std::vector<SteppingStoneRoute> stepping_stone_routes(const SparseMatrix& p,
                                                      const std::vector<int>& sinks) {
  std::vector<SteppingStoneRoute> routes;
  const int n = static_cast<int>(p.rows());
  for (int to : sinks) {
    std::vector<SteppingStoneRoute> into;
    for (int from = 0; from < n; ++from) {
      if (from == to) continue;
      SteppingStonePath path = most_probable_path(p, from, to);
      if (path.reefs.empty()) continue;
      into.push_back({from, to, path.probability, std::move(path.reefs)});
    }
    std::stable_sort(into.begin(), into.end(), [](const auto& a, const auto& b) {
      return a.probability > b.probability;
    });
    routes.insert(routes.end(), into.begin(), into.end());
  }
  return routes;
}

void write_stepping_stones_csv(const std::filesystem::path& path,
                               const std::vector<std::string>& reef_ids,
                               const std::vector<SteppingStoneRoute>& routes) {
  AtomicFile file(path);
  std::ostream& out = file.stream();
  out << "source_id,sink_id,path_probability,stones,path\n";
  for (const auto& r : routes) {
    std::string joined;
    for (int k : r.reefs) joined += (joined.empty() ? "" : " > ") + reef_ids.at(static_cast<std::size_t>(k));
    out << '"' << reef_ids.at(static_cast<std::size_t>(r.from)) << "\",\""
        << reef_ids.at(static_cast<std::size_t>(r.to)) << "\"," << csv_number(r.probability) << ','
        << (r.reefs.size() >= 2 ? r.reefs.size() - 2 : 0) << ",\"" << joined << "\"\n";
  }
  file.commit();
}

}  // namespace cullcast::network
