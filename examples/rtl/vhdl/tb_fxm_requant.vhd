-- Testbench for fxm_requant_pkg.vhd alone: for every (input format, output format) pair of the
-- table below, every rounding code 0..7, every overflow code 0..3 and every input word x, it
-- prints one line to standard output
--   IW X_FRAC Y_WIDTH Y_FRAC RND OVF x y
-- (decimal integers, x and y the signed words), for a caller to hold against its own model.
-- The table reaches every branch of the function: dropping one bit, dropping all but one,
-- dropping some; keeping the fraction; appending bits; a rounded width above, equal to and
-- below the output width.
--   ghdl -a --std=08 fxm_requant_pkg.vhd tb_fxm_requant.vhd && ghdl --elab-run --std=08 tb_fxm_requant
library ieee;
use ieee.std_logic_1164.all;
use ieee.numeric_std.all;
use std.textio.all;
use work.fxm_requant_pkg.all;

entity tb_fxm_requant is
end entity tb_fxm_requant;

architecture sim of tb_fxm_requant is
  type pair is record
    iw, x_frac, y_width, y_frac : integer;
  end record pair;
  type pair_table is array (natural range <>) of pair;
  constant PAIRS : pair_table := (
    (6, 1, 3, 0),   -- drop 1 bit, rounded width 6 > 3
    (6, 3, 4, 1),   -- drop 2, 5 > 4
    (6, 4, 5, 2),   -- drop 2, 5 = 5: no overflow possible
    (6, 5, 2, 0),   -- drop 5 of 6, 2 = 2
    (5, 4, 2, 1),   -- drop 3, 3 > 2
    (7, 6, 3, 0),   -- drop 6 of 7, 2 < 3
    (6, 2, 4, 2),   -- keep, 6 > 4
    (6, 2, 8, 2),   -- keep, 6 < 8
    (6, 0, 7, 2),   -- append 2, 8 > 7
    (6, 0, 9, 2),   -- append 2, 8 < 9
    (4, 0, 2, -1)   -- drop 1 into a negative fraction count, 4 > 2
  );
begin
  run : process is
    variable l : line;
    variable y : integer;
  begin
    for p in PAIRS'range loop
      for rnd in 0 to 7 loop
        for ovf in 0 to 3 loop
          for x in -2**(PAIRS(p).iw - 1) to 2**(PAIRS(p).iw - 1) - 1 loop
            y := to_integer(fxm_requant(to_signed(x, PAIRS(p).iw), PAIRS(p).x_frac, PAIRS(p).y_width,
                                        PAIRS(p).y_frac, rnd, ovf));
            write(l, integer'image(PAIRS(p).iw) & " " & integer'image(PAIRS(p).x_frac) & " "
                     & integer'image(PAIRS(p).y_width) & " " & integer'image(PAIRS(p).y_frac) & " "
                     & integer'image(rnd) & " " & integer'image(ovf) & " " & integer'image(x) & " "
                     & integer'image(y));
            writeline(output, l);
          end loop;
        end loop;
      end loop;
    end loop;
    wait;
  end process run;
end architecture sim;
