#include "cullcast/drift/settlement_log.hpp"

#include <netcdf>

#include <cstdio>
#include <fstream>
#include <iomanip>
#include <sstream>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/civil_time.hpp"
#include "cullcast/base/error.hpp"
#include "cullcast/currents/netcdf_lock.hpp"

namespace cullcast::drift {
namespace fs = std::filesystem;
namespace {

// A CSV field (RFC 4180 §2): quoted when it holds a comma, quote or line
// break, inner quotes doubled (event labels such as "2 Dec 2026, night").
std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}


constexpr std::size_t kBufferRecords = 1 << 16;  // bounded memory: records are streamed
constexpr const char* kTimeUnits = "seconds since 1970-01-01 00:00:00";
const char* const kFateNames[] = {"released", "settled", "died", "stranded", "lost", "drifting"};

std::string iso(const currents::Calendar& calendar, double seconds) {
  return format_iso8601(calendar.to_civil(seconds));
}

void put_strings(const netCDF::NcVar& var, const std::vector<std::string>& values) {
  for (std::size_t i = 0; i < values.size(); ++i) var.putVar({i}, values[i]);
}

}  // namespace

struct SettlementLog::Impl {
  AtomicFile nc_target;
  std::unique_ptr<AtomicFile> csv_target;
  LogTables tables;
  std::unique_ptr<netCDF::NcFile> file;
  netCDF::NcVar v_event, v_source, v_reef, v_release, v_settle, v_age, v_weight;
  std::vector<int> b_event, b_source, b_reef;
  std::vector<double> b_release, b_settle, b_age, b_weight;
  std::vector<FateCounts> fates;

  Impl(fs::path nc, fs::path csv, LogTables t) : nc_target(std::move(nc)), tables(std::move(t)) {
    if (!csv.empty()) csv_target = std::make_unique<AtomicFile>(std::move(csv));
    fates.assign(tables.event_labels.size() * tables.source_ids.size(), FateCounts{});
  }
};

SettlementLog::SettlementLog(fs::path netcdf_path, fs::path csv_path, LogTables tables)
    : impl_(std::make_unique<Impl>(std::move(netcdf_path), std::move(csv_path), std::move(tables))) {
  using namespace netCDF;
  Impl& m = *impl_;
  const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());  // netcdf_lock.hpp
  try {
    m.file = std::make_unique<NcFile>(m.nc_target.temp_path().string(), NcFile::replace,
                                      NcFile::nc4);
    NcFile& f = *m.file;
    f.putAtt("title", "cullcast settlement records");
    f.putAtt("Conventions", "CF-1.13");
    for (const auto& [key, value] : m.tables.attributes) f.putAtt(key, value);
    const NcDim d_rec = f.addDim("settlement");
    const NcDim d_src = f.addDim("source", std::max<std::size_t>(1, m.tables.source_ids.size()));
    const NcDim d_reef = f.addDim("reef", std::max<std::size_t>(1, m.tables.reef_ids.size()));
    const NcDim d_event = f.addDim("event", std::max<std::size_t>(1, m.tables.event_labels.size()));
    const std::string calendar = m.tables.calendar.name();

    m.v_event = f.addVar("settlement_event", ncInt, d_rec);
    m.v_event.putAtt("long_name", "spawning event index (0-based, see event_label)");
    m.v_source = f.addVar("settlement_source", ncInt, d_rec);
    m.v_source.putAtt("long_name", "release source index (0-based, see source_id)");
    m.v_reef = f.addVar("settlement_reef", ncInt, d_rec);
    m.v_reef.putAtt("long_name", "reef settled on (0-based, see reef_id)");
    m.v_release = f.addVar("release_time", ncDouble, d_rec);
    m.v_settle = f.addVar("settle_time", ncDouble, d_rec);
    for (NcVar* v : {&m.v_release, &m.v_settle}) {
      v->putAtt("standard_name", "time");
      v->putAtt("units", kTimeUnits);
      v->putAtt("calendar", calendar);
    }
    m.v_age = f.addVar("age", ncDouble, d_rec);
    m.v_age.putAtt("long_name", "larval age at settlement");
    m.v_age.putAtt("units", "days");
    m.v_weight = f.addVar("weight", ncDouble, d_rec);
    m.v_weight.putAtt("long_name", "larvae represented at settlement (after weight mortality)");
    m.v_weight.putAtt("units", "1");
    std::vector<std::size_t> chunk{kBufferRecords};
    for (NcVar* v : {&m.v_event, &m.v_source, &m.v_reef, &m.v_release, &m.v_settle, &m.v_age,
                     &m.v_weight}) {
      v->setChunking(NcVar::nc_CHUNKED, chunk);
    }

    put_strings(f.addVar("source_id", ncString, d_src), m.tables.source_ids);
    NcVar kind = f.addVar("source_kind", ncByte, d_src);
    kind.putAtt("flag_values", ncByte, 2, std::vector<signed char>{0, 1}.data());
    kind.putAtt("flag_meanings", "reef aggregation");
    if (!m.tables.source_kinds.empty()) {
      std::vector<signed char> kinds(m.tables.source_kinds.begin(), m.tables.source_kinds.end());
      kind.putVar(kinds.data());
    }
    NcVar source_reef = f.addVar("source_reef", ncInt, d_src);
    source_reef.putAtt("long_name", "reef a source lies on (0-based), -1 for none");
    if (!m.tables.source_reefs.empty()) source_reef.putVar(m.tables.source_reefs.data());
    put_strings(f.addVar("reef_id", ncString, d_reef), m.tables.reef_ids);
    put_strings(f.addVar("event_label", ncString, d_event), m.tables.event_labels);
    NcVar start = f.addVar("event_start", ncDouble, d_event);
    start.putAtt("standard_name", "time");
    start.putAtt("units", kTimeUnits);
    start.putAtt("calendar", calendar);
    if (!m.tables.event_starts_s.empty()) start.putVar(m.tables.event_starts_s.data());
    for (const char* name : kFateNames) {
      NcVar v = f.addVar(name, ncInt64, std::vector<NcDim>{d_event, d_src});
      v.putAtt("long_name", std::string("particles ") + name + " per event and source");
    }
    NcVar w = f.addVar("settled_weight", ncDouble, std::vector<NcDim>{d_event, d_src});
    w.putAtt("long_name", "larvae represented by the settled particles, per event and source");
  } catch (const netCDF::exceptions::NcException& e) {
    throw std::runtime_error("cannot create " + m.nc_target.target().string() + ": " + e.what());
  }
  if (m.csv_target) {
    m.csv_target->stream() << "event,source_id,reef_id,release_time,settle_time,age_days,weight\n";
  }
}

SettlementLog::~SettlementLog() noexcept {
  try {
    const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());
    if (impl_ && impl_->file) impl_->file->close();
  } catch (...) {
  }
}

void SettlementLog::add(const SettlementRecord& r) {
  Impl& m = *impl_;
  m.b_event.push_back(static_cast<int>(r.event));
  m.b_source.push_back(static_cast<int>(r.source));
  m.b_reef.push_back(r.reef);
  m.b_release.push_back(r.release_time_s);
  m.b_settle.push_back(r.settle_time_s);
  m.b_age.push_back(r.age_s / 86400.0);
  m.b_weight.push_back(r.weight);
  if (m.csv_target) {
    std::ostream& out = m.csv_target->stream();
    out << csv_field(m.tables.event_labels.at(r.event)) << ',' << csv_field(m.tables.source_ids.at(r.source)) << ','
        << csv_field(m.tables.reef_ids.at(static_cast<std::size_t>(r.reef))) << ','
        << iso(m.tables.calendar, r.release_time_s) << ',' << iso(m.tables.calendar, r.settle_time_s)
        << ',' << std::setprecision(10) << r.age_s / 86400.0 << ',' << r.weight << '\n';
  }
  if (m.b_event.size() >= kBufferRecords) flush();
}

void SettlementLog::flush() {
  Impl& m = *impl_;
  const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());  // netcdf_lock.hpp

  const std::size_t n = m.b_event.size();
  if (n == 0) return;
  const std::vector<std::size_t> start{total_}, count{n};
  m.v_event.putVar(start, count, m.b_event.data());
  m.v_source.putVar(start, count, m.b_source.data());
  m.v_reef.putVar(start, count, m.b_reef.data());
  m.v_release.putVar(start, count, m.b_release.data());
  m.v_settle.putVar(start, count, m.b_settle.data());
  m.v_age.putVar(start, count, m.b_age.data());
  m.v_weight.putVar(start, count, m.b_weight.data());
  total_ += n;
  for (auto* b : {&m.b_event, &m.b_source, &m.b_reef}) b->clear();
  for (auto* b : {&m.b_release, &m.b_settle, &m.b_age, &m.b_weight}) b->clear();
}

void SettlementLog::set_fates(std::uint32_t event, std::uint32_t source, const FateCounts& c) {
  impl_->fates.at(event * impl_->tables.source_ids.size() + source) = c;
}

void SettlementLog::commit() {
  Impl& m = *impl_;
  const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());  // netcdf_lock.hpp

  try {
    flush();
    const std::size_t events = m.tables.event_labels.size(), sources = m.tables.source_ids.size();
    if (events > 0 && sources > 0) {
      std::vector<long long> values(events * sources);
      auto write = [&](const char* name, auto member) {
        for (std::size_t i = 0; i < values.size(); ++i) values[i] = m.fates[i].*member;
        m.file->getVar(name).putVar(values.data());
      };
      write("released", &FateCounts::released);
      write("settled", &FateCounts::settled);
      write("died", &FateCounts::died);
      write("stranded", &FateCounts::stranded);
      write("lost", &FateCounts::lost);
      write("drifting", &FateCounts::drifting);
      std::vector<double> weights(values.size());
      for (std::size_t i = 0; i < weights.size(); ++i) weights[i] = m.fates[i].settled_weight;
      m.file->getVar("settled_weight").putVar(weights.data());
    }
    m.file->close();
    m.file.reset();
  } catch (const netCDF::exceptions::NcException& e) {
    throw std::runtime_error("cannot write " + m.nc_target.target().string() + ": " + e.what());
  }
  if (m.csv_target) m.csv_target->commit();
  m.nc_target.commit();
}

SettlementData read_settlement_log(const fs::path& path) {
  using namespace netCDF;
  SettlementData d;
  const std::lock_guard<std::recursive_mutex> lock(currents::netcdf_mutex());  // netcdf_lock.hpp

  try {
    NcFile f(path.string(), NcFile::read);
    auto strings = [&](const char* name) {
      NcVar v = f.getVar(name);
      if (v.isNull()) throw InputError(path.string() + ": variable '" + name + "' is missing");
      const std::size_t n = v.getDim(0).getSize();
      std::vector<char*> raw(n, nullptr);
      v.getVar(raw.data());
      std::vector<std::string> out;
      for (char* s : raw) out.emplace_back(s ? s : "");
      nc_free_string(n, raw.data());
      return out;
    };
    d.tables.source_ids = strings("source_id");
    d.tables.reef_ids = strings("reef_id");
    d.tables.event_labels = strings("event_label");
    d.tables.event_starts_s.resize(d.tables.event_labels.size());
    NcVar start = f.getVar("event_start");
    start.getVar(d.tables.event_starts_s.data());
    std::string calendar = "standard";
    try {
      start.getAtt("calendar").getValues(calendar);
    } catch (const exceptions::NcException&) {
    }
    d.tables.calendar = currents::Calendar::from_name(calendar);
    const std::size_t sources = d.tables.source_ids.size();
    std::vector<signed char> kinds(sources);
    f.getVar("source_kind").getVar(kinds.data());
    d.tables.source_kinds.assign(kinds.begin(), kinds.end());
    d.tables.source_reefs.resize(sources);
    f.getVar("source_reef").getVar(d.tables.source_reefs.data());

    const std::size_t n = f.getDim("settlement").getSize();
    std::vector<int> ev(n), src(n), reef(n);
    std::vector<double> rel(n), set(n), age(n), w(n);
    if (n > 0) {
      f.getVar("settlement_event").getVar(ev.data());
      f.getVar("settlement_source").getVar(src.data());
      f.getVar("settlement_reef").getVar(reef.data());
      f.getVar("release_time").getVar(rel.data());
      f.getVar("settle_time").getVar(set.data());
      f.getVar("age").getVar(age.data());
      f.getVar("weight").getVar(w.data());
    }
    d.records.resize(n);
    for (std::size_t i = 0; i < n; ++i) {
      d.records[i] = {static_cast<std::uint32_t>(ev[i]), static_cast<std::uint32_t>(src[i]),
                      reef[i], rel[i], set[i], age[i] * 86400.0, w[i]};
    }
    const std::size_t cells = d.tables.event_labels.size() * sources;
    d.fates.resize(cells);
    std::vector<long long> values(cells);
    auto read = [&](const char* name, auto member) {
      f.getVar(name).getVar(values.data());
      for (std::size_t i = 0; i < cells; ++i) d.fates[i].*member = values[i];
    };
    read("released", &FateCounts::released);
    read("settled", &FateCounts::settled);
    read("died", &FateCounts::died);
    read("stranded", &FateCounts::stranded);
    read("lost", &FateCounts::lost);
    read("drifting", &FateCounts::drifting);
    std::vector<double> weights(cells);
    f.getVar("settled_weight").getVar(weights.data());
    for (std::size_t i = 0; i < cells; ++i) d.fates[i].settled_weight = weights[i];
  } catch (const exceptions::NcException& e) {
    throw InputError("cannot read settlement records " + path.string() + ": " + e.what());
  }
  return d;
}

}  // namespace cullcast::drift
