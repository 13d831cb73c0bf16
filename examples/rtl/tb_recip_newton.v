// Testbench for recip_newton: reads a vector set with $readmemh (the LDL^H diagonal d_j from
// inv_diag_recip.in.ldl_acc.re.hex, [trial, user, user], and each trial's seed ROM from
// recip_rom.out.hex, [trial, rom_entry]), drives every d_j through the unit and writes its words
// in the vector-set hex form with $fwrite "%h" (IEEE 1364-2005 17.1.1.3: exactly ceil(W/4)
// zero-padded digits of the bit pattern), one word per line, trial by trial, user by user:
//   recip_mant.hex [trial, user], recip_prod.hex and recip_iter.hex [trial, user, newton_step],
//   inv_diag_recip.hex [trial, user]
//   +vec=DIR   the vector set;  +out=DIR   where the dumps are written
// Sizes, formats and modes are parameters (iverilog -Ptb.NAME=V, verilator -GNAME=V). Planted bug
// for the negative test: FORCE_TRUNCATE builds the products' requantisation with floor rounding.
`timescale 1ns / 1ps
`default_nettype none

module tb;
  parameter integer T = 1;  // trials
  parameter integer K = 8;  // users
  parameter integer DW = 24;
  parameter integer DF = 16;
  parameter integer SA = 6;
  parameter integer N = 1;
  parameter integer MW = 16;
  parameter integer MF = 15;
  parameter integer M_RND = 7;
  parameter integer M_OVF = 1;
  parameter integer RW = 12;
  parameter integer RF = 11;
  parameter integer PW = 18;
  parameter integer PF = 17;
  // P_RND goes unused when FORCE_TRUNCATE overrides it.
  // verilator lint_off UNUSEDPARAM
  parameter integer P_RND = 7;
  // verilator lint_on UNUSEDPARAM
  parameter integer P_OVF = 1;
  parameter integer XW = 18;
  parameter integer XF = 16;
  parameter integer X_RND = 7;
  parameter integer X_OVF = 1;
  parameter integer OW = 18;
  parameter integer OF = 17;
  parameter integer O_RND = 7;
  parameter integer O_OVF = 1;
`ifdef FORCE_TRUNCATE
  localparam integer P_RND_RTL = 0;
`else
  localparam integer P_RND_RTL = P_RND;
`endif
  localparam integer ENTRIES = 1 << SA;

  reg [DW-1:0] d = {DW{1'b0}};
  wire [SA-1:0] rom_addr;
  wire [RW-1:0] rom_data;
  wire [MW-1:0] mant;
  wire [N*PW-1:0] prods;
  wire [N*XW-1:0] iters;
  wire [OW-1:0] y;

  recip_newton #(
      .DW(DW), .DF(DF), .SA(SA), .N(N), .MW(MW), .MF(MF), .M_RND(M_RND), .M_OVF(M_OVF), .RW(RW), .RF(RF),
      .PW(PW), .PF(PF), .P_RND(P_RND_RTL), .P_OVF(P_OVF), .XW(XW), .XF(XF), .X_RND(X_RND), .X_OVF(X_OVF),
      .OW(OW), .OF(OF), .O_RND(O_RND), .O_OVF(O_OVF)
  ) dut (
      .d(d), .rom_addr(rom_addr), .rom_data(rom_data), .mant(mant), .prods(prods), .iters(iters), .y(y)
  );

  reg [DW-1:0] ldl_acc[0:T*K*K-1];
  reg [RW-1:0] rom[0:T*ENTRIES-1];
  integer rom_base = 0;
  assign rom_data = rom[rom_base+{{(32 - SA) {1'b0}}, rom_addr}];

  reg [8*512-1:0] vec_dir;
  reg [8*512-1:0] out_dir;
  reg [8*600-1:0] path;
  integer fd_mant, fd_prod, fd_iter, fd_out;
  integer i_trial, i_user, i_step;

  initial begin
    if (!$value$plusargs("vec=%s", vec_dir) || !$value$plusargs("out=%s", out_dir)) begin
      $display("tb: usage: +vec=VECTOR_SET_DIR +out=DUMP_DIR");
      $finish;
    end
    $sformat(path, "%0s/inv_diag_recip.in.ldl_acc.re.hex", vec_dir);
    $readmemh(path, ldl_acc);
    $sformat(path, "%0s/recip_rom.out.hex", vec_dir);
    $readmemh(path, rom);
    $sformat(path, "%0s/recip_mant.hex", out_dir);
    fd_mant = $fopen(path, "w");
    $sformat(path, "%0s/recip_prod.hex", out_dir);
    fd_prod = $fopen(path, "w");
    $sformat(path, "%0s/recip_iter.hex", out_dir);
    fd_iter = $fopen(path, "w");
    $sformat(path, "%0s/inv_diag_recip.hex", out_dir);
    fd_out = $fopen(path, "w");
    if (fd_mant == 0 || fd_prod == 0 || fd_iter == 0 || fd_out == 0) begin
      $display("tb: cannot open the dump files in %0s", out_dir);
      $finish;
    end
    for (i_trial = 0; i_trial < T; i_trial = i_trial + 1) begin
      rom_base = i_trial * ENTRIES;
      for (i_user = 0; i_user < K; i_user = i_user + 1) begin
        d = ldl_acc[(i_trial*K+i_user)*K+i_user];
        #1;
        $fwrite(fd_mant, "%h\n", mant);
        for (i_step = 0; i_step < N; i_step = i_step + 1) begin
          $fwrite(fd_prod, "%h\n", prods[i_step*PW+:PW]);
          $fwrite(fd_iter, "%h\n", iters[i_step*XW+:XW]);
        end
        $fwrite(fd_out, "%h\n", y);
      end
    end
    $fclose(fd_mant);
    $fclose(fd_prod);
    $fclose(fd_iter);
    $fclose(fd_out);
    $finish;
  end
endmodule

`default_nettype wire
