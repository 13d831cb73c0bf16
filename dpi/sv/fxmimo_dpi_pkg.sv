// fxmimo_dpi_pkg: the DPI-C imports of libfxmimo_dpi.so (fxmimo_dpi.h) for SystemVerilog
// benches (IEEE 1800-2017 clause 35: string = const char*, longint = 64-bit integer,
// chandle = void*, output arguments = pointers). Link the bench with -lfxmimo_dpi.
//
// Typical scoreboard use:
//   chandle m = fxm_model_open("scenario.toml", 0);
//   ok = fxm_check_word(m, "dac", 0, antenna, symbol, dut_word);   // 1 equal, 0 different
//   if (fxm_mismatches(m, "dac") != 0) $error("%s", fxm_first_mismatch(m, "dac"));
`timescale 1ns / 1ps

package fxmimo_dpi_pkg;
  import "DPI-C" function string fxm_last_error();
  import "DPI-C" function int fxm_requantize(input string from_format, input longint word, input string to_format,
                                             input string rounding, input string overflow, output longint result);
  import "DPI-C" function chandle fxm_model_open(input string scenario_path, input longint trial);
  import "DPI-C" function void fxm_model_close(input chandle model);
  import "DPI-C" function int fxm_node_shape(input chandle model, input string node, output int rows,
                                             output int cols, output int is_complex);
  import "DPI-C" function int fxm_node_format(input chandle model, input string node, output int word_bits,
                                              output int frac_bits, output int is_signed);
  import "DPI-C" function int fxm_node_word(input chandle model, input string node, input int part, input int row,
                                            input int col, output longint word);
  import "DPI-C" function int fxm_check_word(input chandle model, input string node, input int part, input int row,
                                             input int col, input longint dut_word);
  import "DPI-C" function longint fxm_checked(input chandle model, input string node);
  import "DPI-C" function longint fxm_mismatches(input chandle model, input string node);
  import "DPI-C" function string fxm_first_mismatch(input chandle model, input string node);
endpackage
