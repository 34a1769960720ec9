#pragma once
// The drift stage shared by the processes of an MPI job
// (`mpirun -np N cullcast disperse|run SCENARIO`, docs/scaling.md): each rank
// drifts a contiguous, cost-balanced share of most of the release batches
// (drift/drift_share.hpp); rank 0 hands out the rest on request
// (drift/batch_queue.hpp), so ranks whose share ran faster than estimated
// take more. After the drift, each event's records and fates go to rank 0,
// which merges them into the single-process order and alone writes the
// outputs. A rank that fails prints why and stops the whole job (MPI_Abort)
// before anything is written.
//
// Environment (read by rank 0 and broadcast, so every rank splits alike):
//   CULLCAST_MPI_STATIC_SHARE  share of the estimated cost split statically,
//                              0..1 (default 0.75; 1 = no queue).
// Test-only: CULLCAST_TEST_FAIL_QUEUED=R makes rank R fail when it receives
// its first queued chunk (tests/mpi/run_mpi_drift.py).
//
// Built with -DCULLCAST_MPI=ON only; without it, a program that an MPI
// launcher started more than once stops with a message rather than letting N
// copies each do the whole run.
#include <cstddef>
#include <memory>
#include <string>

#include "cullcast/drift/drift_share.hpp"
#include "cullcast/study/study.hpp"

namespace cullcast::cli {

// How many processes an MPI launcher started (its environment), 1 without one.
int launched_processes();
// This process's rank as the launcher numbered it (0 without a launcher);
// known before MPI starts, so the CLI can leave the output lock to rank 0.
int launched_rank();

class DriftTeam {
 public:
  // Joins the MPI job (MPI_Init) when launched_processes() > 1; throws
  // InputError then in a build without MPI.
  DriftTeam();
  ~DriftTeam();  // leaves the job (MPI_Finalize) unless finish() did
  DriftTeam(const DriftTeam&) = delete;
  DriftTeam& operator=(const DriftTeam&) = delete;

  int rank() const { return rank_; }
  int size() const { return size_; }
  bool root() const { return rank_ == 0; }

  // This process's share of the drift; with one process, every batch. With
  // more, the static part and the queue's callbacks (call once per run).
  drift::DriftShare share(const study::Study& study, std::size_t source_count);
  // One line for the root's summary: how the batches were split.
  std::string describe(const study::Study& study, std::size_t source_count) const;
  // After the drift, on rank 0: how many batches the queue handed to each rank
  // ("queue: ... rank R B batches / C chunks"); empty without a queue.
  std::string queue_report() const;
  // Empty, or why this rank's threads share too few cores (mpirun binds each
  // rank to one core by default, whatever OMP_NUM_THREADS says).
  std::string binding_warning() const;
  // Whether this machine has a processor no rank's threads use (ranks here ×
  // threads < processors this rank may use): then each rank decodes its next
  // currents frames on it (CurrentField::prepare).
  bool processor_spare() const;
  // Prints "cullcast: rank R of N: <message>" and stops every rank of the job
  // with `exit_code`; with one process, only throws.
  [[noreturn]] void fail(const std::string& message, int exit_code) const;
  void finish();  // leaves the job once every rank's share is merged

 private:
  struct Desk;  // rank 0's side of the queue (distributed_drift.cpp)

  int rank_ = 0, size_ = 1;
  bool joined_ = false;
  int ranks_here_ = 1;  // ranks of this job on this machine (this process alone without MPI)
  double static_share_ = 1.0;  // CULLCAST_MPI_STATIC_SHARE as rank 0 read it; NaN if invalid
  std::string static_share_text_;
  std::shared_ptr<Desk> desk_;
};

}  // namespace cullcast::cli
