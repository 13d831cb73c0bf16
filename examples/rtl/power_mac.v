// power_mac: the power accumulator of the fxmimo datapath (node power_acc), one term per clock.
// The caller streams the complex weights of one sum in index order (in_first on the first
// term, in_last on the last): the K users of one antenna for per-antenna normalisation, or all
// M K weights, antenna by antenna, for the total. The block computes exactly what the model
// defines (README "How it computes"):
//   p     = wr^2 + wi^2              exact and never negative: 2 WF fraction bits, 2 WW bits
//                                    unsigned (the largest, 2 (-2^(WW-1))^2 = 2^(2WW-1), fits)
//   term  = Q_acc(p)                 requantise to power_acc (AW, AF, AS, ACC_RND, ACC_OVF)
//   acc   = Q_acc(acc + term)        (acc = 0 before the first term)
// power_acc is normally unsigned (AS = 0, UQm.n, range [0, 2^AW - 1]); AS = 1 takes a signed
// accumulator format as well. Rounding and overflow codes as in fxm_requant.v; into an unsigned
// format saturate_symmetric is saturate. On the clock after in_last, out_valid is high for one
// cycle with the sum in acc. Synthesizable Verilog-2005 (IEEE 1364-2005). Limit: 2 WF - AF < 2 WW
// (fxm_requant keeps at least one bit of p).
`timescale 1ns / 1ps
`default_nettype none

module power_mac #(
    parameter integer WW = 16,  // weights (signed): word bits, fraction bits
    parameter integer WF = 14,
    parameter integer AW = 20,  // power_acc: word bits, fraction bits, signedness
    parameter integer AF = 14,
    parameter integer AS = 0,
    parameter integer ACC_RND = 7,
    parameter integer ACC_OVF = 1
) (
    input  wire                 clk,
    input  wire                 rst,       // synchronous, active high
    input  wire                 in_valid,
    input  wire                 in_first,  // first term of a sum
    input  wire                 in_last,   // last term of a sum
    input  wire signed [WW-1:0] w_re,
    input  wire signed [WW-1:0] w_im,
    output reg                  out_valid,
    output reg         [AW-1:0] acc        // the power_acc word (unsigned pattern when AS = 0)
);
  localparam integer PW = 2 * WW;

  // |w| of each part as WW unsigned bits: the WW-bit negation of the most negative word,
  // -2^(WW-1), is the pattern 10...0, which read unsigned is 2^(WW-1), the right magnitude.
  wire [WW-1:0] neg_re = -w_re;
  wire [WW-1:0] neg_im = -w_im;
  wire [WW-1:0] mag_re = w_re[WW-1] ? neg_re : w_re;
  wire [WW-1:0] mag_im = w_im[WW-1] ? neg_im : w_im;
  // Squares and their sum in PW unsigned bits: every operand is unsigned and PW bits wide, so
  // the products are computed at PW bits (1364-2005 5.4.1) and nothing is sign-extended (5.5.1).
  wire [PW-1:0] m_re = {{WW{1'b0}}, mag_re};
  wire [PW-1:0] m_im = {{WW{1'b0}}, mag_im};
  wire [PW-1:0] p = m_re * m_re + m_im * m_im;

  // term = Q_acc(p): an unsigned source into the accumulator format.
  wire [AW-1:0] term;
  fxm_requant #(.IW(PW), .IF(2 * WF), .IS(0), .OW(AW), .OF(AF), .OS(AS), .RND(ACC_RND), .OVF(ACC_OVF))
      u_term (.x(p), .y(term));

  // acc + term exactly in AW + 1 bits (each word extended by its format: zeros when unsigned,
  // its sign bit when signed), then the overflow stage of Q_acc (no fraction bits dropped).
  reg [AW-1:0] sum;  // the accumulator register
  wire [AW-1:0] base = in_first ? {AW{1'b0}} : sum;
  wire base_top = (AS != 0) & base[AW-1];
  wire term_top = (AS != 0) & term[AW-1];
  wire [AW:0] wide = {base_top, base} + {term_top, term};
  wire [AW-1:0] next;
  fxm_requant #(.IW(AW + 1), .IF(AF), .IS(AS), .OW(AW), .OF(AF), .OS(AS), .RND(ACC_RND), .OVF(ACC_OVF))
      u_acc (.x(wide), .y(next));

  always @(posedge clk) begin
    if (rst) begin
      sum <= {AW{1'b0}};
      out_valid <= 1'b0;
      acc <= {AW{1'b0}};
    end else begin
      out_valid <= in_valid & in_last;
      if (in_valid) sum <= next;
      if (in_valid & in_last) acc <= next;
    end
  end
endmodule

`default_nettype wire
