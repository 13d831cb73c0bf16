// fxmimo: the program is the app room's run_program.
#include "fxmimo/app/program.hpp"

int main(int argc, char** argv) { return fxmimo::app::run_program(argc, argv); }
