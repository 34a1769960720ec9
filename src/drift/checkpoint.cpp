#include "cullcast/drift/checkpoint.hpp"

#include <cstring>
#include <fstream>
#include <iterator>
#include <sstream>
#include <type_traits>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/base/error.hpp"

namespace cullcast::drift {
namespace fs = std::filesystem;
namespace {

constexpr char kMagic[] = "cullcast drift checkpoint\n";
constexpr std::uint32_t kVersion = 2;

// FNV-1a, 64 bit (Fowler, Noll & Vo; IETF draft-eastlake-fnv, §2): a
// checksum and fingerprint, not a cryptographic hash.
struct Fnv {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  void add(const void* data, std::size_t n) {
    const auto* p = static_cast<const unsigned char*>(data);
    for (std::size_t i = 0; i < n; ++i) {
      h ^= p[i];
      h *= 0x100000001b3ULL;
    }
  }
  void add(const std::string& s) {
    const std::uint64_t n = s.size();
    add(&n, sizeof n);
    add(s.data(), s.size());
  }
};

// Appends plain values and arrays to a byte buffer.
struct Writer {
  std::string bytes;
  template <class T>
  void put(const T& v) {
    static_assert(std::is_trivially_copyable_v<T>);
    bytes.append(reinterpret_cast<const char*>(&v), sizeof v);
  }
  template <class T>
  void put(const std::vector<T>& v) {
    put<std::uint64_t>(v.size());
    bytes.append(reinterpret_cast<const char*>(v.data()), v.size() * sizeof(T));
  }
  void put(const std::string& s) {
    put<std::uint64_t>(s.size());
    bytes.append(s);
  }
};

struct Reader {
  const std::string& bytes;
  std::size_t at = 0;
  std::string file;
  void need(std::size_t n) const {
    if (bytes.size() - at < n) {
      throw InputError(file + ": drift checkpoint is truncated (run again without --resume)");
    }
  }
  template <class T>
  T get() {
    static_assert(std::is_trivially_copyable_v<T>);
    need(sizeof(T));
    T v;
    std::memcpy(&v, bytes.data() + at, sizeof v);
    at += sizeof v;
    return v;
  }
  template <class T>
  void get(std::vector<T>& v) {
    const auto n = get<std::uint64_t>();
    if (n > (bytes.size() - at) / sizeof(T)) need(bytes.size());  // truncated or corrupt
    v.resize(n);
    std::memcpy(v.data(), bytes.data() + at, n * sizeof(T));
    at += n * sizeof(T);
  }
  std::string text() {
    const auto n = get<std::uint64_t>();
    need(n);
    std::string s = bytes.substr(at, n);
    at += n;
    return s;
  }
};

void put_fates(Writer& w, const FateCounts& f) {
  w.put(f.released), w.put(f.settled), w.put(f.died), w.put(f.stranded), w.put(f.lost), w.put(f.drifting);
  w.put(f.settled_weight);
}

FateCounts get_fates(Reader& r) {
  FateCounts f;
  f.released = r.get<std::int64_t>();
  f.settled = r.get<std::int64_t>();
  f.died = r.get<std::int64_t>();
  f.stranded = r.get<std::int64_t>();
  f.lost = r.get<std::int64_t>();
  f.drifting = r.get<std::int64_t>();
  f.settled_weight = r.get<double>();
  return f;
}

void put_event(Writer& w, const FinishedEvent& e) {
  w.put(e.label);
  w.put(e.particle_steps), w.put(e.land_contacts), w.put(e.off_water), w.put(e.max_speed_m_s);
  w.put<std::uint64_t>(e.fates.size());
  for (const auto& f : e.fates) put_fates(w, f);
}

FinishedEvent get_event(Reader& r) {
  FinishedEvent e;
  e.label = r.text();
  e.particle_steps = r.get<std::uint64_t>();
  e.land_contacts = r.get<std::uint64_t>();
  e.off_water = r.get<std::uint64_t>();
  e.max_speed_m_s = r.get<double>();
  e.fates.resize(r.get<std::uint64_t>());
  for (auto& f : e.fates) f = get_fates(r);
  return e;
}

void add_file(Fnv& f, const fs::path& p) {
  f.add(p.string());
  std::error_code ec;
  const std::uint64_t size = fs::is_regular_file(p, ec) ? fs::file_size(p, ec) : 0;
  f.add(&size, sizeof size);
}

}  // namespace

std::uint64_t study_fingerprint(const study::Study& study) {
  Fnv f;
  f.add(std::string(CULLCAST_VERSION));
  std::ifstream in(study.scenario_file, std::ios::binary);
  f.add(std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()));
  for (const auto& o : study.overrides) f.add(o);
  for (const auto& p : study.currents.files) add_file(f, p);
  add_file(f, study.reefs.layer);
  if (!study.reefs.surveys.empty()) add_file(f, study.reefs.surveys);
  if (!study.reefs.aggregations.empty()) add_file(f, study.reefs.aggregations);
  return f.h;
}

void write_checkpoint(const fs::path& file, const DriftCheckpoint& c) {
  Writer w;
  w.bytes.append(kMagic);
  w.put(kVersion);
  w.put(c.fingerprint);
  w.put(c.event), w.put(c.next_step);
  const ParticleSet& p = c.particles;
  w.put(p.lon), w.put(p.lat), w.put(p.depth_m), w.put(p.release_s), w.put(p.weight);
  w.put(p.source), w.put(p.index), w.put(p.fate), w.put(p.reef), w.put(p.development_s), w.put(p.food_log2_s);
  w.put(c.alive), w.put(c.settled), w.put(c.released);
  put_event(w, c.current);
  w.put<std::uint64_t>(c.finished.size());
  for (const auto& e : c.finished) put_event(w, e);
  w.put<std::uint64_t>(c.records.size());
  for (const auto& r : c.records) {
    w.put(r.event), w.put(r.source), w.put(r.reef), w.put(r.release_time_s), w.put(r.settle_time_s);
    w.put(r.age_s), w.put(r.weight);
  }
  Fnv sum;
  sum.add(w.bytes.data(), w.bytes.size());
  w.put(sum.h);

  AtomicFile out(file);
  out.stream().write(w.bytes.data(), static_cast<std::streamsize>(w.bytes.size()));
  out.commit();
}

DriftCheckpoint read_checkpoint(const fs::path& file, std::uint64_t expected_fingerprint) {
  std::ifstream in(file, std::ios::binary);
  if (!in) {
    throw InputError(file.string() + ": no drift checkpoint to resume from (the run finished, or never wrote " +
                     "one; run without --resume)");
  }
  const std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const std::size_t magic = std::strlen(kMagic);
  if (bytes.compare(0, magic, kMagic) != 0) {
    throw InputError(file.string() + ": not a cullcast drift checkpoint");
  }
  Reader r{bytes, magic, file.string()};
  r.need(sizeof(std::uint64_t));
  Fnv sum;
  sum.add(bytes.data(), bytes.size() - sizeof(std::uint64_t));
  std::uint64_t stored = 0;
  std::memcpy(&stored, bytes.data() + bytes.size() - sizeof stored, sizeof stored);
  if (stored != sum.h) {
    throw InputError(file.string() + ": drift checkpoint is damaged (checksum mismatch); run again without --resume");
  }
  const auto version = r.get<std::uint32_t>();
  if (version != kVersion) {
    throw InputError(file.string() + ": drift checkpoint version " + std::to_string(version) +
                     ", this cullcast reads version " + std::to_string(kVersion));
  }
  DriftCheckpoint c;
  c.fingerprint = r.get<std::uint64_t>();
  if (c.fingerprint != expected_fingerprint) {
    throw InputError(file.string() + ": drift checkpoint belongs to a different study (the scenario, its --set " +
                     "overrides, its input files or the cullcast version changed); run again without --resume");
  }
  c.event = r.get<std::uint32_t>();
  c.next_step = r.get<std::uint32_t>();
  ParticleSet& p = c.particles;
  r.get(p.lon), r.get(p.lat), r.get(p.depth_m), r.get(p.release_s), r.get(p.weight);
  r.get(p.source), r.get(p.index), r.get(p.fate), r.get(p.reef), r.get(p.development_s), r.get(p.food_log2_s);
  c.alive = r.get<std::uint64_t>();
  c.settled = r.get<std::uint64_t>();
  c.released = r.get<std::uint64_t>();
  c.current = get_event(r);
  c.finished.resize(r.get<std::uint64_t>());
  for (auto& e : c.finished) e = get_event(r);
  c.records.resize(r.get<std::uint64_t>());
  for (auto& rec : c.records) {
    rec.event = r.get<std::uint32_t>();
    rec.source = r.get<std::uint32_t>();
    rec.reef = r.get<std::int32_t>();
    rec.release_time_s = r.get<double>();
    rec.settle_time_s = r.get<double>();
    rec.age_s = r.get<double>();
    rec.weight = r.get<double>();
  }
  return c;
}

}  // namespace cullcast::drift
