// Testbench for power_mac: reads the precoder weights of a vector set with $readmemh, streams
// them through the block and writes the power_acc words in the vector-set hex form with $fwrite
// "%h" (IEEE 1364-2005 17.1.1.3: %h of a sized reg prints exactly ceil(W/4) zero-padded digits
// of its bit pattern; an unsigned word is plain binary), one word per line.
//
//   +vec=DIR   vector set holding power_acc.in.precoder.{re,im}.hex ([antenna, user], M K words)
//   +out=DIR   where power_acc.hex is written: M words (antenna order) when TOTAL = 0, one
//              word (the sum over antennas, then users) when TOTAL = 1
// Sizes and formats are parameters (iverilog -Ptb.NAME=V, verilator -GNAME=V). Planted bugs for
// the negative tests: FORCE_SIGNED_ACC (+define+FORCE_SIGNED_ACC / -DFORCE_SIGNED_ACC) builds
// the block with a signed accumulator whatever AS says, FORCE_TRUNCATE with floor rounding.
`timescale 1ns / 1ps
`default_nettype none

module tb;
  parameter integer M = 4;  // antennas
  parameter integer K = 4;  // users
  parameter integer TOTAL = 0;
  parameter integer WW = 16;
  parameter integer WF = 14;
  parameter integer AW = 20;
  parameter integer AF = 14;
  // AS and ACC_RND go unused when FORCE_SIGNED_ACC or FORCE_TRUNCATE overrides them.
  // verilator lint_off UNUSEDPARAM
  parameter integer AS = 0;
  parameter integer ACC_RND = 7;
  // verilator lint_on UNUSEDPARAM
  parameter integer ACC_OVF = 1;
`ifdef FORCE_SIGNED_ACC
  localparam integer AS_RTL = 1;
`else
  localparam integer AS_RTL = AS;
`endif
`ifdef FORCE_TRUNCATE
  localparam integer ACC_RND_RTL = 0;
`else
  localparam integer ACC_RND_RTL = ACC_RND;
`endif
  localparam integer NUM_OUT = (TOTAL != 0) ? 1 : M;

  reg clk = 1'b0;
  always #5 clk <= ~clk;

  reg rst = 1'b1;
  reg in_valid = 1'b0;
  reg in_first = 1'b0;
  reg in_last = 1'b0;
  reg signed [WW-1:0] w_re = {WW{1'b0}};
  reg signed [WW-1:0] w_im = {WW{1'b0}};
  wire out_valid;
  wire [AW-1:0] acc;

  power_mac #(
      .WW(WW), .WF(WF), .AW(AW), .AF(AF), .AS(AS_RTL), .ACC_RND(ACC_RND_RTL), .ACC_OVF(ACC_OVF)
  ) dut (
      .clk(clk), .rst(rst), .in_valid(in_valid), .in_first(in_first), .in_last(in_last),
      .w_re(w_re), .w_im(w_im), .out_valid(out_valid), .acc(acc)
  );

  reg [WW-1:0] weights_re[0:M*K-1];
  reg [WW-1:0] weights_im[0:M*K-1];

  reg [8*512-1:0] vec_dir;
  reg [8*512-1:0] out_dir;
  reg [8*600-1:0] path;
  integer fd;
  integer i_ant, i_user;
  integer num_out = 0;

  initial begin
    if (!$value$plusargs("vec=%s", vec_dir) || !$value$plusargs("out=%s", out_dir)) begin
      $display("tb: usage: +vec=VECTOR_SET_DIR +out=DUMP_DIR");
      $finish;
    end
    $sformat(path, "%0s/power_acc.in.precoder.re.hex", vec_dir);
    $readmemh(path, weights_re);
    $sformat(path, "%0s/power_acc.in.precoder.im.hex", vec_dir);
    $readmemh(path, weights_im);
    $sformat(path, "%0s/power_acc.hex", out_dir);
    fd = $fopen(path, "w");
    if (fd == 0) begin
      $display("tb: cannot open the dump file in %0s", out_dir);
      $finish;
    end

    repeat (2) @(negedge clk);
    rst = 1'b0;
    for (i_ant = 0; i_ant < M; i_ant = i_ant + 1) begin
      for (i_user = 0; i_user < K; i_user = i_user + 1) begin
        in_valid = 1'b1;
        in_first = (i_user == 0) && (TOTAL == 0 || i_ant == 0);
        in_last = (i_user == K - 1) && (TOTAL == 0 || i_ant == M - 1);
        w_re = weights_re[i_ant*K+i_user];
        w_im = weights_im[i_ant*K+i_user];
        @(negedge clk);
      end
    end
    in_valid = 1'b0;
    repeat (3) @(negedge clk);
    $fclose(fd);
    if (num_out != NUM_OUT) $display("tb: %0d outputs, %0d expected", num_out, NUM_OUT);
    $finish;
  end

  // Outputs are registered on the rising edge and sampled on the falling one.
  always @(negedge clk) begin
    if (out_valid) begin
      $fwrite(fd, "%h\n", acc);
      num_out <= num_out + 1;
    end
  end
endmodule

`default_nettype wire
