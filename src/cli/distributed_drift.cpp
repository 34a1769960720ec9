#include "distributed_drift.hpp"

#include <omp.h>
#include <sched.h>

#include <algorithm>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <iostream>
#include <sstream>
#include <stdexcept>
#include <type_traits>
#include <vector>

#include "cullcast/base/error.hpp"

#ifdef CULLCAST_WITH_MPI
#include <mpi.h>
#endif

namespace cullcast::cli {

int launched_processes() {
  // Open MPI's mpirun sets OMPI_COMM_WORLD_SIZE; MPICH's and Slurm's PMI set PMI_SIZE.
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMI_SIZE"}) {
    if (const char* v = std::getenv(name)) {
      const int n = std::atoi(v);
      if (n > 0) return n;
    }
  }
  return 1;
}

int launched_rank() {
  for (const char* name : {"OMPI_COMM_WORLD_RANK", "PMI_RANK"}) {
    if (const char* v = std::getenv(name)) {
      const int r = std::atoi(v);
      if (r >= 0) return r;
    }
  }
  return 0;
}

#ifdef CULLCAST_WITH_MPI
namespace {

static_assert(std::is_trivially_copyable_v<drift::SettlementRecord>);
static_assert(std::is_trivially_copyable_v<drift::FateCounts>);

constexpr int kSizeTag = 1, kDataTag = 2;
constexpr std::size_t kChunk = std::size_t{1} << 30;  // bytes per message (MPI counts are int)

template <class T>
void put(std::vector<char>& out, const T* data, std::size_t n) {
  const auto* bytes = reinterpret_cast<const char*>(data);
  out.insert(out.end(), bytes, bytes + n * sizeof(T));
}

template <class T>
void take(const std::vector<char>& in, std::size_t& at, T* data, std::size_t n) {
  if (at + n * sizeof(T) > in.size()) throw std::runtime_error("MPI exchange: message shorter than its header");
  std::memcpy(reinterpret_cast<char*>(data), in.data() + at, n * sizeof(T));
  at += n * sizeof(T);
}

std::vector<char> pack(const drift::EventOutcome& o) {
  std::vector<char> out;
  const std::uint64_t head[5] = {o.records.size(), o.fates.size(), o.particle_steps, o.land_contacts,
                                 o.off_water};
  put(out, head, 5);
  put(out, &o.max_speed_m_s, 1);
  put(out, o.records.data(), o.records.size());
  put(out, o.record_keys.data(), o.record_keys.size());
  put(out, o.fates.data(), o.fates.size());
  return out;
}

drift::EventOutcome unpack(const std::vector<char>& in) {
  drift::EventOutcome o;
  std::uint64_t head[5];
  std::size_t at = 0;
  take(in, at, head, 5);
  take(in, at, &o.max_speed_m_s, 1);
  o.records.resize(head[0]);
  o.record_keys.resize(head[0]);
  o.fates.resize(head[1]);
  o.particle_steps = head[2];
  o.land_contacts = head[3];
  o.off_water = head[4];
  take(in, at, o.records.data(), o.records.size());
  take(in, at, o.record_keys.data(), o.record_keys.size());
  take(in, at, o.fates.data(), o.fates.size());
  return o;
}

void send_to_root(const std::vector<char>& bytes) {
  const std::uint64_t n = bytes.size();
  MPI_Send(&n, 1, MPI_UINT64_T, 0, kSizeTag, MPI_COMM_WORLD);
  for (std::size_t at = 0; at < bytes.size(); at += kChunk) {
    const auto len = static_cast<int>(std::min(kChunk, bytes.size() - at));
    MPI_Send(bytes.data() + at, len, MPI_BYTE, 0, kDataTag, MPI_COMM_WORLD);
  }
}

std::vector<char> receive_from(int rank) {
  std::uint64_t n = 0;
  MPI_Recv(&n, 1, MPI_UINT64_T, rank, kSizeTag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
  std::vector<char> bytes(n);
  for (std::size_t at = 0; at < bytes.size(); at += kChunk) {
    const auto len = static_cast<int>(std::min(kChunk, bytes.size() - at));
    MPI_Recv(bytes.data() + at, len, MPI_BYTE, rank, kDataTag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
  }
  return bytes;
}

}  // namespace
#endif

DriftTeam::DriftTeam() {
  if (launched_processes() <= 1) return;
#ifdef CULLCAST_WITH_MPI
  int provided = 0;
  // OpenMP threads step the particles; only the main thread calls MPI.
  MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided);
  joined_ = true;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
#else
  throw InputError("an MPI launcher started " + std::to_string(launched_processes()) +
                   " copies of cullcast, but this cullcast was built without MPI: each copy would do "
                   "the whole run and write the same files. Build with cmake -DCULLCAST_MPI=ON "
                   "(DEVELOPERS.md), or run a single process.");
#endif
}

DriftTeam::~DriftTeam() { finish(); }

void DriftTeam::finish() {
#ifdef CULLCAST_WITH_MPI
  if (joined_) MPI_Finalize();
#endif
  joined_ = false;
}

drift::DriftShare DriftTeam::share(const study::Study& study, std::size_t source_count) const {
  drift::DriftShare share;
  if (size_ == 1) return share;
  const auto batches = drift::list_batches(study, source_count);
  const auto cuts = drift::split_by_cost(batches, static_cast<std::size_t>(size_));
  share = drift::DriftShare::of(batches, cuts[static_cast<std::size_t>(rank_)],
                                cuts[static_cast<std::size_t>(rank_) + 1], study.spawning.size(), source_count);
  share.write_outputs = root();
#ifdef CULLCAST_WITH_MPI
  const int rank = rank_, size = size_;
  share.exchange = [rank, size](std::uint32_t, drift::EventOutcome& outcome) {
    if (rank == 0) {
      for (int r = 1; r < size; ++r) drift::merge_outcome(outcome, unpack(receive_from(r)));
    } else {
      send_to_root(pack(outcome));
      drift::EventOutcome sent;  // rank 0 reports it; nothing is left here
      sent.fates.assign(outcome.fates.size(), drift::FateCounts{});
      outcome = std::move(sent);
    }
  };
#endif
  return share;
}

std::string DriftTeam::describe(const study::Study& study, std::size_t source_count) const {
  const auto batches = drift::list_batches(study, source_count);
  const auto cuts = drift::split_by_cost(batches, static_cast<std::size_t>(size_));
  std::ostringstream o;
  o.precision(3);
  o << size_ << " MPI ranks x " << omp_get_max_threads() << " threads; " << batches.size()
    << " release batches (event x source) split by cost:";
  if (size_ > 8) {  // one line per rank would be too long: the spread only
    double lo = 0, hi = 0;
    for (std::size_t r = 0; r + 1 < cuts.size(); ++r) {
      double cost = 0;
      for (std::size_t i = cuts[r]; i < cuts[r + 1]; ++i) cost += batches[i].cost();
      lo = r == 0 ? cost : std::min(lo, cost);
      hi = std::max(hi, cost);
    }
    o << " " << lo / 1e6 << " to " << hi / 1e6 << " M particle-steps per rank";
    return o.str();
  }
  for (int r = 0; r < size_; ++r) {
    const std::size_t a = cuts[static_cast<std::size_t>(r)], b = cuts[static_cast<std::size_t>(r) + 1];
    double cost = 0;
    for (std::size_t i = a; i < b; ++i) cost += batches[i].cost();
    o << (r ? "," : "") << " rank " << r << " ";
    if (a == b) {
      o << "none";
    } else {
      const std::uint32_t e0 = batches[a].event + 1, e1 = batches[b - 1].event + 1;
      o << (b - a) << " (event";
      if (e0 == e1) {
        o << " " << e0;
      } else {
        o << "s " << e0 << "-" << e1;
      }
      o << ", " << cost / 1e6 << " M particle-steps)";
    }
  }
  return o.str();
}

std::string DriftTeam::binding_warning() const {
  cpu_set_t cpus;
  CPU_ZERO(&cpus);
  if (size_ == 1 || sched_getaffinity(0, sizeof cpus, &cpus) != 0) return {};
  const int cores = CPU_COUNT(&cpus), threads = omp_get_max_threads();
  if (cores >= threads) return {};
  return "rank " + std::to_string(rank_) + " runs " + std::to_string(threads) + " threads on " +
         std::to_string(cores) + " core(s) (the launcher's binding): start it with mpirun --bind-to none, "
         "or --map-by slot:PE=" + std::to_string(threads) + ", or set OMP_NUM_THREADS=" + std::to_string(cores);
}

void DriftTeam::fail(const std::string& message, int exit_code) const {
  std::cerr << "cullcast: rank " << rank_ << " of " << size_ << ": " << message << std::endl;
#ifdef CULLCAST_WITH_MPI
  if (joined_) MPI_Abort(MPI_COMM_WORLD, exit_code);
#endif
  (void)exit_code;
  throw std::runtime_error(message);
}

}  // namespace cullcast::cli
