-- precode_mac: the precoding accumulator of the fxmimo datapath (nodes tx_acc and dac), one
-- complex multiply-accumulate per clock; the VHDL-2008 twin of ../precode_mac.v, with the same
-- generics, ports and timing. For one antenna m and symbol n the caller streams the K terms
-- k = 0..K-1 in index order (in_first on k = 0, in_last on k = K-1), and the block computes
-- exactly what the model defines (README "How it computes"):
--   p     = weights[m,k] * symbols[k,n]   exact: re = wr sr - wi si, im = wr si + wi sr,
--                                          WF + SF fraction bits, WW + SW + 1 bits
--   term  = Q_acc(p)                       requantise to tx_acc (AW, AF, ACC_RND, ACC_OVF)
--   acc   = Q_acc(acc + term)              (acc = 0 before k = 0)
--   dac   = Q_dac(acc)                     requantise tx_acc to dac (DW, DF, DAC_RND, DAC_OVF)
-- per real and imaginary part. On the clock after in_last, out_valid is high for one cycle with
-- tx_acc in acc_re/acc_im and the DAC word in dac_re/dac_im. Rounding and overflow codes as in
-- fxm_requant_pkg.vhd. Synthesizable VHDL-2008 (IEEE 1076-2008), ieee.numeric_std, signed
-- formats only.
library ieee;
use ieee.std_logic_1164.all;
use ieee.numeric_std.all;
use work.fxm_requant_pkg.all;

entity precode_mac is
  generic (
    WW      : positive := 16;  -- weights: word bits, fraction bits
    WF      : integer  := 14;
    SW      : positive := 12;  -- symbols
    SF      : integer  := 10;
    AW      : positive := 20;  -- tx_acc
    AF      : integer  := 14;
    DW      : positive := 12;  -- dac
    DF      : integer  := 9;
    ACC_RND : natural  := 7;
    ACC_OVF : natural  := 1;
    DAC_RND : natural  := 7;
    DAC_OVF : natural  := 1
  );
  port (
    clk       : in  std_logic;
    rst       : in  std_logic;  -- synchronous, active high
    in_valid  : in  std_logic;
    in_first  : in  std_logic;  -- first term of a sum (k = 0)
    in_last   : in  std_logic;  -- last term of a sum (k = K-1)
    w_re      : in  signed(WW-1 downto 0);
    w_im      : in  signed(WW-1 downto 0);
    s_re      : in  signed(SW-1 downto 0);
    s_im      : in  signed(SW-1 downto 0);
    out_valid : out std_logic;
    acc_re    : out signed(AW-1 downto 0);
    acc_im    : out signed(AW-1 downto 0);
    dac_re    : out signed(DW-1 downto 0);
    dac_im    : out signed(DW-1 downto 0)
  );
end entity precode_mac;

architecture rtl of precode_mac is
  -- Width of an exact product part: one product of full-range operands reaches
  -- (-2^(WW-1)) (-2^(SW-1)) = 2^(WW+SW-2); wr sr - wi si can reach twice that, 2^(WW+SW-1),
  -- which needs WW + SW + 1 signed bits. numeric_std's "*" of two SIGNED is exact
  -- (L'length + R'length bits), so each product is widened after the multiply, not before.
  constant PW : positive := WW + SW + 1;

  signal p_re, p_im         : signed(PW-1 downto 0);
  signal term_re, term_im   : signed(AW-1 downto 0);
  signal sum_re, sum_im     : signed(AW-1 downto 0) := (others => '0');  -- the accumulator registers
  signal base_re, base_im   : signed(AW-1 downto 0);
  signal wide_re, wide_im   : signed(AW downto 0);
  signal next_re, next_im   : signed(AW-1 downto 0);
  signal dnext_re, dnext_im : signed(DW-1 downto 0);
begin
  p_re <= resize(w_re * s_re, PW) - resize(w_im * s_im, PW);
  p_im <= resize(w_re * s_im, PW) + resize(w_im * s_re, PW);

  -- term = Q_acc(p)
  term_re <= fxm_requant(p_re, WF + SF, AW, AF, ACC_RND, ACC_OVF);
  term_im <= fxm_requant(p_im, WF + SF, AW, AF, ACC_RND, ACC_OVF);

  -- acc + term exactly, in AW + 1 bits, then the overflow stage of Q_acc (no bits dropped).
  base_re <= (others => '0') when in_first = '1' else sum_re;
  base_im <= (others => '0') when in_first = '1' else sum_im;
  wide_re <= resize(base_re, AW + 1) + resize(term_re, AW + 1);
  wide_im <= resize(base_im, AW + 1) + resize(term_im, AW + 1);
  next_re <= fxm_requant(wide_re, AF, AW, AF, ACC_RND, ACC_OVF);
  next_im <= fxm_requant(wide_im, AF, AW, AF, ACC_RND, ACC_OVF);

  -- dac = Q_dac(acc), from the final sum.
  dnext_re <= fxm_requant(next_re, AF, DW, DF, DAC_RND, DAC_OVF);
  dnext_im <= fxm_requant(next_im, AF, DW, DF, DAC_RND, DAC_OVF);

  regs : process (clk) is
  begin
    if rising_edge(clk) then
      if rst = '1' then
        sum_re <= (others => '0');
        sum_im <= (others => '0');
        out_valid <= '0';
        acc_re <= (others => '0');
        acc_im <= (others => '0');
        dac_re <= (others => '0');
        dac_im <= (others => '0');
      else
        out_valid <= in_valid and in_last;
        if in_valid = '1' then
          sum_re <= next_re;
          sum_im <= next_im;
        end if;
        if in_valid = '1' and in_last = '1' then
          acc_re <= next_re;
          acc_im <= next_im;
          dac_re <= dnext_re;
          dac_im <= dnext_im;
        end if;
      end if;
    end if;
  end process regs;
end architecture rtl;
