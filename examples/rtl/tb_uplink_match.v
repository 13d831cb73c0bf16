// Testbench for uplink_match. Reads the stimulus of a vector set written by
//   fxmimo vectors ... --nodes ul_match
// with $readmemh (IEEE 1364-2005 17.2.9; one word per line, row-major, last dimension fastest):
//   ul_match.in.ul_adc.{re,im}.hex    [trial, antenna, uplink_symbol]
//   ul_match.in.chan_est.{re,im}.hex  [trial, antenna, user]
// feeds the block one antenna per clock, trial by trial, user by user, symbol by symbol, and
// writes every finished sum with $fwrite "%h" (17.1.1.3: a sized reg prints ceil(AW/4) zero-padded
// hex digits of its two's-complement pattern) into ul_match_re.hex and ul_match_im.hex, in the
// layout of ul_match.out ([trial, user, uplink_symbol]), ready for
//   fxmimo check VEC --node ul_match --dump OUT/ul_match_re.hex --dump OUT/ul_match_im.hex
//
//   +vec=DIR   the vector set;  +out=DIR   where the two dump files are written
// Sizes, formats and modes are parameters (iverilog -Ptb.NAME=V, verilator -GNAME=V); the defaults
// are one trial of examples/pier-64-uplink.toml. Defining FORCE_TRUNCATE builds the block with
// floor rounding of its terms whatever RND says: a deliberately wrong RTL for the negative test.
`timescale 1ns / 1ps
`default_nettype none

module tb;
  parameter integer T = 1;    // trials in the set
  parameter integer M = 64;   // antennas: terms of one sum
  parameter integer K = 8;    // users
  parameter integer N = 168;  // uplink symbols
  parameter integer YW = 12;  // ul_adc
  parameter integer YF = 11;
  parameter integer HW = 16;  // chan_est
  parameter integer HF = 11;
  parameter integer AW = 18;  // ul_match
  parameter integer AF = 10;
  // RND goes unused when FORCE_TRUNCATE overrides it.
  // verilator lint_off UNUSEDPARAM
  parameter integer RND = 7;
  // verilator lint_on UNUSEDPARAM
  parameter integer OVF = 1;
`ifdef FORCE_TRUNCATE
  localparam integer RND_DUT = 0;
`else
  localparam integer RND_DUT = RND;
`endif

  reg clk = 1'b0;
  always #5 clk <= ~clk;

  reg rst = 1'b1;
  reg in_valid = 1'b0;
  reg in_first = 1'b0;
  reg in_last = 1'b0;
  reg signed [YW-1:0] y_re = {YW{1'b0}};
  reg signed [YW-1:0] y_im = {YW{1'b0}};
  reg signed [HW-1:0] h_re = {HW{1'b0}};
  reg signed [HW-1:0] h_im = {HW{1'b0}};
  wire out_valid;
  wire signed [AW-1:0] z_re, z_im;

  uplink_match #(
      .YW(YW), .YF(YF), .HW(HW), .HF(HF), .AW(AW), .AF(AF), .RND(RND_DUT), .OVF(OVF)
  ) dut (
      .clk(clk), .rst(rst), .in_valid(in_valid), .in_first(in_first), .in_last(in_last),
      .y_re(y_re), .y_im(y_im), .h_re(h_re), .h_im(h_im),
      .out_valid(out_valid), .z_re(z_re), .z_im(z_im)
  );

  reg [YW-1:0] adc_re[0:T*M*N-1];
  reg [YW-1:0] adc_im[0:T*M*N-1];
  reg [HW-1:0] est_re[0:T*M*K-1];
  reg [HW-1:0] est_im[0:T*M*K-1];

  reg [8*512-1:0] vec_dir;
  reg [8*512-1:0] out_dir;
  reg [8*600-1:0] path;
  integer fd_re, fd_im;
  integer t, k, n, m;
  integer written = 0;

  initial begin
    if (!$value$plusargs("vec=%s", vec_dir) || !$value$plusargs("out=%s", out_dir)) begin
      $display("tb: usage: +vec=VECTOR_SET_DIR +out=DUMP_DIR");
      $finish;
    end
    $sformat(path, "%0s/ul_match.in.ul_adc.re.hex", vec_dir);
    $readmemh(path, adc_re);
    $sformat(path, "%0s/ul_match.in.ul_adc.im.hex", vec_dir);
    $readmemh(path, adc_im);
    $sformat(path, "%0s/ul_match.in.chan_est.re.hex", vec_dir);
    $readmemh(path, est_re);
    $sformat(path, "%0s/ul_match.in.chan_est.im.hex", vec_dir);
    $readmemh(path, est_im);
    $sformat(path, "%0s/ul_match_re.hex", out_dir);
    fd_re = $fopen(path, "w");
    $sformat(path, "%0s/ul_match_im.hex", out_dir);
    fd_im = $fopen(path, "w");
    if (fd_re == 0 || fd_im == 0) begin
      $display("tb: cannot open the dump files in %0s", out_dir);
      $finish;
    end

    repeat (2) @(negedge clk);
    rst = 1'b0;
    // One term per clock, back to back: the sums follow each other without a gap.
    for (t = 0; t < T; t = t + 1) begin
      for (k = 0; k < K; k = k + 1) begin
        for (n = 0; n < N; n = n + 1) begin
          for (m = 0; m < M; m = m + 1) begin
            in_valid = 1'b1;
            in_first = (m == 0);
            in_last = (m == M - 1);
            y_re = adc_re[(t*M+m)*N+n];
            y_im = adc_im[(t*M+m)*N+n];
            h_re = est_re[(t*M+m)*K+k];
            h_im = est_im[(t*M+m)*K+k];
            @(negedge clk);
          end
        end
      end
    end
    in_valid = 1'b0;
    in_first = 1'b0;
    in_last = 1'b0;
    repeat (4) @(negedge clk);
    $fclose(fd_re);
    $fclose(fd_im);
    if (written != T * K * N) $display("tb: %0d sums written, %0d expected", written, T * K * N);
    $finish;
  end

  // The block registers on the rising edge; its outputs are sampled on the falling one.
  always @(negedge clk) begin
    if (out_valid) begin
      $fwrite(fd_re, "%h\n", z_re);
      $fwrite(fd_im, "%h\n", z_im);
      written <= written + 1;
    end
  end
endmodule

`default_nettype wire
