// precode_mac: the precoding accumulator of the fxmimo datapath (nodes tx_acc and dac), one
// complex multiply-accumulate per clock. For one antenna m and symbol n the caller streams the
// K terms k = 0..K-1 in index order (in_first on k = 0, in_last on k = K-1), and the block
// computes exactly what the model defines (README "How it computes"):
//   p     = weights[m,k] * symbols[k,n]   exact: re = wr sr - wi si, im = wr si + wi sr,
//                                          WF + SF fraction bits, WW + SW + 1 bits
//   term  = Q_acc(p)                       requantise to tx_acc (AW, AF, ACC_RND, ACC_OVF)
//   acc   = Q_acc(acc + term)              (acc = 0 before k = 0)
//   dac   = Q_dac(acc)                     requantise tx_acc to dac (DW, DF, DAC_RND, DAC_OVF)
// per real and imaginary part. On the clock after in_last, out_valid is high for one cycle with
// tx_acc in acc_re/acc_im and the DAC word in dac_re/dac_im. Rounding and overflow codes as
// in fxm_requant.v. Synthesizable Verilog-2005 (IEEE 1364-2005), signed formats only.
`timescale 1ns / 1ps
`default_nettype none

module precode_mac #(
    parameter integer WW = 16,  // weights: word bits, fraction bits
    parameter integer WF = 14,
    parameter integer SW = 12,  // symbols
    parameter integer SF = 10,
    parameter integer AW = 20,  // tx_acc
    parameter integer AF = 14,
    parameter integer DW = 12,  // dac
    parameter integer DF = 9,
    parameter integer ACC_RND = 7,
    parameter integer ACC_OVF = 1,
    parameter integer DAC_RND = 7,
    parameter integer DAC_OVF = 1
) (
    input  wire                 clk,
    input  wire                 rst,       // synchronous, active high
    input  wire                 in_valid,
    input  wire                 in_first,  // first term of a sum (k = 0)
    input  wire                 in_last,   // last term of a sum (k = K-1)
    input  wire signed [WW-1:0] w_re,
    input  wire signed [WW-1:0] w_im,
    input  wire signed [SW-1:0] s_re,
    input  wire signed [SW-1:0] s_im,
    output reg                  out_valid,
    output reg  signed [AW-1:0] acc_re,
    output reg  signed [AW-1:0] acc_im,
    output reg  signed [DW-1:0] dac_re,
    output reg  signed [DW-1:0] dac_im
);
  // Width of an exact product part: one product of full-range operands reaches
  // (-2^(WW-1)) (-2^(SW-1)) = 2^(WW+SW-2); wr sr - wi si can reach twice that, 2^(WW+SW-1),
  // which needs WW + SW + 1 signed bits.
  localparam integer PW = WW + SW + 1;

  // Operands sign-extended to PW bits by hand, so that each product is computed at PW bits
  // (1364-2005 5.4.1: a * b is max(L(a), L(b)) bits wide, widened by its context) with every
  // operand signed (5.5.1: one unsigned operand would make the whole expression unsigned).
  wire signed [PW-1:0] wr = {{(PW - WW) {w_re[WW-1]}}, w_re};
  wire signed [PW-1:0] wi = {{(PW - WW) {w_im[WW-1]}}, w_im};
  wire signed [PW-1:0] sr = {{(PW - SW) {s_re[SW-1]}}, s_re};
  wire signed [PW-1:0] si = {{(PW - SW) {s_im[SW-1]}}, s_im};
  wire signed [PW-1:0] p_re = wr * sr - wi * si;
  wire signed [PW-1:0] p_im = wr * si + wi * sr;

  // term = Q_acc(p)
  wire signed [AW-1:0] term_re, term_im;
  fxm_requant #(.IW(PW), .IF(WF + SF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
      u_term_re (.x(p_re), .y(term_re));
  fxm_requant #(.IW(PW), .IF(WF + SF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
      u_term_im (.x(p_im), .y(term_im));

  // acc + term exactly, in AW + 1 bits, then the overflow stage of Q_acc (no bits dropped).
  reg signed [AW-1:0] sum_re, sum_im;  // the accumulator registers
  wire signed [AW-1:0] base_re = in_first ? {AW{1'b0}} : sum_re;
  wire signed [AW-1:0] base_im = in_first ? {AW{1'b0}} : sum_im;
  wire signed [AW:0] wide_re = {base_re[AW-1], base_re} + {term_re[AW-1], term_re};
  wire signed [AW:0] wide_im = {base_im[AW-1], base_im} + {term_im[AW-1], term_im};
  wire signed [AW-1:0] next_re, next_im;
  fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
      u_acc_re (.x(wide_re), .y(next_re));
  fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
      u_acc_im (.x(wide_im), .y(next_im));

  // dac = Q_dac(acc), from the final sum.
  wire signed [DW-1:0] dac_next_re, dac_next_im;
  fxm_requant #(.IW(AW), .IF(AF), .OW(DW), .OF(DF), .RND(DAC_RND), .OVF(DAC_OVF))
      u_dac_re (.x(next_re), .y(dac_next_re));
  fxm_requant #(.IW(AW), .IF(AF), .OW(DW), .OF(DF), .RND(DAC_RND), .OVF(DAC_OVF))
      u_dac_im (.x(next_im), .y(dac_next_im));

  always @(posedge clk) begin
    if (rst) begin
      sum_re <= {AW{1'b0}};
      sum_im <= {AW{1'b0}};
      out_valid <= 1'b0;
      acc_re <= {AW{1'b0}};
      acc_im <= {AW{1'b0}};
      dac_re <= {DW{1'b0}};
      dac_im <= {DW{1'b0}};
    end else begin
      out_valid <= in_valid & in_last;
      if (in_valid) begin
        sum_re <= next_re;
        sum_im <= next_im;
      end
      if (in_valid & in_last) begin
        acc_re <= next_re;
        acc_im <= next_im;
        dac_re <= dac_next_re;
        dac_im <= dac_next_im;
      end
    end
  end
endmodule

`default_nettype wire
