// recip_newton: the table + Newton-Raphson reciprocal unit of the fxmimo datapath (the node
// inv_diag_recip with [units.inv_diag_recip] kind = "newton", and its nodes recip_mant,
// recip_prod and recip_iter; the seed ROM recip_rom sits outside, behind rom_addr/rom_data, as
// a ROM macro would). Combinational; it computes exactly what the model defines (README "How it
// computes", "Divide and root units"):
//   A     = |d|, L = its bit length           (d signed, DW bits, DF fraction bits)
//   m     = Q_mant(A 2^-L)                    here: norm = A << (DW - L), read with DW fraction bits
//   i     = clamp(floor(m 2^(A+1)) - 2^A, 0, 2^A - 1)      (A the seed bits: parameter SA)
//   x_0   = rom[i]
//   p_k   = Q_prod(m x_k),  x_k+1 = Q_iter(x_k (2 - p_k)),  k = 0 .. N-1
//   y     = Q_out(sign(d) x_N 2^(DF - L))     here: x_N << (DW - L), read with XF + DW - DF
//                                              fraction bits, negated when d < 0
// d = 0 gives the model's overflow toward +infinity: the output's maximum under saturate and
// saturate_symmetric, 0 under wrap and saturate_zero; mant, the products and the iterates are 0.
// Rounding and overflow codes as in fxm_requant.v. Limits: the unit's own nodes unsigned (UQm.n,
// as they never hold a negative value); recip_prod with at most one integer bit (so 2 - p_k > 0);
// MF >= SA + 1 (the index bits lie in the mantissa's fraction); N >= 1; DW <= 255.
// Synthesizable Verilog-2005 (IEEE 1364-2005); every product is formed from operands extended to
// the product's width, so no expression depends on context-width rules (5.4.1) for its bits.
`timescale 1ns / 1ps
`default_nettype none

// One Newton step: p = Q_prod(m x), x_next = Q_iter(x (2 - p)).
module recip_newton_step #(
    parameter integer INW = 12,  // x_k: word bits, fraction bits (the ROM's for k = 0)
    parameter integer INF = 11,
    parameter integer MW = 16,
    parameter integer MF = 15,
    parameter integer PW = 18,
    parameter integer PF = 17,
    parameter integer P_RND = 7,
    parameter integer P_OVF = 1,
    parameter integer XW = 18,
    parameter integer XF = 16,
    parameter integer X_RND = 7,
    parameter integer X_OVF = 1
) (
    input  wire [ MW-1:0] m,
    input  wire [INW-1:0] x,
    output wire [ PW-1:0] p,
    output wire [ XW-1:0] x_next
);
  wire [MW+INW-1:0] mx = {{INW{1'b0}}, m} * {{MW{1'b0}}, x};
  fxm_requant #(.IW(MW + INW), .IF(MF + INF), .IS(0), .OW(PW), .OF(PF), .OS(0), .RND(P_RND), .OVF(P_OVF))
      u_p (.x(mx), .y(p));
  // 2 - p exactly at p's fraction bits, PW + 2 bits unsigned (positive: p < 2).
  wire [PW+1:0] one = {{(PW + 1){1'b0}}, 1'b1};
  wire [PW+1:0] two = one << (PF + 1);
  wire [PW+1:0] t = two - {2'b00, p};
  wire [INW+PW+1:0] xt = {{(PW + 2){1'b0}}, x} * {{INW{1'b0}}, t};
  fxm_requant #(.IW(INW + PW + 2), .IF(INF + PF), .IS(0), .OW(XW), .OF(XF), .OS(0), .RND(X_RND), .OVF(X_OVF))
      u_x (.x(xt), .y(x_next));
endmodule

module recip_newton #(
    parameter integer DW = 24,  // input d (signed): word bits, fraction bits
    parameter integer DF = 13,
    parameter integer SA = 6,   // seed bits: the ROM has 2^SA entries
    parameter integer N = 1,    // Newton steps, >= 1
    parameter integer MW = 16,  // recip_mant (unsigned)
    parameter integer MF = 15,
    parameter integer M_RND = 7,
    parameter integer M_OVF = 1,
    parameter integer RW = 12,  // recip_rom (unsigned)
    parameter integer RF = 11,
    parameter integer PW = 18,  // recip_prod (unsigned)
    parameter integer PF = 17,
    parameter integer P_RND = 7,
    parameter integer P_OVF = 1,
    parameter integer XW = 18,  // recip_iter (unsigned)
    parameter integer XF = 16,
    parameter integer X_RND = 7,
    parameter integer X_OVF = 1,
    parameter integer OW = 18,  // inv_diag_recip (signed)
    parameter integer OF = 22,
    parameter integer O_RND = 7,
    parameter integer O_OVF = 1
) (
    input  wire [  DW-1:0] d,
    output wire [  SA-1:0] rom_addr,
    input  wire [  RW-1:0] rom_data,
    output wire [  MW-1:0] mant,
    output wire [N*PW-1:0] prods,  // step k in bits [k PW +: PW]
    output wire [N*XW-1:0] iters,  // x_k+1 in bits [k XW +: XW]
    output wire [  OW-1:0] y
);
  // |d| in DW unsigned bits: the negation of -2^(DW-1) is the pattern 10...0, 2^(DW-1) unsigned.
  wire neg = d[DW-1];
  wire [DW-1:0] mag = neg ? (~d + {{(DW - 1) {1'b0}}, 1'b1}) : d;

  function [7:0] bit_length(input [DW-1:0] v);
    integer i;
    begin
      bit_length = 8'd0;
      for (i = 0; i < DW; i = i + 1) if (v[i]) bit_length = i[7:0] + 8'd1;
    end
  endfunction
  wire [7:0] len = bit_length(mag);
  wire zero = (len == 8'd0);
  wire [7:0] up = DW[7:0] - len;  // the normalising shift, 0 .. DW

  // m = Q_mant(norm 2^-DW): the same value as A 2^-L.
  wire [DW-1:0] norm = mag << up;
  fxm_requant #(.IW(DW), .IF(DW), .IS(0), .OW(MW), .OF(MF), .OS(0), .RND(M_RND), .OVF(M_OVF))
      u_mant (.x(norm), .y(mant));

  // The ROM index: floor(m 2^(SA+1)) is m without its lowest MF - SA - 1 bits.
  wire [MW-1:0] top = mant >> (MF - SA - 1);
  wire [MW:0] low_limit = {{MW{1'b0}}, 1'b1} << SA;
  wire [MW:0] high_limit = {{MW{1'b0}}, 1'b1} << (SA + 1);
  wire [SA-1:0] all_ones = {SA{1'b1}};
  assign rom_addr = ({1'b0, top} < low_limit) ? {SA{1'b0}} : ({1'b0, top} >= high_limit) ? all_ones : top[SA-1:0];

  wire [N*PW-1:0] p_all;
  wire [N*XW-1:0] x_all;
  genvar k;
  generate
    for (k = 0; k < N; k = k + 1) begin : g_step
      if (k == 0) begin : g_first
        recip_newton_step #(.INW(RW), .INF(RF), .MW(MW), .MF(MF), .PW(PW), .PF(PF), .P_RND(P_RND), .P_OVF(P_OVF),
                            .XW(XW), .XF(XF), .X_RND(X_RND), .X_OVF(X_OVF))
            u_step (.m(mant), .x(rom_data), .p(p_all[PW-1:0]), .x_next(x_all[XW-1:0]));
      end else begin : g_next
        recip_newton_step #(.INW(XW), .INF(XF), .MW(MW), .MF(MF), .PW(PW), .PF(PF), .P_RND(P_RND), .P_OVF(P_OVF),
                            .XW(XW), .XF(XF), .X_RND(X_RND), .X_OVF(X_OVF))
            u_step (.m(mant), .x(x_all[(k-1)*XW +: XW]), .p(p_all[k*PW +: PW]), .x_next(x_all[k*XW +: XW]));
      end
    end
  endgenerate
  assign prods = zero ? {(N * PW) {1'b0}} : p_all;
  assign iters = zero ? {(N * XW) {1'b0}} : x_all;

  // Denormalise: x_N 2^(DW - L) read with XF + DW - DF fraction bits, its sign put back.
  wire [XW-1:0] xn = x_all[(N-1)*XW +: XW];
  wire [XW+DW-1:0] shifted = {{DW{1'b0}}, xn} << up;
  wire [XW+DW:0] magnitude = {1'b0, shifted};
  wire [XW+DW:0] signed_out = neg ? (~magnitude + {{(XW + DW) {1'b0}}, 1'b1}) : magnitude;
  wire [OW-1:0] rounded;
  fxm_requant #(.IW(XW + DW + 1), .IF(XF + DW - DF), .IS(1), .OW(OW), .OF(OF), .OS(1), .RND(O_RND), .OVF(O_OVF))
      u_out (.x(signed_out), .y(rounded));
  wire [OW-1:0] infinity = (O_OVF == 1 || O_OVF == 2) ? {1'b0, {(OW - 1) {1'b1}}} : {OW{1'b0}};
  assign y = zero ? infinity : rounded;
endmodule

`default_nettype wire
