// Testbench for precode_tree: reads the stimulus of a vector set with $readmemh, presents all K
// terms of one (antenna, symbol) sum per clock to the adder tree and writes tx_acc and dac in
// the vector-set hex form with $fwrite "%h" (IEEE 1364-2005 17.1.1.3: %h of a sized reg prints
// exactly ceil(W/4) zero-padded digits of its two's-complement pattern), one word per line,
// antenna-major ([antenna, symbol]).
//
//   +vec=DIR   vector set holding tx_acc.in.weights.{re,im}.hex ([antenna, user]) and
//              tx_acc.in.symbols.{re,im}.hex ([user, symbol])
//   +out=DIR   where tx_acc_re.hex, tx_acc_im.hex, dac_re.hex, dac_im.hex are written
// Sizes and formats are parameters (iverilog -Ptb.NAME=V, verilator -GNAME=V); K is both the
// number of users and the number of terms of the tree. Defining FORCE_TRUNCATE
// (+define+FORCE_TRUNCATE / -DFORCE_TRUNCATE) builds the block with floor rounding in both
// requantise stages: a deliberately wrong RTL for the negative test.
`timescale 1ns / 1ps
`default_nettype none

module tb;
  parameter integer M = 4;  // antennas
  parameter integer K = 4;  // users = terms per sum
  parameter integer N = 8;  // symbols
  parameter integer WW = 16;
  parameter integer WF = 14;
  parameter integer SW = 12;
  parameter integer SF = 10;
  parameter integer AW = 20;
  parameter integer AF = 14;
  parameter integer DW = 12;
  parameter integer DF = 9;
  // The two rounding parameters go unused when FORCE_TRUNCATE overrides them.
  // verilator lint_off UNUSEDPARAM
  parameter integer ACC_RND = 7;
  parameter integer DAC_RND = 7;
  // verilator lint_on UNUSEDPARAM
  parameter integer ACC_OVF = 1;
  parameter integer DAC_OVF = 1;
`ifdef FORCE_TRUNCATE
  localparam integer ACC_RND_RTL = 0;
  localparam integer DAC_RND_RTL = 0;
`else
  localparam integer ACC_RND_RTL = ACC_RND;
  localparam integer DAC_RND_RTL = DAC_RND;
`endif

  reg clk = 1'b0;
  always #5 clk <= ~clk;

  reg rst = 1'b1;
  reg in_valid = 1'b0;
  reg [K*WW-1:0] w_re = {(K * WW) {1'b0}};
  reg [K*WW-1:0] w_im = {(K * WW) {1'b0}};
  reg [K*SW-1:0] s_re = {(K * SW) {1'b0}};
  reg [K*SW-1:0] s_im = {(K * SW) {1'b0}};
  reg [K*WW-1:0] bus_w_re, bus_w_im;  // the next sum's terms, assembled term by term
  reg [K*SW-1:0] bus_s_re, bus_s_im;
  wire out_valid;
  wire signed [AW-1:0] acc_re, acc_im;
  wire signed [DW-1:0] dac_re, dac_im;

  precode_tree #(
      .K(K), .WW(WW), .WF(WF), .SW(SW), .SF(SF), .AW(AW), .AF(AF), .DW(DW), .DF(DF),
      .ACC_RND(ACC_RND_RTL), .ACC_OVF(ACC_OVF), .DAC_RND(DAC_RND_RTL), .DAC_OVF(DAC_OVF)
  ) dut (
      .clk(clk), .rst(rst), .in_valid(in_valid),
      .w_re(w_re), .w_im(w_im), .s_re(s_re), .s_im(s_im),
      .out_valid(out_valid), .acc_re(acc_re), .acc_im(acc_im), .dac_re(dac_re), .dac_im(dac_im)
  );

  reg [WW-1:0] weights_re[0:M*K-1];
  reg [WW-1:0] weights_im[0:M*K-1];
  reg [SW-1:0] symbols_re[0:K*N-1];
  reg [SW-1:0] symbols_im[0:K*N-1];

  reg [8*512-1:0] vec_dir;
  reg [8*512-1:0] out_dir;
  reg [8*600-1:0] path;
  integer fd_acc_re, fd_acc_im, fd_dac_re, fd_dac_im;
  integer i_ant, i_user, i_sym;
  integer num_out = 0;

  initial begin
    if (!$value$plusargs("vec=%s", vec_dir) || !$value$plusargs("out=%s", out_dir)) begin
      $display("tb: usage: +vec=VECTOR_SET_DIR +out=DUMP_DIR");
      $finish;
    end
    $sformat(path, "%0s/tx_acc.in.weights.re.hex", vec_dir);
    $readmemh(path, weights_re);
    $sformat(path, "%0s/tx_acc.in.weights.im.hex", vec_dir);
    $readmemh(path, weights_im);
    $sformat(path, "%0s/tx_acc.in.symbols.re.hex", vec_dir);
    $readmemh(path, symbols_re);
    $sformat(path, "%0s/tx_acc.in.symbols.im.hex", vec_dir);
    $readmemh(path, symbols_im);
    $sformat(path, "%0s/tx_acc_re.hex", out_dir);
    fd_acc_re = $fopen(path, "w");
    $sformat(path, "%0s/tx_acc_im.hex", out_dir);
    fd_acc_im = $fopen(path, "w");
    $sformat(path, "%0s/dac_re.hex", out_dir);
    fd_dac_re = $fopen(path, "w");
    $sformat(path, "%0s/dac_im.hex", out_dir);
    fd_dac_im = $fopen(path, "w");
    if (fd_acc_re == 0 || fd_acc_im == 0 || fd_dac_re == 0 || fd_dac_im == 0) begin
      $display("tb: cannot open the dump files in %0s", out_dir);
      $finish;
    end

    repeat (2) @(negedge clk);
    rst = 1'b0;
    // One sum per clock: user k of the sum goes to term k of the flattened buses. The buses
    // are assembled in the bus_* variables and then assigned whole: Verilator 5.006 with
    // --timing does not wake the logic reading a variable that a suspendable process writes
    // through an indexed part-select (v[i*W +: W] = ...), so the block would see stale inputs.
    for (i_ant = 0; i_ant < M; i_ant = i_ant + 1) begin
      for (i_sym = 0; i_sym < N; i_sym = i_sym + 1) begin
        for (i_user = 0; i_user < K; i_user = i_user + 1) begin
          bus_w_re[i_user*WW +: WW] = weights_re[i_ant*K+i_user];
          bus_w_im[i_user*WW +: WW] = weights_im[i_ant*K+i_user];
          bus_s_re[i_user*SW +: SW] = symbols_re[i_user*N+i_sym];
          bus_s_im[i_user*SW +: SW] = symbols_im[i_user*N+i_sym];
        end
        w_re = bus_w_re;
        w_im = bus_w_im;
        s_re = bus_s_re;
        s_im = bus_s_im;
        in_valid = 1'b1;
        @(negedge clk);
      end
    end
    in_valid = 1'b0;
    repeat (3) @(negedge clk);
    $fclose(fd_acc_re);
    $fclose(fd_acc_im);
    $fclose(fd_dac_re);
    $fclose(fd_dac_im);
    if (num_out != M * N) $display("tb: %0d outputs, %0d expected", num_out, M * N);
    $finish;
  end

  // Outputs are registered on the rising edge and sampled on the falling one.
  always @(negedge clk) begin
    if (out_valid) begin
      $fwrite(fd_acc_re, "%h\n", acc_re);
      $fwrite(fd_acc_im, "%h\n", acc_im);
      $fwrite(fd_dac_re, "%h\n", dac_re);
      $fwrite(fd_dac_im, "%h\n", dac_im);
      num_out <= num_out + 1;
    end
  end
endmodule

`default_nettype wire
