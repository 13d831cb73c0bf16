// fxm_requant: bring a word x (IW bits, IF fraction bits) into a format of OW bits and OF
// fraction bits, exactly as the fxmimo model does (README "How it computes"): first round away
// the dropped fraction bits by RND, then handle overflow by OVF. IS and OS say whether the input
// and the output format are signed (1, the default: Qm.n in two's complement) or unsigned (0:
// UQm.n, plain binary). Combinational, synthesizable Verilog-2005 (IEEE 1364-2005).
//
//   S = IF - OF fraction bits are dropped (S > 0), none (S = 0) or appended (S < 0).
//   Rounding, on the exact value x / 2^S with q = floor(x / 2^S), rest = x - q 2^S, half = 2^(S-1):
//     RND 0 floor            q
//     RND 1 ceil             q + (rest != 0)
//     RND 2 toward_zero      q + (x < 0 && rest != 0)
//     RND 3 half_up          q + (rest >= half)                   ties toward +inf
//     RND 4 half_down        q + (rest >  half)                   ties toward -inf
//     RND 5 half_toward_zero q + (rest > half || rest == half && x < 0)
//     RND 6 half_away        q + (rest > half || rest == half && x >= 0)
//     RND 7 half_even        q + (rest > half || rest == half && q odd)
//   (An unsigned x is never negative: there toward_zero is floor, half_toward_zero is
//   half_down and half_away is half_up.)
//   Overflow into OW bits, range [-2^(OW-1), 2^(OW-1)-1] (OS = 1) or [0, 2^OW - 1] (OS = 0):
//     OVF 0 wrap (keep the OW low bits)  1 saturate  2 saturate_symmetric (clip to +-max; the
//     word -2^(OW-1) also becomes -max)  3 saturate_zero (an overflowing value becomes 0).
//   Into an unsigned format a value below 0 (a negative signed x, after rounding) overflows
//   like one above the maximum: wrap keeps its OW low bits (x mod 2^OW), saturate gives 0,
//   saturate_zero 0; saturate_symmetric is saturate there (the model clips to [0, max]: an
//   unsigned range has no -max and no lone most negative word).
// Limits: 0 <= S < IW when dropping (the model also handles S >= IW; this block does not),
// OW >= 2 for a signed output, OW >= 1 for an unsigned one.
//
// The ports are declared signed whatever IS and OS say; with IS = 0 or OS = 0 they carry the
// unsigned bit pattern. Connect nets of exactly IW and OW bits then, so that no port connection
// extends a word (a signed port would extend it with its top bit).
//
// IEEE 1364-2005 points this relies on: part-selects are unsigned (5.5.1), so every slice that
// stands for a number is put back through a signed wire; concatenations are unsigned too, but
// they are only used where the bit pattern is the whole story (sign or zero extension, appended
// zeros).
`timescale 1ns / 1ps
`default_nettype none

module fxm_requant #(
    parameter integer IW = 33,
    parameter integer IF = 28,
    parameter integer OW = 24,
    parameter integer OF = 18,
    parameter integer RND = 7,
    parameter integer OVF = 1,
    parameter integer IS = 1,  // input format signed (1) or unsigned (0)
    parameter integer OS = 1   // output format signed (1) or unsigned (0)
) (
    input  wire signed [IW-1:0] x,
    output wire signed [OW-1:0] y
);
  localparam integer S = IF - OF;
  // xs: x as a signed number, XW bits. A signed x is taken as it is; an unsigned one gets a 0
  // on top, so that everything below handles a single signed case.
  localparam integer XW = (IS != 0) ? IW : IW + 1;
  // Width of the rounded value: the kept bits plus one for the carry of rounding up.
  localparam integer RW = (S > 0) ? XW - S + 1 : XW - S;

  wire signed [XW-1:0] xs;
  wire signed [RW-1:0] r;

  generate
    if (IS != 0) begin : g_in_signed
      assign xs = x;
    end else begin : g_in_unsigned
      assign xs = {1'b0, x};
    end
  endgenerate

  generate
    if (S >= IW) begin : g_unsupported
      // Elaboration stops here: this block keeps at least one bit of x (see Limits above).
      fxm_requant_needs_IF_minus_OF_below_IW u_unsupported ();
    end else if (S > 0) begin : g_drop
      wire [S-1:0] rest = xs[S-1:0];
      // rest against half = 2^(S-1): its top bit is the half bit; the bits below it (shifted
      // up, so that S = 1 needs no special case) say whether it lies above half.
      wire [S-1:0] below = rest << 1;
      wire neg = xs[XW-1];
      wire q_odd = xs[S];
      wire rest_nz = |rest;
      wire below_nz = |below;
      wire above = rest[S-1] & below_nz;
      wire tie = rest[S-1] & ~below_nz;
      wire up = (RND == 1) ? rest_nz :
                (RND == 2) ? (neg & rest_nz) :
                (RND == 3) ? (above | tie) :
                (RND == 4) ? above :
                (RND == 5) ? (above | (tie & neg)) :
                (RND == 6) ? (above | (tie & ~neg)) :
                (RND == 7) ? (above | (tie & q_odd)) :
                1'b0;  // floor
      // q = floor(x / 2^S): the kept bits, sign-extended by one for the carry.
      wire signed [RW-1:0] q = {xs[XW-1], xs[XW-1:S]};
      assign r = q + {{(RW - 1) {1'b0}}, up};
    end else if (S == 0) begin : g_keep
      assign r = xs;
    end else begin : g_append
      assign r = {xs, {(-S) {1'b0}}};
    end
  endgenerate

  generate
    if (OS != 0 && RW > OW) begin : g_narrow
      // r fits OW bits iff its bits RW-1 .. OW-1 are all equal.
      wire [RW-OW:0] top = r[RW-1:OW-1];
      wire fits = (&top) | ~(|top);
      wire over = ~r[RW-1] & ~fits;
      wire under = r[RW-1] & ~fits;
      wire [OW-1:0] low = r[OW-1:0];
      wire [OW-1:0] max_w = {1'b0, {(OW - 1) {1'b1}}};
      wire [OW-1:0] min_w = {1'b1, {(OW - 1) {1'b0}}};
      wire [OW-1:0] neg_max_w = {1'b1, {(OW - 2) {1'b0}}, 1'b1};
      assign y = (OVF == 0) ? low :
                 (OVF == 1) ? (over ? max_w : under ? min_w : low) :
                 (OVF == 2) ? (over ? max_w : (under | (low == min_w)) ? neg_max_w : low) :
                 ((over | under) ? {OW{1'b0}} : low);
    end else if (OS != 0) begin : g_wide
      // No overflow is possible; sign-extend (r is signed, 1364-2005 5.5.1 does not apply).
      wire signed [OW-1:0] ext = {{(OW - RW) {r[RW-1]}}, r};
      wire [OW-1:0] min_w = {1'b1, {(OW - 1) {1'b0}}};
      wire [OW-1:0] neg_max_w = {1'b1, {(OW - 2) {1'b0}}, 1'b1};
      assign y = (OVF == 2 && ext == $signed(min_w)) ? neg_max_w : ext;
    end else if (RW > OW) begin : g_unarrow
      // Unsigned output: r fits iff it is not negative and its bits RW-2 .. OW are all 0.
      wire [RW-OW-1:0] top = r[RW-1:OW];
      wire under = r[RW-1];
      wire over = ~under & (|top);
      wire [OW-1:0] low = r[OW-1:0];
      assign y = (OVF == 0) ? low :
                 (OVF == 3) ? ((over | under) ? {OW{1'b0}} : low) :
                 (over ? {OW{1'b1}} : under ? {OW{1'b0}} : low);  // 1 and 2: clip to [0, max]
    end else begin : g_uwide
      // Unsigned output at least as wide as r: nothing lies above the maximum; a negative r
      // is below 0. Its OW low bits (the wrap) are r sign-extended to OW bits.
      wire under = r[RW-1];
      wire [OW-1:0] ext = {{(OW - RW) {r[RW-1]}}, r};
      assign y = (OVF == 0) ? ext : (under ? {OW{1'b0}} : ext);
    end
  endgenerate
endmodule

`default_nettype wire
