// fxmimo: the program is the app room's run_program; started by an MPI launcher (mpirun, srun)
// in a build with MPI, it runs as one process of the job (mpi_job.cpp).
#include "fxmimo/app/program.hpp"
#ifdef FXMIMO_HAVE_MPI
#include "mpi_job.hpp"
#endif

int main(int argc, char** argv) {
#ifdef FXMIMO_HAVE_MPI
  if (fxmimo::app::started_by_mpi_launcher()) return fxmimo::app::run_program_in_mpi_job(argc, argv);
#endif
  return fxmimo::app::run_program(argc, argv);
}
