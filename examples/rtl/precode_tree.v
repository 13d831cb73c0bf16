// precode_tree: the precoding sum of the fxmimo datapath (nodes tx_acc and dac) as an adder
// tree: all K terms of one (antenna m, symbol n) sum arrive together on one clock and are added
// in the "pairwise" accumulation order. Definition, per real and imaginary part:
//   p_k   = weights[m,k] * symbols[k,n]     exact: re = wr sr - wi si, im = wr si + wi sr,
//                                            WF + SF fraction bits, WW + SW + 1 bits
//   level 0: v_k = Q_acc(p_k), k = 0..K-1   round to AF fraction bits by ACC_RND, then overflow
//                                            by ACC_OVF into AW bits
//   each next level, from the list v_0..v_{n-1}:
//            u_j = OV_acc(v_{2j} + v_{2j+1}), j = 0..floor(n/2)-1
//                                            the sum of two AW-bit words is exact in AW + 1 bits;
//                                            only the overflow stage of the tx_acc target applies
//                                            (no rounding: the fraction bits agree)
//            if n is odd, the last element v_{n-1} is passed up unchanged as u_{floor(n/2)}
//   repeat until one value remains: that is tx_acc (for K = 1, tx_acc = Q_acc(p_0))
//   dac   = Q_dac(tx_acc)                    requantise to dac (DW, DF, DAC_RND, DAC_OVF)
// Saturation or wrap at an adder of the tree happens where that adder sits, so the result can
// differ from the sequential order of precode_mac whenever an intermediate sum overflows.
// On the clock after in_valid, out_valid is high for one cycle with tx_acc in acc_re/acc_im and
// the DAC word in dac_re/dac_im. Term k of a flattened bus is bits [k*WW +: WW] (weights) or
// [k*SW +: SW] (symbols). Rounding and overflow codes as in fxm_requant.v. Synthesizable
// Verilog-2005 (IEEE 1364-2005), signed formats only; the tree is combinational between the
// input and the output register.
`timescale 1ns / 1ps
`default_nettype none

module precode_tree #(
    parameter integer K = 4,    // terms per sum, 1..64
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
    input  wire                 in_valid,  // all K terms of one sum are on the buses
    input  wire [K*WW-1:0]      w_re,      // term k: bits [k*WW +: WW]
    input  wire [K*WW-1:0]      w_im,
    input  wire [K*SW-1:0]      s_re,      // term k: bits [k*SW +: SW]
    input  wire [K*SW-1:0]      s_im,
    output reg                  out_valid,
    output reg  signed [AW-1:0] acc_re,
    output reg  signed [AW-1:0] acc_im,
    output reg  signed [DW-1:0] dac_re,
    output reg  signed [DW-1:0] dac_im
);
  // Width of an exact product part, as in precode_mac: wr sr - wi si reaches 2^(WW+SW-1).
  localparam integer PW = WW + SW + 1;

  // Length of the list at tree level lvl: K at level 0, then ceil(n / 2) per level.
  function integer level_len(input integer n0, input integer lvl);
    integer i, n;
    begin
      n = n0;
      for (i = 0; i < lvl; i = i + 1) n = (n + 1) / 2;
      level_len = n;
    end
  endfunction

  // Number of adder levels: ceil(log2(K)), 0 for K = 1.
  function integer adder_levels(input integer n0);
    integer n, l;
    begin
      n = n0;
      l = 0;
      while (n > 1) begin
        n = (n + 1) / 2;
        l = l + 1;
      end
      adder_levels = l;
    end
  endfunction

  localparam integer L = adder_levels(K);

  generate
    if (K < 1 || K > 64) begin : g_bad_k
      // Elaboration stops here: K must lie in 1..64.
      precode_tree_needs_K_in_1_to_64 u_bad_k ();
    end
  endgenerate

  // g_lvl[l].v_re / v_im hold the list of level l, element j in bits [j*AW +: AW]. Each level
  // reads only the level below it (a constant-index hierarchical name, 1364-2005 12.4/12.5).
  genvar l, j;
  generate
    for (l = 0; l <= L; l = l + 1) begin : g_lvl
      localparam integer NL = level_len(K, l);
      wire [NL*AW-1:0] v_re;
      wire [NL*AW-1:0] v_im;
      if (l == 0) begin : g_leaves
        for (j = 0; j < K; j = j + 1) begin : g_term
          // Term j sign-extended to PW bits by hand so that each product is PW bits wide with
          // every operand signed (1364-2005 5.4.1, 5.5.1; part-selects are unsigned).
          wire signed [WW-1:0] w_re_j = w_re[j*WW +: WW];
          wire signed [WW-1:0] w_im_j = w_im[j*WW +: WW];
          wire signed [SW-1:0] s_re_j = s_re[j*SW +: SW];
          wire signed [SW-1:0] s_im_j = s_im[j*SW +: SW];
          wire signed [PW-1:0] wr = {{(PW - WW) {w_re_j[WW-1]}}, w_re_j};
          wire signed [PW-1:0] wi = {{(PW - WW) {w_im_j[WW-1]}}, w_im_j};
          wire signed [PW-1:0] sr = {{(PW - SW) {s_re_j[SW-1]}}, s_re_j};
          wire signed [PW-1:0] si = {{(PW - SW) {s_im_j[SW-1]}}, s_im_j};
          wire signed [PW-1:0] p_re = wr * sr - wi * si;
          wire signed [PW-1:0] p_im = wr * si + wi * sr;
          // v_j = Q_acc(p_j)
          fxm_requant #(.IW(PW), .IF(WF + SF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
              u_q_re (.x(p_re), .y(v_re[j*AW +: AW]));
          fxm_requant #(.IW(PW), .IF(WF + SF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
              u_q_im (.x(p_im), .y(v_im[j*AW +: AW]));
        end
      end else begin : g_adders
        localparam integer NB = level_len(K, l - 1);  // length of the list below
        for (j = 0; j < NB / 2; j = j + 1) begin : g_pair
          wire signed [AW-1:0] a_re = g_lvl[l-1].v_re[(2*j)*AW +: AW];
          wire signed [AW-1:0] a_im = g_lvl[l-1].v_im[(2*j)*AW +: AW];
          wire signed [AW-1:0] b_re = g_lvl[l-1].v_re[(2*j+1)*AW +: AW];
          wire signed [AW-1:0] b_im = g_lvl[l-1].v_im[(2*j+1)*AW +: AW];
          // v_{2j} + v_{2j+1} exactly in AW + 1 bits, then the overflow stage of Q_acc (the
          // fraction bits agree, so fxm_requant drops none and ACC_RND has no effect here).
          wire signed [AW:0] sum_re = {a_re[AW-1], a_re} + {b_re[AW-1], b_re};
          wire signed [AW:0] sum_im = {a_im[AW-1], a_im} + {b_im[AW-1], b_im};
          fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
              u_ov_re (.x(sum_re), .y(v_re[j*AW +: AW]));
          fxm_requant #(.IW(AW + 1), .IF(AF), .OW(AW), .OF(AF), .RND(ACC_RND), .OVF(ACC_OVF))
              u_ov_im (.x(sum_im), .y(v_im[j*AW +: AW]));
        end
        if (NB % 2 == 1) begin : g_pass
          // Odd list: the last element goes up unchanged as the last element of this level.
          assign v_re[(NL-1)*AW +: AW] = g_lvl[l-1].v_re[(NB-1)*AW +: AW];
          assign v_im[(NL-1)*AW +: AW] = g_lvl[l-1].v_im[(NB-1)*AW +: AW];
        end
      end
    end
  endgenerate

  // The root: the only element of the top level.
  wire signed [AW-1:0] root_re = g_lvl[L].v_re;
  wire signed [AW-1:0] root_im = g_lvl[L].v_im;

  // dac = Q_dac(tx_acc)
  wire signed [DW-1:0] dac_next_re, dac_next_im;
  fxm_requant #(.IW(AW), .IF(AF), .OW(DW), .OF(DF), .RND(DAC_RND), .OVF(DAC_OVF))
      u_dac_re (.x(root_re), .y(dac_next_re));
  fxm_requant #(.IW(AW), .IF(AF), .OW(DW), .OF(DF), .RND(DAC_RND), .OVF(DAC_OVF))
      u_dac_im (.x(root_im), .y(dac_next_im));

  always @(posedge clk) begin
    if (rst) begin
      out_valid <= 1'b0;
      acc_re <= {AW{1'b0}};
      acc_im <= {AW{1'b0}};
      dac_re <= {DW{1'b0}};
      dac_im <= {DW{1'b0}};
    end else begin
      out_valid <= in_valid;
      if (in_valid) begin
        acc_re <= root_re;
        acc_im <= root_im;
        dac_re <= dac_next_re;
        dac_im <= dac_next_im;
      end
    end
  end
endmodule

`default_nettype wire
