// Exhaustive testbench for fxm_requant: every IW-bit input pattern through every rounding code
// (RND 0..7) and every overflow code (OVF 0..3), one fxm_requant per pair of codes, all with the
// same formats (IW, IF, IS) -> (OW, OF, OS). Writes the output words in the vector-set hex form
// with $fwrite "%h" (IEEE 1364-2005 17.1.1.3: %h of a sized vector prints exactly ceil(W/4)
// zero-padded digits of its bit pattern), one word per line, in the order
//   code c = 4 RND + OVF, from 0 to 31; within a code, pattern p = 0 .. 2^IW - 1
// (line c 2^IW + p). Pattern p is the word p for an unsigned input (IS = 0) and the
// two's-complement word of pattern p for a signed one (IS = 1).
//
//   +out=FILE   the dump
// Formats are parameters (iverilog -Ptb.NAME=V, verilator -GNAME=V); IW up to 16.
`timescale 1ns / 1ps
`default_nettype none

module tb;
  parameter integer IW = 6;
  parameter integer IF = 4;
  parameter integer IS = 1;
  parameter integer OW = 4;
  parameter integer OF = 2;
  parameter integer OS = 0;

  reg [IW-1:0] x = {IW{1'b0}};
  wire [32*OW-1:0] ys;  // output of code c in bits [c*OW +: OW]

  genvar c;
  generate
    for (c = 0; c < 32; c = c + 1) begin : g_code
      fxm_requant #(
          .IW(IW), .IF(IF), .IS(IS), .OW(OW), .OF(OF), .OS(OS), .RND(c / 4), .OVF(c % 4)
      ) u_q (
          .x(x), .y(ys[c*OW +: OW])
      );
    end
  endgenerate

  reg [8*512-1:0] out_path;
  reg [OW-1:0] y;
  integer fd;
  integer code;
  integer p;

  initial begin
    if (!$value$plusargs("out=%s", out_path)) begin
      $display("tb: usage: +out=DUMP_FILE");
      $finish;
    end
    fd = $fopen(out_path, "w");
    if (fd == 0) begin
      $display("tb: cannot open %0s", out_path);
      $finish;
    end
    for (code = 0; code < 32; code = code + 1) begin
      for (p = 0; p < (1 << IW); p = p + 1) begin
        x = p[IW-1:0];
        #1;
        y = ys[code*OW +: OW];
        $fwrite(fd, "%h\n", y);
      end
    end
    $fclose(fd);
    $finish;
  end
endmodule

`default_nettype wire
