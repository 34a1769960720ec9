#include "cullcast/network/connectivity_writer.hpp"

#include <netcdf>

#include <charconv>
#include <cmath>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/network/binomial_interval.hpp"

namespace cullcast::network {
namespace fs = std::filesystem;
namespace {

// RFC 4180: quote fields holding a comma, quote or line break.
std::string csv_text(const std::string& s) {
  if (s.find_first_of(",\"\r\n") == std::string::npos) return s;
  std::string out = "\"";
  for (char ch : s) {
    if (ch == '"') out += '"';
    out += ch;
  }
  return out + "\"";
}

std::string level_name(double q) {
  std::ostringstream s;
  s << "q" << q;  // q0.05, q0.5, q0.95
  return s.str();
}

}  // namespace

std::string csv_number(double value) {
  if (std::isnan(value)) return "";
  char buffer[32];
  const auto r = std::to_chars(buffer, buffer + sizeof buffer, value);
  return std::string(buffer, r.ptr);
}

void write_connectivity_csv(const fs::path& path, const Connectivity& c, const Ensemble& ensemble,
                            double confidence) {
  AtomicFile file(path);
  std::ostream& out = file.stream();
  out << "source_id,sink_id,event,released,settled,probability,settlers,wilson_low,wilson_high,"
         "mean,sd,cv,min,max";
  for (double q : ensemble.quantile_levels) out << "," << level_name(q);
  out << "\n";
  const std::string blanks(5 + ensemble.quantile_levels.size(), ',');  // mean..quantiles empty
  for (std::size_t e = 0; e < c.events.size(); ++e) {
    const EventMatrices& m = c.events[e];
    for (Eigen::Index i = 0; i < m.probability.outerSize(); ++i) {
      SparseMatrix::InnerIterator p(m.probability, i), w(m.settled, i), n(m.count, i);
      for (; p; ++p, ++w, ++n) {
        const Interval ci =
            wilson_interval(w.value(), static_cast<double>(m.released[i]), confidence);
        out << csv_text(c.source_ids[i]) << ',' << csv_text(c.sink_ids[p.col()]) << ',' << e
            << ',' << m.released[i] << ',' << csv_number(w.value()) << ','
            << csv_number(p.value()) << ',' << csv_number(n.value()) << ','
            << csv_number(ci.low) << ',' << csv_number(ci.high) << blanks << "\n";
      }
    }
  }
  for (const LinkStats& l : ensemble.links) {
    out << csv_text(c.source_ids[l.source]) << ',' << csv_text(c.sink_ids[l.sink]) << ",all,"
        << l.released << ',' << csv_number(l.settled) << ',' << csv_number(l.pooled) << ','
        << csv_number(l.count) << ',' << csv_number(l.wilson_low) << ','
        << csv_number(l.wilson_high) << ',' << csv_number(l.mean) << ',' << csv_number(l.sd)
        << ',' << csv_number(l.cv) << ',' << csv_number(l.min) << ',' << csv_number(l.max);
    for (double q : l.quantiles) out << ',' << csv_number(q);
    out << "\n";
  }
  file.commit();
}

void write_connectivity_netcdf(const fs::path& path, const Connectivity& c,
                               const Ensemble& ensemble, const Attributes& attributes) {
  using namespace netCDF;
  AtomicFile target(path);
  try {
    NcFile f(target.temp_path().string(), NcFile::replace, NcFile::nc4);
    f.putAtt("title", "cullcast connectivity matrices");
    f.putAtt("Conventions", "CF-1.13");
    f.putAtt("orientation",
             "row (dimension source) = where larvae were released; column (dimension sink) = "
             "reef they settled on");
    for (const auto& [key, value] : attributes) f.putAtt(key, value);
    const std::size_t ne = c.events.size(), ns = c.sources(), nr = c.sinks();
    // NetCDF dimensions cannot be 0 in a fixed size; empty tables keep length 1 unused.
    const NcDim d_event = f.addDim("event", std::max<std::size_t>(1, ne));
    const NcDim d_source = f.addDim("source", std::max<std::size_t>(1, ns));
    const NcDim d_sink = f.addDim("sink", std::max<std::size_t>(1, nr));
    const NcDim d_q = f.addDim("quantile", std::max<std::size_t>(1, ensemble.quantile_levels.size()));

    auto string_var = [&](const char* name, const NcDim& dim, const std::vector<std::string>& v,
                          const char* long_name) {
      NcVar var = f.addVar(name, ncString, dim);
      var.putAtt("long_name", long_name);
      for (std::size_t i = 0; i < v.size(); ++i) var.putVar({i}, v[i]);
      return var;
    };
    string_var("source_id", d_source, c.source_ids, "release source id (reef or aggregation)");
    string_var("sink_id", d_sink, c.sink_ids, "settlement reef id");
    string_var("event_label", d_event, c.event_labels, "spawning event");
    NcVar v_kind = f.addVar("source_kind", ncByte, d_source);
    v_kind.putAtt("long_name", "kind of release source");
    const signed char flags[] = {0, 1};
    v_kind.putAtt("flag_values", ncByte, 2, flags);  // CF-1.13 §3.5 flags
    v_kind.putAtt("flag_meanings", "reef aggregation");
    std::vector<signed char> kinds(c.source_kinds.begin(), c.source_kinds.end());
    if (!kinds.empty()) v_kind.putVar({0}, {kinds.size()}, kinds.data());
    NcVar v_q = f.addVar("quantile", ncDouble, d_q);
    v_q.putAtt("long_name", "quantile level of the ensemble quantiles");
    v_q.putAtt("units", "1");
    if (!ensemble.quantile_levels.empty()) v_q.putVar({0}, {ensemble.quantile_levels.size()}, ensemble.quantile_levels.data());

    NcVar v_released = f.addVar("released", ncInt64, {d_event, d_source});
    v_released.putAtt("long_name", "particles released per source and event");
    v_released.putAtt("units", "1");
    const std::vector<std::size_t> chunk = {1, std::min<std::size_t>(std::max<std::size_t>(1, ns), 256),
                                            std::min<std::size_t>(std::max<std::size_t>(1, nr), 256)};
    auto matrix_var = [&](const char* name, NcType type, const char* long_name) {
      NcVar var = f.addVar(name, type, {d_event, d_source, d_sink});
      var.setChunking(NcVar::nc_CHUNKED, const_cast<std::vector<std::size_t>&>(chunk));
      var.setCompression(true, true, 4);
      var.putAtt("long_name", long_name);
      var.putAtt("units", "1");
      return var;
    };
    NcVar v_count = matrix_var("count", ncInt, "particles from the source that settled on the sink reef");
    NcVar v_settled = matrix_var("settled", ncDouble, "larvae represented by those particles (after weight mortality)");
    NcVar v_prob = matrix_var("probability", ncDouble, "settlement probability P = settled / released (row = source, column = sink)");
    const std::vector<std::size_t> chunk2 = {chunk[1], chunk[2]};
    auto ensemble_var = [&](const char* name, const char* long_name) {
      NcVar var = f.addVar(name, ncDouble, {d_source, d_sink});
      var.setChunking(NcVar::nc_CHUNKED, const_cast<std::vector<std::size_t>&>(chunk2));
      var.setCompression(true, true, 4);
      var.putAtt("long_name", long_name);
      var.putAtt("units", "1");
      var.putAtt("cell_methods", "event: mean");
      return var;
    };
    NcVar v_mean = ensemble_var("probability_mean", "ensemble mean settlement probability across events");
    NcVar v_sd = ensemble_var("probability_sd", "ensemble sample standard deviation of the settlement probability across events");
    v_sd.putAtt("cell_methods", "event: standard_deviation");

    // Dense rows, written a block of rows at a time: memory stays rows x sinks.
    const std::size_t block = chunk[1];
    std::vector<double> buf;
    std::vector<int> ibuf;
    auto write_block = [&](const SparseMatrix& m, NcVar& var, bool integer, std::size_t event,
                           bool three_d) {
      for (std::size_t r0 = 0; r0 < ns; r0 += block) {
        const std::size_t rows = std::min(block, ns - r0);
        buf.assign(rows * nr, 0.0);
        for (std::size_t r = 0; r < rows; ++r) {
          for (SparseMatrix::InnerIterator it(m, static_cast<Eigen::Index>(r0 + r)); it; ++it) {
            buf[r * nr + it.col()] = it.value();
          }
        }
        if (nr == 0) continue;
        if (integer) {
          ibuf.assign(buf.begin(), buf.end());
          var.putVar({event, r0, 0}, {1, rows, nr}, ibuf.data());
        } else if (three_d) {
          var.putVar({event, r0, 0}, {1, rows, nr}, buf.data());
        } else {
          var.putVar({r0, 0}, {rows, nr}, buf.data());
        }
      }
    };
    for (std::size_t e = 0; e < ne; ++e) {
      const EventMatrices& m = c.events[e];
      const std::vector<long long> released(m.released.begin(), m.released.end());
      if (ns > 0) v_released.putVar({e, 0}, {1, ns}, released.data());
      write_block(m.count, v_count, true, e, true);
      write_block(m.settled, v_settled, false, e, true);
      write_block(m.probability, v_prob, false, e, true);
    }
    if (ensemble.mean.rows() == static_cast<Eigen::Index>(ns)) {
      write_block(ensemble.mean, v_mean, false, 0, false);
      write_block(ensemble.sd, v_sd, false, 0, false);
    }
  } catch (const exceptions::NcException& e) {
    throw std::runtime_error("cannot write " + path.string() + ": " + e.what());
  }
  target.commit();
}

void write_reef_metrics_csv(const fs::path& path, const std::vector<std::string>& reef_ids,
                            const std::vector<double>& output,
                            const std::vector<ReefMetrics>& metrics, int k) {
  AtomicFile file(path);
  std::ostream& out = file.stream();
  out << "reef_id,larval_output,local_retention,self_recruitment,settlement_success,"
         "export_strength,import_strength,out_degree,in_degree,betweenness,component,"
         "component_size,reach_"
      << k << ",role\n";
  for (std::size_t i = 0; i < metrics.size(); ++i) {
    const ReefMetrics& m = metrics[i];
    out << csv_text(reef_ids[i]) << ',' << csv_number(output[i]) << ','
        << csv_number(m.local_retention) << ',' << csv_number(m.self_recruitment) << ','
        << csv_number(m.settlement_success) << ',' << csv_number(m.export_strength) << ','
        << csv_number(m.import_strength) << ',' << m.out_degree << ',' << m.in_degree << ','
        << csv_number(m.betweenness) << ',' << m.component << ',' << m.component_size << ','
        << m.reach << ',' << m.role << "\n";
  }
  file.commit();
}

void write_attribution_csv(const fs::path& path, const Connectivity& c,
                           const std::vector<Attribution>& attributions) {
  AtomicFile file(path);
  std::ostream& out = file.stream();
  out << "sink,sink_reef_id,rank,origin_id,share,event_mean,event_sd,event_min,event_max,"
         "events_with_settlers\n";
  for (const Attribution& a : attributions) {
    for (std::size_t r = 0; r < a.origins.size(); ++r) {
      const OriginShare& o = a.origins[r];
      out << csv_text(a.sink_id) << ',' << csv_text(c.sink_ids[a.sink]) << ',' << r + 1 << ','
          << csv_text(c.source_ids[o.source]) << ',' << csv_number(o.share) << ','
          << csv_number(o.event_mean) << ',' << csv_number(o.event_sd) << ','
          << csv_number(o.event_min) << ',' << csv_number(o.event_max) << ','
          << a.events_with_settlers << "\n";
    }
  }
  file.commit();
}

}  // namespace cullcast::network
