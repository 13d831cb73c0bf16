#pragma once
// fxmimo as one process of an MPI job (README "On several processes (MPI)"): the MPI transport
// of analysis::process_group, and the program's start and end around it. Part of the fxmimo
// executable in a build with MPI only; the app library knows no MPI.

namespace fxmimo::app {

/// True when an MPI launcher started this process (Open MPI's mpirun, or a PMI/PMIx launcher
/// such as Slurm's srun --mpi=pmi2): then MPI is started; otherwise the program runs alone.
bool started_by_mpi_launcher();

/// run_program as one process of the job: the trials of run, range, sweep and tune are spread
/// over the ranks; rank 0 prints and writes, the others print nothing (their one-line error,
/// when they fail, reaches rank 0, which names the rank). Returns the process's exit code.
int run_program_in_mpi_job(int argc, char** argv);

}  // namespace fxmimo::app
