#pragma once
/// The fxmimo program as a function: a program of its own registers nodes and stages
/// (fxmimo/datapath/node_table.hpp, plan.hpp) and then hands its command line to run_program,
/// which offers every fxmimo command on the extended datapath.

namespace fxmimo::app {

/// Parses the command line and runs one command. Returns the exit code: 0 ok, 1 a check
/// failed, 2 bad usage or input, 3 an internal error, 4 another process of an MPI job failed.
int run_program(int argc, char** argv);

}  // namespace fxmimo::app
