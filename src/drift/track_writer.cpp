#include "cullcast/drift/track_writer.hpp"

#include <netcdf>

#include <fstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/netcdf_lock.hpp"

namespace cullcast::drift {
namespace fs = std::filesystem;
namespace {

struct Sample {  // one observation in the scratch file
  std::uint32_t trajectory;
  float depth_m;
  double time_s, lon, lat;
  float age_days;
  float pad;
};

}  // namespace

struct TrackWriter::Impl {
  AtomicFile target;
  fs::path scratch;
  std::ofstream out;
  std::vector<std::string> source_ids;
  currents::Calendar calendar;
  int every_particle, every_steps;
  std::vector<std::pair<std::string, std::string>> attributes;
  // Per trajectory.
  std::vector<std::uint32_t> t_event, t_source, t_particle, t_count;
  std::vector<std::uint8_t> t_done;
  // For the current event: particle index in the set -> trajectory, or -1.
  std::vector<std::int64_t> map;
  std::uint64_t samples = 0;

  Impl(fs::path t, std::vector<std::string> ids, currents::Calendar c, int k, int m,
       std::vector<std::pair<std::string, std::string>> a)
      : target(std::move(t)), source_ids(std::move(ids)), calendar(std::move(c)),
        every_particle(k), every_steps(m), attributes(std::move(a)) {
    scratch = target.temp_path();
    scratch += ".samples";
    out.open(scratch, std::ios::binary | std::ios::trunc);
    if (!out) throw InputError("cannot create track scratch file " + scratch.string());
  }
};

TrackWriter::TrackWriter(fs::path target, std::vector<std::string> source_ids, currents::Calendar calendar,
                         int every_particle, int every_steps,
                         std::vector<std::pair<std::string, std::string>> attributes)
    : impl_(std::make_unique<Impl>(std::move(target), std::move(source_ids), std::move(calendar),
                                   every_particle, every_steps, std::move(attributes))) {}

TrackWriter::~TrackWriter() noexcept {
  if (!impl_) return;
  impl_->out.close();
  std::error_code ignored;
  fs::remove(impl_->scratch, ignored);
}

void TrackWriter::begin_event(std::uint32_t event, const ParticleSet& p) {
  Impl& m = *impl_;
  m.map.assign(p.size(), -1);
  for (std::size_t i = 0; i < p.size(); ++i) {
    if (p.index[i] % static_cast<std::uint32_t>(m.every_particle) != 0) continue;
    m.map[i] = static_cast<std::int64_t>(m.t_event.size());
    m.t_event.push_back(event);
    m.t_source.push_back(p.source[i]);
    m.t_particle.push_back(p.index[i]);
    m.t_count.push_back(0);
    m.t_done.push_back(0);
  }
}

void TrackWriter::after_step(std::uint32_t step, double t_end_s, double event_start_s, const ParticleSet& p) {
  Impl& m = *impl_;
  const bool regular = (step + 1) % static_cast<std::uint32_t>(m.every_steps) == 0;
  for (std::size_t i = 0; i < m.map.size(); ++i) {
    const std::int64_t t = m.map[i];
    if (t < 0 || m.t_done[t] || p.fate[i] == Fate::waiting) continue;
    const bool ended = p.fate[i] != Fate::drifting;
    if (!regular && !ended) continue;
    if (ended) m.t_done[t] = 1;
    const double age = t_end_s - (event_start_s + p.release_s[i]);
    const Sample s{static_cast<std::uint32_t>(t), p.depth_m[i], t_end_s, p.lon[i], p.lat[i],
                   static_cast<float>(age / 86400.0), 0.0f};
    m.out.write(reinterpret_cast<const char*>(&s), sizeof s);
    ++m.t_count[t];
    ++m.samples;
  }
  if (!m.out) throw InputError("cannot write track scratch file " + m.scratch.string());
}

std::uint64_t TrackWriter::samples() const { return impl_->samples; }
std::size_t TrackWriter::trajectories() const { return impl_->t_event.size(); }

void TrackWriter::commit() {
  using namespace netCDF;
  Impl& m = *impl_;
  const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());  // netcdf_lock.hpp

  m.out.close();
  const std::size_t nt = m.t_event.size();
  std::vector<std::uint64_t> offset(nt + 1, 0);
  for (std::size_t t = 0; t < nt; ++t) offset[t + 1] = offset[t] + m.t_count[t];
  try {
    {
      NcFile f(m.target.temp_path().string(), NcFile::replace, NcFile::nc4);
      f.putAtt("Conventions", "CF-1.13");
      f.putAtt("featureType", "trajectory");
      f.putAtt("title", "cullcast larval tracks (subsample)");
      f.putAtt("track_every_particle", ncInt, m.every_particle);
      f.putAtt("track_every_steps", ncInt, m.every_steps);
      for (const auto& [k, v] : m.attributes) f.putAtt(k, v);
      const NcDim dt = f.addDim("trajectory", nt), dobs = f.addDim("obs", m.samples);
      NcVar v_traj = f.addVar("trajectory", ncInt, dt);
      v_traj.putAtt("cf_role", "trajectory_id");
      v_traj.putAtt("long_name", "trajectory number");
      NcVar v_rows = f.addVar("row_size", ncInt, dt);
      v_rows.putAtt("long_name", "number of observations for this trajectory");
      v_rows.putAtt("sample_dimension", "obs");
      NcVar v_event = f.addVar("event", ncInt, dt);
      v_event.putAtt("long_name", "spawning event index (0-based)");
      NcVar v_source = f.addVar("source", ncInt, dt);
      v_source.putAtt("long_name", "release source index (0-based)");
      NcVar v_particle = f.addVar("particle", ncInt, dt);
      v_particle.putAtt("long_name", "particle index within its source");
      NcVar v_sid = f.addVar("source_id", ncString, dt);
      v_sid.putAtt("long_name", "release source id");
      NcVar v_time = f.addVar("time", ncDouble, dobs);
      v_time.putAtt("standard_name", "time");
      v_time.putAtt("units", "seconds since 1970-01-01 00:00:00");
      v_time.putAtt("calendar", m.calendar.name());
      NcVar v_lon = f.addVar("lon", ncDouble, dobs);
      v_lon.putAtt("standard_name", "longitude");
      v_lon.putAtt("units", "degrees_east");
      NcVar v_lat = f.addVar("lat", ncDouble, dobs);
      v_lat.putAtt("standard_name", "latitude");
      v_lat.putAtt("units", "degrees_north");
      NcVar v_depth = f.addVar("depth", ncFloat, dobs);
      v_depth.putAtt("standard_name", "depth");
      v_depth.putAtt("units", "m");
      v_depth.putAtt("positive", "down");
      v_depth.putAtt("axis", "Z");
      NcVar v_age = f.addVar("age", ncFloat, dobs);
      v_age.putAtt("long_name", "larval age");
      v_age.putAtt("units", "days");
      v_age.putAtt("coordinates", "time lat lon depth");
      if (nt > 0) {
        std::vector<int> ids(nt), rows(nt), ev(nt), src(nt), part(nt);
        for (std::size_t t = 0; t < nt; ++t) {
          ids[t] = static_cast<int>(t);
          rows[t] = static_cast<int>(m.t_count[t]);
          ev[t] = static_cast<int>(m.t_event[t]);
          src[t] = static_cast<int>(m.t_source[t]);
          part[t] = static_cast<int>(m.t_particle[t]);
          const std::string& sid = m.t_source[t] < m.source_ids.size() ? m.source_ids[m.t_source[t]] : "";
          v_sid.putVar({t}, sid);
        }
        v_traj.putVar(ids.data());
        v_rows.putVar(rows.data());
        v_event.putVar(ev.data());
        v_source.putVar(src.data());
        v_particle.putVar(part.data());
      }
      // Sort into contiguous trajectories, a bounded block of trajectories per pass.
      std::size_t first = 0;
      while (first < nt) {
        std::size_t last = first + 1;
        while (last < nt && offset[last + 1] - offset[first] <= samples_per_pass) ++last;
        const std::uint64_t base = offset[first], n = offset[last] - base;
        std::vector<double> time(n), lon(n), lat(n);
        std::vector<float> depth(n), age(n);
        std::vector<std::uint64_t> cursor(offset.begin() + first, offset.begin() + last);
        std::ifstream in(m.scratch, std::ios::binary);
        Sample s{};
        while (in.read(reinterpret_cast<char*>(&s), sizeof s)) {
          if (s.trajectory < first || s.trajectory >= last) continue;
          const std::uint64_t at = cursor[s.trajectory - first]++ - base;
          time[at] = s.time_s, lon[at] = s.lon, lat[at] = s.lat, depth[at] = s.depth_m, age[at] = s.age_days;
        }
        if (n > 0) {
          const std::vector<std::size_t> start{base}, count{n};
          v_time.putVar(start, count, time.data());
          v_lon.putVar(start, count, lon.data());
          v_lat.putVar(start, count, lat.data());
          v_depth.putVar(start, count, depth.data());
          v_age.putVar(start, count, age.data());
        }
        first = last;
      }
    }
    m.target.commit();
  } catch (const netCDF::exceptions::NcException& e) {
    throw InputError("cannot write tracks " + m.target.target().string() + ": " + e.what());
  }
  std::error_code ignored;
  fs::remove(m.scratch, ignored);
}

}  // namespace cullcast::drift
