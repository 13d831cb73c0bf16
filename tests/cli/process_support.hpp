#pragma once
// Starting the fxmimo program as a child process that a test can signal or kill.
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <string>
#include <vector>

namespace fxmimo::test {

/// fxmimo ARGS... started in `dir`, stdout to /dev/null, stderr to `err`.
inline pid_t start_fxmimo(const std::filesystem::path& dir, const std::vector<std::string>& args,
                          const std::filesystem::path& err) {
  const pid_t pid = ::fork();
  if (pid == 0) {
    if (::chdir(dir.c_str()) != 0) ::_exit(126);
    if (std::freopen("/dev/null", "w", stdout) == nullptr) ::_exit(126);
    if (std::freopen(err.c_str(), "w", stderr) == nullptr) ::_exit(126);
    std::vector<char*> argv;
    std::string exe = FXMIMO_EXE;
    argv.push_back(exe.data());
    std::vector<std::string> copies = args;
    for (std::string& a : copies) argv.push_back(a.data());
    argv.push_back(nullptr);
    ::execv(exe.c_str(), argv.data());
    ::_exit(127);
  }
  return pid;
}

/// The wait status of a child.
inline int wait_for(pid_t pid) {
  int status = 0;
  ::waitpid(pid, &status, 0);
  return status;
}

/// Wall seconds of one complete run (exit code must be 0 or 1).
inline double timed_run(const std::filesystem::path& dir, const std::vector<std::string>& args,
                        const std::filesystem::path& err, int* exit_code = nullptr) {
  const auto start = std::chrono::steady_clock::now();
  const int status = wait_for(start_fxmimo(dir, args, err));
  if (exit_code != nullptr) *exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace fxmimo::test
