#pragma once
// CONTRACT. Graph views of a square reef-to-reef probability matrix P
// (row i = source reef, column j = sink reef). Edge i -> j exists when
// i != j and P_ij >= threshold (and > 0); its length is -ln P_ij, so the
// shortest path is the most probable multi-generation route: the product of
// the link probabilities along it is largest (sum of -ln p smallest).
// Algorithms from Boost.Graph:
//   betweenness: Brandes (2001), "A faster algorithm for betweenness
//     centrality", J. Math. Sociol. 25:163-177;
//   strong components: Tarjan (1972), "Depth-first search and linear graph
//     algorithms", SIAM J. Comput. 1:146-160;
//   shortest paths: Dijkstra (1959), Numer. Math. 1:269-271.
#include <cstddef>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network {

// Betweenness centrality of each reef, not normalised: the sum over ordered
// pairs (s, t), s != v != t, of the share of shortest s -> t paths through v.
std::vector<double> betweenness(const SparseMatrix& p, double threshold);

struct Components {
  std::vector<int> component;   // component index of each reef
  std::vector<int> size;        // size of each component
};
// Strongly connected components: reefs that reach each other both ways.
Components strong_components(const SparseMatrix& p, double threshold);

// Out-degree (links leaving i) and in-degree (links arriving at i).
std::vector<int> out_degree(const SparseMatrix& p, double threshold);
std::vector<int> in_degree(const SparseMatrix& p, double threshold);

struct SteppingStonePath {
  std::vector<int> reefs;   // from ... to; empty when `to` cannot be reached
  double probability = 0;   // product of the link probabilities along the path
};
// Most probable path from `from` to `to` over every link with P > 0 (the
// threshold does not apply: a weak stepping stone is still a route).
SteppingStonePath most_probable_path(const SparseMatrix& p, int from, int to);

// P^k for k >= 1, entries below `prune` dropped after each product (keeps
// P^k sparse for thousands of reefs; prune = 0 keeps everything).
SparseMatrix matrix_power(const SparseMatrix& p, int k, double prune);

// k-generation reach of each reef: the number of other reefs j with
// (P^k)_ij >= threshold.
std::vector<int> generation_reach(const SparseMatrix& p, int k, double threshold);

}  // namespace cullcast::network
