#include "distributed_drift.hpp"

#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <iostream>
#include <limits>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <thread>
#include <type_traits>
#include <vector>

#include "cullcast/base/error.hpp"
#include "cullcast/base/system_resources.hpp"
#include "cullcast/drift/batch_queue.hpp"

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

namespace {

// Static split only unless asked: on the measured studies each queued chunk
// cost one more sweep over its event's frames, more than the balance it
// bought (docs/scaling.md). 0.75 is the suggested value for uneven work.
constexpr double kDefaultStaticShare = 1.0;

// CULLCAST_MPI_STATIC_SHARE, or the default; NaN when it is not a number in 0..1.
double static_share_from_environment(std::string& text) {
  const char* v = std::getenv("CULLCAST_MPI_STATIC_SHARE");
  if (v == nullptr || *v == '\0') return kDefaultStaticShare;
  text = v;
  char* end = nullptr;
  const double x = std::strtod(v, &end);
  if (end == v || *end != '\0' || !(x >= 0.0 && x <= 1.0)) return std::numeric_limits<double>::quiet_NaN();
  return x;
}

// The batches [first, last) of `all` as one event's chunk.
[[maybe_unused]] drift::QueuedChunk chunk_of(const std::vector<drift::ReleaseBatch>& all, std::size_t first, std::size_t last) {
  drift::QueuedChunk c;
  c.event = all[first].event;
  for (std::size_t i = first; i < last; ++i) c.sources.push_back(all[i].source);
  return c;
}

}  // namespace

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
constexpr int kAskTag = 3, kGiveTag = 4;  // the queue: a request, and the chunk [first, last) answering it

// Waiting by polling with short sleeps rather than in a blocking MPI call:
// Open MPI's blocking calls spin, which would take a core from the ranks
// still drifting when ranks outnumber cores.
void wait_quietly(MPI_Request& request) {
  int done = 0;
  for (MPI_Test(&request, &done, MPI_STATUS_IGNORE); !done; MPI_Test(&request, &done, MPI_STATUS_IGNORE)) {
    std::this_thread::sleep_for(std::chrono::microseconds(500));
  }
}
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

// Rank 0's side of the queue. Rank 0 drifts too (with 2 ranks a pure
// dispatcher would leave half the machine idle), so it answers requests
// (a) between its own time steps (DriftShare::poll: one MPI_Iprobe per step),
// (b) whenever it asks the queue for its own next chunk, and (c) once the
// queue is empty, in a loop that lasts until every other rank has been told
// "no more". Why this cannot deadlock: a helper blocks only while waiting
// for an answer, and rank 0 answers every request within one of its time
// steps (or one frame read) — it never waits for a helper while it drifts;
// rank 0 waits only in (c), for requests that every helper is bound to send
// (each asks until it is told "no more"), and it starts gathering the
// outcomes (which helpers send after their last answer) only after (c). No
// second thread: MPI_THREAD_FUNNELED suffices, and nothing spins.
struct DriftTeam::Desk {
  drift::BatchQueue queue;
  std::vector<std::size_t> batches_to, chunks_to;  // per rank
  int told_no_more = 0;                            // helpers answered "no more"
  std::vector<double> idle_from;                   // per rank: seconds from the queue's start to "no more"
  std::chrono::steady_clock::time_point start = std::chrono::steady_clock::now();
  std::size_t first_queued = 0, batch_count = 0;
  double queued_fraction = 0;                      // of the estimated cost

  // Chunks of at least a quarter of one rank's fair part of the queue: every
  // chunk costs its rank one more sweep over the event's currents frames
  // (about 0.33 CPU-seconds on the demo study, as much as stepping some 1,000
  // larvae through the event), so the last chunks must not shrink to single
  // batches of a few hundred larvae (docs/scaling.md).
  static double floor_for(const std::vector<drift::ReleaseBatch>& all, std::size_t first, int size) {
    double queued = 0;
    for (std::size_t i = first; i < all.size(); ++i) queued += all[i].cost();
    return queued / (4.0 * size);
  }

  Desk(const std::vector<drift::ReleaseBatch>& all, std::size_t first, int size)
      : queue(all, first, static_cast<std::size_t>(size), floor_for(all, first, size)),
        batches_to(static_cast<std::size_t>(size), 0),
        chunks_to(static_cast<std::size_t>(size), 0),
        idle_from(static_cast<std::size_t>(size), 0.0),
        first_queued(first),
        batch_count(all.size()) {}

  std::optional<std::pair<std::size_t, std::size_t>> take_for(int rank) {
    auto c = queue.take();
    if (c) {
      batches_to[static_cast<std::size_t>(rank)] += c->second - c->first;
      chunks_to[static_cast<std::size_t>(rank)] += 1;
    } else {
      idle_from[static_cast<std::size_t>(rank)] =
          std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    }
    return c;
  }

#ifdef CULLCAST_WITH_MPI
  // Answers one waiting request, if any; true if it did.
  bool answer_one() {
    int waiting = 0;
    MPI_Status status;
    MPI_Iprobe(MPI_ANY_SOURCE, kAskTag, MPI_COMM_WORLD, &waiting, &status);
    if (!waiting) return false;
    int ask = 0;
    MPI_Recv(&ask, 1, MPI_INT, status.MPI_SOURCE, kAskTag, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
    const auto c = take_for(status.MPI_SOURCE);
    const std::uint64_t range[2] = {c ? c->first : 0, c ? c->second : 0};  // empty: no more
    if (!c) ++told_no_more;
    MPI_Send(range, 2, MPI_UINT64_T, status.MPI_SOURCE, kGiveTag, MPI_COMM_WORLD);
    return true;
  }
  void answer_waiting() {
    while (answer_one()) {
    }
  }
  void answer_until_all_told(int size) {
    while (told_no_more < size - 1) {
      if (!answer_one()) std::this_thread::sleep_for(std::chrono::microseconds(500));
    }
  }
#endif
};

DriftTeam::DriftTeam() {
  if (launched_processes() <= 1) return;
#ifdef CULLCAST_WITH_MPI
  int provided = 0;
  // OpenMP threads step the particles; only the main thread calls MPI.
  MPI_Init_thread(nullptr, nullptr, MPI_THREAD_FUNNELED, &provided);
  joined_ = true;
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
  // Rank 0's setting for all: ranks that split differently would drift some
  // batches twice and others never.
  if (rank_ == 0) static_share_ = static_share_from_environment(static_share_text_);
  MPI_Bcast(&static_share_, 1, MPI_DOUBLE, 0, MPI_COMM_WORLD);
  MPI_Comm node;  // the ranks sharing this machine
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, rank_, MPI_INFO_NULL, &node);
  MPI_Comm_size(node, &ranks_here_);
  MPI_Comm_free(&node);
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

namespace {

// The batches before the queue, cut into one contiguous part per rank.
std::vector<std::size_t> static_cuts(const std::vector<drift::ReleaseBatch>& batches, std::size_t queued_from,
                                     int ranks) {
  const std::vector<drift::ReleaseBatch> head(batches.begin(),
                                              batches.begin() + static_cast<std::ptrdiff_t>(queued_from));
  return drift::split_by_cost(head, static_cast<std::size_t>(ranks));
}

void check_static_share(double share, const std::string& text) {
  if (std::isnan(share)) {
    throw InputError("CULLCAST_MPI_STATIC_SHARE" + (text.empty() ? std::string(" on rank 0") : "=\"" + text + "\"") +
                     ": expected the share of the estimated cost split statically, a number from 0 to 1");
  }
}

}  // namespace

drift::DriftShare DriftTeam::share(const study::Study& study, std::size_t source_count) {
  drift::DriftShare share;
  if (size_ == 1) return share;
  check_static_share(static_share_, static_share_text_);
  const auto batches = drift::list_batches(study, source_count);
  const std::size_t queued_from = drift::queue_start(batches, static_share_);
  const auto cuts = static_cuts(batches, queued_from, size_);
  share = drift::DriftShare::of(batches, cuts[static_cast<std::size_t>(rank_)],
                                cuts[static_cast<std::size_t>(rank_) + 1], study.spawning.size(), source_count);
  share.write_outputs = root();
#ifdef CULLCAST_WITH_MPI
  if (queued_from < batches.size()) {
    if (root()) {
      desk_ = std::make_shared<Desk>(batches, queued_from, size_);
      double total = 0;
      for (const auto& b : batches) total += b.cost();
      desk_->queued_fraction = total > 0 ? desk_->queue.cost_left() / total : 0;
      const int size = size_;
      share.poll = [desk = desk_] { desk->answer_waiting(); };
      share.next_chunk = [desk = desk_, batches, size]() -> std::optional<drift::QueuedChunk> {
        desk->answer_waiting();
        if (const auto c = desk->take_for(0)) return chunk_of(batches, c->first, c->second);
        desk->answer_until_all_told(size);
        return std::nullopt;
      };
    } else {
      // Test-only: fail on receiving the first queued chunk (docs/scaling.md).
      const char* fail = std::getenv("CULLCAST_TEST_FAIL_QUEUED");
      const bool fail_here = fail != nullptr && *fail != '\0' && std::atoi(fail) == rank_;
      share.next_chunk = [batches, fail_here]() -> std::optional<drift::QueuedChunk> {
        int ask = 0;
        MPI_Send(&ask, 1, MPI_INT, 0, kAskTag, MPI_COMM_WORLD);
        std::uint64_t range[2] = {0, 0};
        MPI_Request request;
        MPI_Irecv(range, 2, MPI_UINT64_T, 0, kGiveTag, MPI_COMM_WORLD, &request);
        wait_quietly(request);
        if (range[0] == range[1]) return std::nullopt;
        if (range[0] > range[1] || range[1] > batches.size()) {
          throw std::runtime_error("MPI queue: rank 0 sent batches " + std::to_string(range[0]) + " to " +
                                   std::to_string(range[1]) + " of " + std::to_string(batches.size()));
        }
        drift::QueuedChunk c = chunk_of(batches, range[0], range[1]);
        if (fail_here) {
          throw std::runtime_error("injected failure (CULLCAST_TEST_FAIL_QUEUED, a test-only setting) on "
                                   "receiving queued batches of event " + std::to_string(c.event + 1) +
                                   " (" + std::to_string(c.sources.size()) + " sources)");
        }
        return c;
      };
    }
  }
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

std::string DriftTeam::queue_report() const {
  if (!desk_) return {};
  std::ostringstream o;
  std::size_t queued = 0, chunks = 0;
  for (std::size_t r = 0; r < desk_->batches_to.size(); ++r) {
    queued += desk_->batches_to[r];
    chunks += desk_->chunks_to[r];
  }
  o.precision(3);
  o << "queue: " << queued << " of " << desk_->batch_count << " batches (" << 100 * desk_->queued_fraction
    << " % of the estimated cost) handed out on request in " << chunks << " chunks:";
  for (std::size_t r = 0; r < desk_->batches_to.size(); ++r) {
    o << (r ? "," : "") << " rank " << r << " " << desk_->batches_to[r] << " batches / " << desk_->chunks_to[r]
      << " chunks";
  }
  // How evenly the ranks ran out of work: the balance the queue achieved.
  const auto [first, last] = std::minmax_element(desk_->idle_from.begin(), desk_->idle_from.end());
  o.precision(2);
  o << "; ranks ran out of work within " << std::fixed << *last - *first << " s of each other";
  return o.str();
}

std::string DriftTeam::describe(const study::Study& study, std::size_t source_count) const {
  check_static_share(static_share_, static_share_text_);
  const auto all = drift::list_batches(study, source_count);
  const std::size_t queued_from = drift::queue_start(all, static_share_);
  const auto cuts = static_cuts(all, queued_from, size_);
  const std::vector<drift::ReleaseBatch> batches(all.begin(), all.begin() + static_cast<std::ptrdiff_t>(queued_from));
  std::ostringstream o;
  o.precision(3);
  o << size_ << " MPI ranks x " << omp_get_max_threads() << " threads; " << all.size()
    << " release batches (event x source), " << batches.size() << " split by cost, " << all.size() - batches.size()
    << " queued on rank 0:";
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
  if (size_ == 1) return {};
  const int cores = static_cast<int>(usable_cpus()), threads = omp_get_max_threads();
  if (cores >= threads) return {};
  return "rank " + std::to_string(rank_) + " runs " + std::to_string(threads) + " threads on " +
         std::to_string(cores) + " core(s) (the launcher's binding): start it with mpirun --bind-to none, "
         "or --map-by slot:PE=" + std::to_string(threads) + ", or set OMP_NUM_THREADS=" + std::to_string(cores);
}

bool DriftTeam::processor_spare() const {
  // Conservative: ranks whose launcher bound them to their own cores also
  // count as sharing the ones this rank sees.
  return static_cast<unsigned>(ranks_here_) * static_cast<unsigned>(omp_get_max_threads()) < usable_cpus();
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
