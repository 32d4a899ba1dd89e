// Splitting the tracing over the processes of an MPI job (see processes.hpp).
//
// MPI starts only when an MPI launcher's environment is present (OMPI_COMM_WORLD_SIZE from
// OpenMPI's mpirun, PMIX_RANK from a PMIx launcher such as srun --mpi=pmix): a plain start
// never calls MPI_Init, so it costs nothing and prints no launcher warnings.
//
// The protocol, on MPI_COMM_WORLD (every wait polls with short sleeps: a waiting process
// leaves its core to the others instead of spinning):
//  1. Every process reads the scene and checks the input alike: bad input fails on every
//     process before any tracing.
//  2. Meeting: an all-reduce of {status, process 0's status, process 0 done, absent}. A
//     process about to trace brings zeros; a process that ends without tracing (an error,
//     process 0 reading the cache, a helper sitting out a command that does not split) brings
//     its status and absent = 1 from finish_processes. Tracing goes on only when all are
//     present; otherwise every process ends: helpers with process 0's status when it is done,
//     else with the failing status. A failing helper's message is shown only when process 0
//     did not fail (the same bad input would print K times).
//  3. Each process traces its range of emitters (split by rays); an all-reduce of the
//     statuses: a failure there ends every process with it.
//  4. Helpers send their shards to process 0 (point to point, in process order, pieces under
//     1 GiB); process 0 appends them in order: the tallies of a one-process run.
//  5. Process 0 smooths, solves and writes; its exit status goes to the helpers by a
//     broadcast. A failure while the shards move is fatal to the job (MPI_Abort with it).
#include "processes.hpp"

#include <cstdlib>
#include <iostream>
#include <sstream>

#ifdef HEARTHRAY_WITH_MPI
#include <mpi.h>

#include <algorithm>
#include <chrono>
#include <exception>
#include <new>
#include <thread>

#include "hearthray/error.hpp"
#endif

namespace hearthray::cli {

namespace {
bool splits = false;
}  // namespace

void set_command_splits(bool value) {
  splits = value;
}
bool command_splits() {
  return splits;
}

#ifndef HEARTHRAY_WITH_MPI

void start_processes(int*, char***) {}
bool is_helper_process() {
  return false;
}
void prepare_split(PipelineOptions*) {}
int finish_processes(int status) {
  return status;
}

#else

namespace {

enum class Phase {
  none,      // MPI not started
  before,    // before the meeting
  stopped,   // the job ended at a meeting: no more messages
  gathered,  // process 0, tallies gathered: its status goes to the helpers
  sent,      // helper, shard sent: waits for process 0's status
};

struct Job {
  Phase phase = Phase::none;
  int rank = 0;
  int size = 1;
  std::ostringstream held_errors;  // a helper's std::cerr
};

Job job;

bool launched_by_mpi() {
  return std::getenv("OMPI_COMM_WORLD_SIZE") != nullptr || std::getenv("PMIX_RANK") != nullptr;
}

// Waits for a request, testing it with short sleeps between.
void wait_for(MPI_Request* request) {
  using namespace std::chrono_literals;
  for (int tries = 0;; ++tries) {
    int done = 0;
    MPI_Test(request, &done, MPI_STATUS_IGNORE);
    if (done) return;
    std::this_thread::sleep_for(tries < 200 ? 100us : 2ms);
  }
}

template <std::size_t N>
void all_max(int (&values)[N]) {
  MPI_Request request;
  MPI_Iallreduce(MPI_IN_PLACE, values, int(N), MPI_INT, MPI_MAX, MPI_COMM_WORLD, &request);
  wait_for(&request);
}

// The meeting of step 2.
struct Meeting {
  int status = 0, root_status = 0, root_done = 0, absent = 0;
};

Meeting meet(int status, bool present) {
  int v[4] = {status, job.rank == 0 ? status : 0, job.rank == 0 && !present ? 1 : 0,
              present ? 0 : 1};
  all_max(v);
  job.phase = v[3] ? Phase::stopped : job.phase;
  return {v[0], v[1], v[2], v[3]};
}

[[noreturn]] void abort_job(const std::string& what) {
  std::fprintf(stderr, "error: process %d of %d: %s; ending the job\n", job.rank, job.size,
               what.c_str());
  MPI_Abort(MPI_COMM_WORLD, 3);
  std::abort();
}

// First emitter of process r: where the cumulative rays reach r / K of all rays.
std::uint32_t range_start(const std::vector<std::uint64_t>& rays, std::uint64_t total, int r) {
  const std::uint64_t k = std::uint64_t(job.size), q = total / k, m = total % k;
  const std::uint64_t target = q * std::uint64_t(r) + m * std::uint64_t(r) / k;
  std::uint64_t sum = 0;
  std::uint32_t p = 0;
  while (p < rays.size() && sum < target) sum += rays[p++];
  return p;
}

constexpr int kShardTag = 7;
constexpr std::size_t kPieceBytes = std::size_t(1) << 28;

template <typename T>
void send_vector(const std::vector<T>& v) {
  const char* bytes = reinterpret_cast<const char*>(v.data());
  const std::size_t total = v.size() * sizeof(T);
  for (std::size_t at = 0; at < total; at += kPieceBytes)
    MPI_Send(bytes + at, int(std::min(kPieceBytes, total - at)), MPI_BYTE, 0, kShardTag,
             MPI_COMM_WORLD);
}

template <typename T>
void receive_vector(std::vector<T>* v, std::uint64_t count, int from) {
  v->resize(count);
  char* bytes = reinterpret_cast<char*>(v->data());
  const std::size_t total = count * sizeof(T);
  for (std::size_t at = 0; at < total; at += kPieceBytes)
    MPI_Recv(bytes + at, int(std::min(kPieceBytes, total - at)), MPI_BYTE, from, kShardTag,
             MPI_COMM_WORLD, MPI_STATUS_IGNORE);
}

// Every array of a shard, in one order for sending and receiving.
template <typename Each>
void each_array(Tallies& t, Each each) {
  each(t.rays);
  each(t.escaped);
  each(t.back_face);
  each(t.hit_offset);
  each(t.hit_patch);
  each(t.hit_count);
  each(t.back_face_hits_on_surface);
  each(t.hits_on_surface);
  each(t.hit_square);
  each(t.escaped_square);
  each(t.back_face_square);
}

void send_shard(Tallies& shard, std::uint64_t retraced) {
  std::vector<std::uint64_t> header{shard.emitter_begin, retraced};
  each_array(shard, [&](auto& v) { header.push_back(v.size()); });
  send_vector(header);
  each_array(shard, [](auto& v) { send_vector(v); });
}

Tallies receive_shard(int from, std::size_t patch_count, std::uint64_t* retraced) {
  std::vector<std::uint64_t> header;
  receive_vector(&header, 13, from);
  Tallies shard;
  shard.patch_count = patch_count;
  shard.emitter_begin = std::uint32_t(header[0]);
  *retraced += header[1];
  std::size_t i = 2;
  each_array(shard, [&](auto& v) { receive_vector(&v, header[i++], from); });
  return shard;
}

// Step 3: this process's range traced; a failure anywhere ends every process.
Tallies trace_own_range(const std::vector<std::uint64_t>& rays,
                        const PipelineOptions::TraceRange& trace, TraceStats* stats) {
  std::uint64_t total = 0;
  for (std::uint64_t n : rays) total += n;
  const std::uint32_t begin = range_start(rays, total, job.rank);
  const std::uint32_t end = job.rank + 1 == job.size ? std::uint32_t(rays.size())
                                                     : range_start(rays, total, job.rank + 1);
  Tallies mine;
  std::exception_ptr failure;
  int v[1] = {0};
  try {
    if (begin < end) mine = trace(begin, end, stats);
  } catch (const InputError&) {
    failure = std::current_exception();
    v[0] = 2;
  } catch (...) {
    failure = std::current_exception();
    v[0] = 3;
  }
  all_max(v);
  if (v[0] != 0) {
    job.phase = Phase::stopped;
    if (failure) std::rethrow_exception(failure);
    if (job.rank == 0) std::cerr << "error: another process of the job failed while tracing\n";
    throw ProcessesStop{v[0]};
  }
  return mine;
}

// Steps 2 to 4 (PipelineOptions::split_tracing).
Tallies split_tracing(const std::vector<std::uint64_t>& rays,
                      const PipelineOptions::TraceRange& trace, TraceStats* stats) {
  const auto start = std::chrono::steady_clock::now();
  const Meeting m = meet(0, true);
  if (m.absent) {
    if (m.root_done) throw ProcessesStop{m.root_status};
    if (job.rank == 0)
      std::cerr << "error: another process of the job stopped before tracing (exit status "
                << m.status << ")\n";
    throw ProcessesStop{m.status != 0 ? m.status : 3};
  }
  TraceStats own;
  Tallies mine = trace_own_range(rays, trace, &own);
  if (job.rank != 0) {
    if (mine.rows() > 0) send_shard(mine, own.retraced);
    job.phase = Phase::sent;
    throw ProcessesStop{0};
  }
  Tallies tallies;
  try {
    std::uint64_t total = 0;
    for (std::uint64_t n : rays) total += n;
    bool first = true;
    for (int r = 0; r < job.size; ++r) {
      const std::uint32_t begin = range_start(rays, total, r);
      if (begin == (r + 1 == job.size ? rays.size() : range_start(rays, total, r + 1))) continue;
      Tallies shard = r == 0 ? std::move(mine) : receive_shard(r, rays.size(), &own.retraced);
      if (first) tallies = std::move(shard);
      if (!first) append_shard(&tallies, shard);
      first = false;
    }
  } catch (const std::bad_alloc&) {
    abort_job("out of memory while gathering the tallies");
  } catch (const std::exception& e) {
    abort_job(std::string("gathering the tallies: ") + e.what());
  }
  job.phase = Phase::gathered;
  *stats = own;
  stats->rays = 0;
  for (std::uint64_t n : rays) stats->rays += n;
  stats->seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  stats->rays_per_second = stats->seconds > 0 ? double(stats->rays) / stats->seconds : 0;
  return tallies;
}

}  // namespace

void start_processes(int* argc, char*** argv) {
  if (!launched_by_mpi()) return;
  int provided = 0;
  MPI_Init_thread(argc, argv, MPI_THREAD_SERIALIZED, &provided);
  MPI_Comm_rank(MPI_COMM_WORLD, &job.rank);
  MPI_Comm_size(MPI_COMM_WORLD, &job.size);
  job.phase = Phase::before;
  if (job.rank != 0) {
    std::cout.rdbuf(nullptr);  // helpers print nothing
    std::cerr.rdbuf(job.held_errors.rdbuf());
  }
}

bool is_helper_process() {
  return job.phase != Phase::none && job.rank != 0;
}

void prepare_split(PipelineOptions* options) {
  if (job.phase == Phase::none) return;
  options->split_tracing = split_tracing;
  if (job.rank != 0) {
    options->use_cache = false;
    options->progress = nullptr;
  }
}

int finish_processes(int status) {
  if (job.phase == Phase::none) return status;
  int exit_status = status;
  bool show_errors = false;
  if (job.phase == Phase::before) {
    const Meeting m = meet(status, false);
    if (job.rank != 0) {
      exit_status = m.root_done ? m.root_status : status;
      show_errors = status != 0 && m.root_status == 0;
    }
  } else if (job.phase == Phase::stopped) {
    show_errors = status != 0;
  } else {
    int v = status;
    MPI_Request request;
    MPI_Ibcast(&v, 1, MPI_INT, 0, MPI_COMM_WORLD, &request);
    wait_for(&request);
    exit_status = v;
  }
  if (job.rank != 0 && show_errors) {
    std::istringstream lines(job.held_errors.str());
    for (std::string line; std::getline(lines, line);)
      std::fprintf(stderr, "process %d: %s\n", job.rank, line.c_str());
  }
  MPI_Finalize();
  return exit_status;
}

#endif

}  // namespace hearthray::cli
