// The tool as one process of several started by an MPI launcher (`mpirun -np K hearthray
// solve ...`): `solve` (a scene without gas) and `factors` split their emitting patches over
// the processes, process 0 gathers the tallies, smooths, solves and writes; the others print
// and write nothing and exit with process 0's status. Other commands run on process 0 alone.
// Started without a launcher, or built without MPI, none of this does anything.
// The protocol and its failure cases: processes.cpp and DEVELOPERS.md ("Many processes").
#pragma once

#include "hearthray/pipeline.hpp"

namespace hearthray::cli {

// Starts MPI when the process was started by an MPI launcher (its environment says so); else
// leaves it alone. Call first in main. A helper process (1..K-1) stops printing here.
void start_processes(int* argc, char*** argv);

// Whether this is process 1..K-1 of a job.
bool is_helper_process();

// The command (`solve` without gas, `factors`) splits its tracing over the processes: every
// process must run it. When false, helper processes run nothing (`sit out`).
void set_command_splits(bool splits);
bool command_splits();

// Called by pipeline_options when the command splits: installs the split of the tracing, and
// on a helper process turns off the cache and the progress line (process 0 alone reads and
// writes the cache).
void prepare_split(PipelineOptions* options);

// Ends this process's part of the job with the status it would exit with and returns the
// status to exit with (a helper's is process 0's); finalises MPI. Without MPI: `status`.
int finish_processes(int status);

// Thrown through the pipeline to end this process's run: on a helper once its tallies are
// sent (status ignored: it exits with process 0's), and on every process when the job stops
// because a process failed. Not a std::exception: nothing in the library catches it.
struct ProcessesStop {
  int status = 0;
};

}  // namespace hearthray::cli
