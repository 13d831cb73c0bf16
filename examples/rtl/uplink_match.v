// uplink_match: the uplink matched filter of the fxmimo datapath (node ul_match) as a two-stage
// pipelined complex multiply-accumulate. For one user k and one uplink symbol n the caller feeds
// the M antennas m = 0..M-1 in index order, one per clock (in_first with m = 0, in_last with
// m = M-1): the received word y = ul_adc[m,n] and the estimate h = chan_est[m,k]. The block
// computes what the model defines for an accumulator node in the sequential order (README "How
// it computes", step 13 and "Products and accumulators"), per real and imaginary part:
//   p    = y conj(h)       exact: re = yr hr + yi hi, im = yi hr - yr hi,
//                          YF + HF fraction bits, YW + HW + 1 bits (conj taken exactly)
//   t    = Q_acc(p)        requantise the term to ul_match (AW, AF, RND, OVF)
//   acc  = OV_acc(acc + t) acc = 0 before the first term; the sum of two AW-bit words of one
//                          format is exact in AW + 1 bits, so Q_acc of it is its overflow stage
// so the first term lands as Q_acc(p_0) and saturation (or wrapping) happens in antenna order,
// as a MAC sees the terms.
//
// Pipeline: stage 1 registers the exact product with its first/last flags (the multiplier's
// output register of a DSP slice); stage 2 requantises it and updates the accumulator. The
// finished sum appears in z_re/z_im with out_valid high for one clock, two clocks after the
// in_last term was presented. A new sum may start on the clock right after in_last: no bubble.
// Rounding codes (RND) and overflow codes (OVF) as in fxm_requant.v, which this block
// instantiates four times. Synthesizable Verilog-2005 (IEEE 1364-2005), signed formats only.
// Limit (from fxm_requant): YF + HF - AF < YW + HW + 1.
`timescale 1ns / 1ps
`default_nettype none

module uplink_match #(
    parameter integer YW = 12,  // ul_adc: word bits, fraction bits
    parameter integer YF = 11,
    parameter integer HW = 16,  // chan_est
    parameter integer HF = 11,
    parameter integer AW = 18,  // ul_match
    parameter integer AF = 10,
    parameter integer RND = 7,  // ul_match's rounding code
    parameter integer OVF = 1   // ul_match's overflow code
) (
    input  wire                 clk,
    input  wire                 rst,       // synchronous, active high
    input  wire                 in_valid,
    input  wire                 in_first,  // antenna 0 of a sum
    input  wire                 in_last,   // antenna M-1 of a sum
    input  wire signed [YW-1:0] y_re,      // ul_adc[m,n]
    input  wire signed [YW-1:0] y_im,
    input  wire signed [HW-1:0] h_re,      // chan_est[m,k]
    input  wire signed [HW-1:0] h_im,
    output reg                  out_valid,
    output reg  signed [AW-1:0] z_re,      // ul_match[k,n]
    output reg  signed [AW-1:0] z_im
);
  // Product width. Each part is a sum of two products; with every operand at its most negative
  // word, yr hr + yi hi = 2 (-2^(YW-1)) (-2^(HW-1)) = 2^(YW+HW-1): YW + HW + 1 signed bits.
  localparam integer PW = YW + HW + 1;
  localparam integer PF = YF + HF;

  // Operands sign-extended to PW bits, so every multiplication below is done at PW bits (IEEE
  // 1364-2005 5.4.1) between signed operands (5.5.1: a single unsigned operand would make the
  // whole expression unsigned and drop the sign extension). The word is put at the top of PW bits
  // with zeros below, made signed, and shifted back down by >>>, which fills with the sign bit
  // of a signed operand (5.1.12). (A replication of the sign bit, {n{y[W-1]}}, is the same
  // function but simulates about three times slower under Icarus Verilog 11.)
  wire signed [PW-1:0] yr = $signed({y_re, {(PW - YW) {1'b0}}}) >>> (PW - YW);
  wire signed [PW-1:0] yi = $signed({y_im, {(PW - YW) {1'b0}}}) >>> (PW - YW);
  wire signed [PW-1:0] hr = $signed({h_re, {(PW - HW) {1'b0}}}) >>> (PW - HW);
  wire signed [PW-1:0] hi = $signed({h_im, {(PW - HW) {1'b0}}}) >>> (PW - HW);
  // y conj(h) = (yr + j yi)(hr - j hi).
  wire signed [PW-1:0] prod_re = yr * hr + yi * hi;
  wire signed [PW-1:0] prod_im = yi * hr - yr * hi;

  // Stage 1: the exact product and the flags that travel with it.
  reg signed [PW-1:0] s1_re, s1_im;
  reg s1_valid, s1_first, s1_last;

  // Stage 2: t = Q_acc(p) ...
  wire signed [AW-1:0] t_re, t_im;
  fxm_requant #(.IW(PW), .IF(PF), .OW(AW), .OF(AF), .RND(RND), .OVF(OVF))
      u_term_re (.x(s1_re), .y(t_re));
  fxm_requant #(.IW(PW), .IF(PF), .OW(AW), .OF(AF), .RND(RND), .OVF(OVF))
      u_term_im (.x(s1_im), .y(t_im));

  // ... then acc + t exactly in AW + 1 bits and the overflow stage of Q_acc (IF = OF: nothing
  // to round, only the range).
  reg signed [AW-1:0] acc_re, acc_im;
  wire signed [AW-1:0] from_re = s1_first ? {AW{1'b0}} : acc_re;
  wire signed [AW-1:0] from_im = s1_first ? {AW{1'b0}} : acc_im;
  wire signed [AW:0] exact_re = {from_re[AW-1], from_re} + {t_re[AW-1], t_re};
  wire signed [AW:0] exact_im = {from_im[AW-1], from_im} + {t_im[AW-1], t_im};
  wire signed [AW-1:0] upd_re, upd_im;
  fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(RND), .OVF(OVF))
      u_sum_re (.x(exact_re), .y(upd_re));
  fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(RND), .OVF(OVF))
      u_sum_im (.x(exact_im), .y(upd_im));

  always @(posedge clk) begin
    if (rst) begin
      s1_valid <= 1'b0;
      s1_first <= 1'b0;
      s1_last <= 1'b0;
      s1_re <= {PW{1'b0}};
      s1_im <= {PW{1'b0}};
      acc_re <= {AW{1'b0}};
      acc_im <= {AW{1'b0}};
      out_valid <= 1'b0;
      z_re <= {AW{1'b0}};
      z_im <= {AW{1'b0}};
    end else begin
      s1_valid <= in_valid;
      s1_first <= in_valid & in_first;
      s1_last <= in_valid & in_last;
      if (in_valid) begin
        s1_re <= prod_re;
        s1_im <= prod_im;
      end
      if (s1_valid) begin
        acc_re <= upd_re;
        acc_im <= upd_im;
      end
      out_valid <= s1_valid & s1_last;
      if (s1_valid & s1_last) begin
        z_re <= upd_re;
        z_im <= upd_im;
      end
    end
  end
endmodule

`default_nettype wire
