// Graph metrics with Boost.Graph: Brandes (2001) J. Math. Sociol. 25:163-177;
// Tarjan (1972) SIAM J. Comput. 1:146-160; Dijkstra (1959) Numer. Math. 1:269-271.
#include "cullcast/network/network_graph.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include <boost/graph/adjacency_list.hpp>
#include <boost/graph/betweenness_centrality.hpp>
#include <boost/graph/dijkstra_shortest_paths.hpp>
#include <boost/graph/strong_components.hpp>

namespace cullcast::network {
namespace {

using Graph = boost::adjacency_list<boost::vecS, boost::vecS, boost::directedS, boost::no_property,
                                    boost::property<boost::edge_weight_t, double>>;

void require_square(const SparseMatrix& p, const char* what) {
  if (p.rows() != p.cols()) {
    throw std::invalid_argument(std::string(what) + ": the reef-to-reef matrix must be square, is " +
                                std::to_string(p.rows()) + " x " + std::to_string(p.cols()));
  }
}

bool is_edge(Eigen::Index i, Eigen::Index j, double value, double threshold) {
  return i != j && value > 0 && value >= threshold;
}

Graph make_graph(const SparseMatrix& p, double threshold) {
  Graph g(static_cast<std::size_t>(p.rows()));
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) {
      if (!is_edge(i, it.col(), it.value(), threshold)) continue;
      // p <= 1 keeps lengths >= 0 as Dijkstra requires.
      boost::add_edge(static_cast<std::size_t>(i), static_cast<std::size_t>(it.col()),
                      -std::log(std::min(1.0, it.value())), g);
    }
  }
  return g;
}

}  // namespace

std::vector<double> betweenness(const SparseMatrix& p, double threshold) {
  require_square(p, "betweenness");
  const Graph g = make_graph(p, threshold);
  std::vector<double> centrality(boost::num_vertices(g), 0.0);
  boost::brandes_betweenness_centrality(
      g, boost::centrality_map(boost::make_iterator_property_map(
                                   centrality.begin(), boost::get(boost::vertex_index, g)))
             .weight_map(boost::get(boost::edge_weight, g)));
  return centrality;
}

Components strong_components(const SparseMatrix& p, double threshold) {
  require_square(p, "strong_components");
  const Graph g = make_graph(p, threshold);
  Components c;
  c.component.assign(boost::num_vertices(g), 0);
  const int n = boost::num_vertices(g) == 0
                    ? 0
                    : boost::strong_components(
                          g, boost::make_iterator_property_map(c.component.begin(),
                                                               boost::get(boost::vertex_index, g)));
  c.size.assign(static_cast<std::size_t>(n), 0);
  for (int k : c.component) ++c.size[k];
  return c;
}

std::vector<int> out_degree(const SparseMatrix& p, double threshold) {
  require_square(p, "out_degree");
  std::vector<int> d(static_cast<std::size_t>(p.rows()), 0);
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) {
      if (is_edge(i, it.col(), it.value(), threshold)) ++d[i];
    }
  }
  return d;
}

std::vector<int> in_degree(const SparseMatrix& p, double threshold) {
  require_square(p, "in_degree");
  std::vector<int> d(static_cast<std::size_t>(p.cols()), 0);
  for (Eigen::Index i = 0; i < p.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(p, i); it; ++it) {
      if (is_edge(i, it.col(), it.value(), threshold)) ++d[it.col()];
    }
  }
  return d;
}

SteppingStonePath most_probable_path(const SparseMatrix& p, int from, int to) {
  require_square(p, "most_probable_path");
  const int n = static_cast<int>(p.rows());
  if (from < 0 || from >= n || to < 0 || to >= n) {
    throw std::invalid_argument("most_probable_path: reef index outside 0.." + std::to_string(n - 1));
  }
  SteppingStonePath path;
  if (from == to) {
    path.reefs = {from};
    path.probability = 1.0;
    return path;
  }
  const Graph g = make_graph(p, 0.0);
  std::vector<std::size_t> pred(static_cast<std::size_t>(n));
  std::vector<double> dist(static_cast<std::size_t>(n));
  const auto index = boost::get(boost::vertex_index, g);
  boost::dijkstra_shortest_paths(
      g, static_cast<std::size_t>(from),
      boost::predecessor_map(boost::make_iterator_property_map(pred.begin(), index))
          .distance_map(boost::make_iterator_property_map(dist.begin(), index)));
  if (pred[to] == static_cast<std::size_t>(to)) return path;  // unreachable
  for (std::size_t v = static_cast<std::size_t>(to);; v = pred[v]) {
    path.reefs.push_back(static_cast<int>(v));
    if (v == static_cast<std::size_t>(from)) break;
  }
  std::reverse(path.reefs.begin(), path.reefs.end());
  path.probability = std::exp(-dist[to]);
  return path;
}

SparseMatrix matrix_power(const SparseMatrix& p, int k, double prune) {
  require_square(p, "matrix_power");
  if (k < 1) throw std::invalid_argument("matrix_power: k must be >= 1");
  SparseMatrix result = p;
  for (int g = 1; g < k; ++g) {
    SparseMatrix next = (result * p).pruned(1.0, prune);  // keep |x| > prune
    result = std::move(next);
  }
  return result;
}

std::vector<int> generation_reach(const SparseMatrix& p, int k, double threshold) {
  // Pruning keeps P^k sparse. A pruned entry (< threshold/1000) can matter only
  // if more than a thousand such contributions meet on one reef; the count is
  // then an undercount (docs/methods.md). matrix_power(p, k, 0) is exact.
  const SparseMatrix pk = matrix_power(p, k, threshold * 1e-3);
  std::vector<int> reach(static_cast<std::size_t>(p.rows()), 0);
  for (Eigen::Index i = 0; i < pk.outerSize(); ++i) {
    for (SparseMatrix::InnerIterator it(pk, i); it; ++it) {
      if (is_edge(i, it.col(), it.value(), threshold)) ++reach[i];
    }
  }
  return reach;
}

}  // namespace cullcast::network
