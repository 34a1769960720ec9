#pragma once
// CONTRACT. Where did the settlers on a sink reef come from? Bayes' rule over
// column j of the connectivity matrix (row i = source, column j = sink):
//   Pr(origin i | settled on j) = L_i P_ij / sum_k L_k P_kj,
// the prior on origins being the larval output L_i of each source (an input;
// equal outputs make it P_ij / sum_k P_kj). Computed from the ensemble-mean
// matrix, and per event for the spread (mean, sd, min, max over the events in
// which any larva reached the sink).
#include <string>
#include <vector>

#include "cullcast/network/connectivity_matrix.hpp"

namespace cullcast::network {

struct OriginShare {
  int source = 0;             // row index (source)
  double share = 0;           // from the ensemble-mean matrix; shares sum to 1
  double event_mean = 0, event_sd = 0, event_min = 0, event_max = 0;  // across events
};

struct Attribution {
  std::string sink_id;       // as asked (a reef id or an aggregation id)
  int sink = -1;             // reef (column) index
  int events_with_settlers = 0;
  std::vector<OriginShare> origins;  // ranked by share, largest first; zero shares left out
};

// `sink_id` is a reef id, or the id of an aggregation source (its reef is
// used). Throws InputError when the id is unknown or the aggregation lies on
// no reef. `output` holds L_i per source.
Attribution attribute_sink(const Connectivity& c, const std::string& sink_id,
                           const std::vector<double>& output);

}  // namespace cullcast::network
