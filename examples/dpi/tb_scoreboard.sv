// A scoreboard for the example precoding block (examples/rtl/precode_mac.v) that asks the fxmimo
// model for every stimulus word and checks every output word call by call through DPI-C
// (libfxmimo_dpi.so, package dpi/sv/fxmimo_dpi_pkg.sv): no vector files in between.
//
//   +scenario=FILE  the scenario (examples/dpi/kiosk-8.toml: its weights, symbols, tx_acc and dac
//                   formats are the parameters below; the bench stops if they differ)
//   +trial=N        the trial (default 0)
// Prints "scoreboard: PASS ..." or "scoreboard: FAIL ..." with the first mismatch of each node
// and its coordinates, then finishes with $fatal on a failure (non-zero exit code).
// FORCE_TRUNCATE builds the block with floor rounding in both requantisers: a planted bug.
`timescale 1ns / 1ps

module tb;
  import fxmimo_dpi_pkg::*;

  parameter integer WW = 14;  // weights Q0.13
  parameter integer WF = 13;
  parameter integer SW = 12;  // symbols Q1.10
  parameter integer SF = 10;
  parameter integer AW = 14;  // tx_acc Q1.12, half_even, saturate
  parameter integer AF = 12;
  parameter integer DW = 12;  // dac Q0.11, half_up, saturate_symmetric
  parameter integer DF = 11;
  // The two rounding parameters go unused when FORCE_TRUNCATE overrides them.
  // verilator lint_off UNUSEDPARAM
  parameter integer ACC_RND = 7;
  parameter integer DAC_RND = 3;
  // verilator lint_on UNUSEDPARAM
  parameter integer ACC_OVF = 1;
  parameter integer DAC_OVF = 2;
`ifdef FORCE_TRUNCATE
  localparam integer ACC_RND_RTL = 0;
  localparam integer DAC_RND_RTL = 0;
`else
  localparam integer ACC_RND_RTL = ACC_RND;
  localparam integer DAC_RND_RTL = DAC_RND;
`endif

  logic clk = 1'b0;
  always #5 clk <= ~clk;

  logic rst = 1'b1;
  logic in_valid = 1'b0, in_first = 1'b0, in_last = 1'b0;
  logic signed [WW-1:0] w_re = '0, w_im = '0;
  logic signed [SW-1:0] s_re = '0, s_im = '0;
  wire out_valid;
  wire signed [AW-1:0] acc_re, acc_im;
  wire signed [DW-1:0] dac_re, dac_im;

  precode_mac #(
      .WW(WW), .WF(WF), .SW(SW), .SF(SF), .AW(AW), .AF(AF), .DW(DW), .DF(DF),
      .ACC_RND(ACC_RND_RTL), .ACC_OVF(ACC_OVF), .DAC_RND(DAC_RND_RTL), .DAC_OVF(DAC_OVF)
  ) dut (
      .clk(clk), .rst(rst), .in_valid(in_valid), .in_first(in_first), .in_last(in_last),
      .w_re(w_re), .w_im(w_im), .s_re(s_re), .s_im(s_im),
      .out_valid(out_valid), .acc_re(acc_re), .acc_im(acc_im), .dac_re(dac_re), .dac_im(dac_im)
  );

  chandle model;
  string scenario;
  int trial;
  int num_ant, num_user, num_sym;
  int num_out = 0;

  task automatic expect_format(string node, int w, int f);
    int mw, mf, ms;
    if (fxm_node_format(model, node, mw, mf, ms) != 0) $fatal(1, "scoreboard: %s", fxm_last_error());
    if (mw != w || mf != f || ms != 1)
      $fatal(1, "scoreboard: %s is W=%0d F=%0d in the scenario, the RTL is built for W=%0d F=%0d", node, mw, mf, w, f);
  endtask

  function automatic longint model_word(string node, int part, int row, int col);
    longint v;
    if (fxm_node_word(model, node, part, row, col, v) != 0) $fatal(1, "scoreboard: %s", fxm_last_error());
    return v;
  endfunction

  task automatic check(string node, int part, int row, int col, longint got);
    if (fxm_check_word(model, node, part, row, col, got) < 0) $fatal(1, "scoreboard: %s", fxm_last_error());
  endtask

  initial begin
    int rows, cplx;  // the weights' row count and complexity are the block's own
    if (!$value$plusargs("scenario=%s", scenario)) $fatal(1, "scoreboard: +scenario=FILE is missing");
    if (!$value$plusargs("trial=%d", trial)) trial = 0;
    model = fxm_model_open(scenario, longint'(trial));
    if (model == null) $fatal(1, "scoreboard: %s", fxm_last_error());
    expect_format("weights", WW, WF);
    expect_format("symbols", SW, SF);
    expect_format("tx_acc", AW, AF);
    expect_format("dac", DW, DF);
    if (fxm_node_shape(model, "tx_acc", num_ant, num_sym, cplx) != 0) $fatal(1, "scoreboard: %s", fxm_last_error());
    if (fxm_node_shape(model, "weights", rows, num_user, cplx) != 0) $fatal(1, "scoreboard: %s", fxm_last_error());
    if (rows != num_ant || cplx != 1) $fatal(1, "scoreboard: weights are %0d x %0d, expected %0d rows", rows, num_user, num_ant);

    repeat (2) @(negedge clk);
    rst = 1'b0;
    for (int m = 0; m < num_ant; m++) begin
      for (int n = 0; n < num_sym; n++) begin
        for (int k = 0; k < num_user; k++) begin
          in_valid = 1'b1;
          in_first = (k == 0);
          in_last = (k == num_user - 1);
          // Words are sign-extended longints; the low bits are the operand's pattern.
          w_re = WW'(model_word("weights", 0, m, k));
          w_im = WW'(model_word("weights", 1, m, k));
          s_re = SW'(model_word("symbols", 0, k, n));
          s_im = SW'(model_word("symbols", 1, k, n));
          @(negedge clk);
        end
      end
    end
    in_valid = 1'b0;
    repeat (3) @(negedge clk);
    if (num_out != num_ant * num_sym) $fatal(1, "scoreboard: %0d outputs, %0d expected", num_out, num_ant * num_sym);
    if (fxm_mismatches(model, "tx_acc") == 0 && fxm_mismatches(model, "dac") == 0) begin
      $display("scoreboard: PASS, tx_acc %0d and dac %0d words equal the model (trial %0d)",
               fxm_checked(model, "tx_acc"), fxm_checked(model, "dac"), trial);
      fxm_model_close(model);
      $finish;
    end else begin
      $display("scoreboard: FAIL, tx_acc %0d of %0d and dac %0d of %0d words differ from the model",
               fxm_mismatches(model, "tx_acc"), fxm_checked(model, "tx_acc"), fxm_mismatches(model, "dac"),
               fxm_checked(model, "dac"));
      if (fxm_mismatches(model, "tx_acc") != 0) $display("scoreboard: first: %s", fxm_first_mismatch(model, "tx_acc"));
      if (fxm_mismatches(model, "dac") != 0) $display("scoreboard: first: %s", fxm_first_mismatch(model, "dac"));
      fxm_model_close(model);
      $fatal(1, "scoreboard: the RTL differs from the model");
    end
  end

  // Outputs are registered on the rising edge and checked on the falling one, in (antenna,
  // symbol) order.
  always @(negedge clk) begin
    if (out_valid) begin
      check("tx_acc", 0, num_out / num_sym, num_out % num_sym, longint'(acc_re));
      check("tx_acc", 1, num_out / num_sym, num_out % num_sym, longint'(acc_im));
      check("dac", 0, num_out / num_sym, num_out % num_sym, longint'(dac_re));
      check("dac", 1, num_out / num_sym, num_out % num_sym, longint'(dac_im));
      num_out <= num_out + 1;
    end
  end
endmodule
