// fxmimo as one process of an MPI job (mpi_job.hpp).
#include "mpi_job.hpp"

#include <fcntl.h>
#include <mpi.h>
#include <unistd.h>

#include <climits>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <vector>

#include "fxmimo/analysis/processes.hpp"
#include "fxmimo/app/program.hpp"

namespace fxmimo::app {

namespace {

/// The processes of MPI_COMM_WORLD. MPI is called from the main thread only (the trial threads
/// never exchange), as MPI_THREAD_FUNNELED allows.
class mpi_world final : public analysis::process_group {
 public:
  mpi_world() {
    int r = 0, s = 0;
    MPI_Comm_rank(MPI_COMM_WORLD, &r);
    MPI_Comm_size(MPI_COMM_WORLD, &s);
    rank_ = static_cast<std::size_t>(r);
    size_ = static_cast<std::size_t>(s);
  }
  [[nodiscard]] std::size_t rank() const override { return rank_; }
  [[nodiscard]] std::size_t size() const override { return size_; }

  std::vector<std::string> all_gather(const std::string& mine) override {
    // The sizes first, so every process knows every share's length; a share MPI cannot count
    // in an int fails on every process alike, before any bytes move.
    const auto my_size = static_cast<long long>(mine.size());
    std::vector<long long> sizes(size_);
    MPI_Allgather(&my_size, 1, MPI_LONG_LONG, sizes.data(), 1, MPI_LONG_LONG, MPI_COMM_WORLD);
    std::vector<int> counts(size_), offsets(size_);
    long long total = 0;
    for (std::size_t r = 0; r < size_; ++r) {
      if (sizes[r] < 0 || total + sizes[r] > INT_MAX)
        throw std::runtime_error("the shares of one exchange exceed 2 GiB: use fewer trials per process and command");
      counts[r] = static_cast<int>(sizes[r]);
      offsets[r] = static_cast<int>(total);
      total += sizes[r];
    }
    std::string all(static_cast<std::size_t>(total), '\0');
    MPI_Allgatherv(mine.data(), static_cast<int>(my_size), MPI_CHAR, all.data(), counts.data(), offsets.data(),
                   MPI_CHAR, MPI_COMM_WORLD);
    std::vector<std::string> out(size_);
    for (std::size_t r = 0; r < size_; ++r)
      out[r] = all.substr(static_cast<std::size_t>(offsets[r]), static_cast<std::size_t>(counts[r]));
    return out;
  }

 private:
  std::size_t rank_ = 0, size_ = 1;
};

/// The last line of what this process wrote to `fd` (its captured stderr), without the "\r"
/// progress updates.
std::string last_line_of(int fd) {
  std::string text;
  if (lseek(fd, 0, SEEK_SET) == 0) {
    char buffer[4096];
    for (ssize_t n; (n = read(fd, buffer, sizeof buffer)) > 0;) text.append(buffer, static_cast<std::size_t>(n));
  }
  while (!text.empty() && (text.back() == '\n' || text.back() == '\r')) text.pop_back();
  const std::size_t start = text.find_last_of("\r\n");
  return start == std::string::npos ? text : text.substr(start + 1);
}

}  // namespace

bool started_by_mpi_launcher() {
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMIX_RANK", "PMI_RANK", "PMI_SIZE"}) {
    if (std::getenv(name) != nullptr) return true;
  }
  return false;
}

int run_program_in_mpi_job(int argc, char** argv) {
  int provided = 0;
  if (MPI_Init_thread(&argc, &argv, MPI_THREAD_FUNNELED, &provided) != MPI_SUCCESS) {
    std::fprintf(stderr, "fxmimo: MPI did not start\n");
    return 2;
  }
  int exit_code = 0;
  {
    mpi_world world;
    // Ranks other than 0 print nothing: standard output is dropped, standard error kept in a
    // temporary file, whose last line is the message passed to the others when this rank fails.
    int captured = -1;
    if (world.rank() != 0) {
      std::fflush(stdout);
      std::fflush(stderr);
      const int null_fd = open("/dev/null", O_WRONLY);
      if (null_fd >= 0) {
        dup2(null_fd, STDOUT_FILENO);
        close(null_fd);
      }
      if (FILE* f = std::tmpfile()) {
        captured = dup(fileno(f));
        std::fclose(f);
        dup2(captured, STDERR_FILENO);
      }
    }
    analysis::process_group_scope scope(&world);
    exit_code = run_program(argc, argv);
    std::fflush(stdout);
    std::fflush(stderr);
    const std::string message = exit_code != 0 && captured >= 0 ? last_line_of(captured) : std::string();
    exit_code = analysis::finish_in_group(exit_code, message);
    if (captured >= 0) close(captured);
  }
  MPI_Finalize();
  return exit_code;
}

}  // namespace fxmimo::app
