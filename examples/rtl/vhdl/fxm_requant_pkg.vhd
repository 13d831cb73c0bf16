-- fxm_requant_pkg: bring a signed word x (x'length bits, X_FRAC fraction bits) into a signed
-- format (Y_WIDTH bits, Y_FRAC fraction bits), exactly as the fxmimo model does (README "How it
-- computes"): first round away the dropped fraction bits by RND, then handle overflow by OVF.
-- The VHDL-2008 twin of ../fxm_requant.v, written as a pure function so that a design calls it
-- where it needs it; with constant arguments it is combinational logic (synthesizable
-- IEEE 1076-2008 with ieee.numeric_std).
--
--   S = X_FRAC - Y_FRAC fraction bits are dropped (S > 0), none (S = 0) or appended (S < 0).
--   Rounding, on the exact value x / 2^S with q = floor(x / 2^S), rest = x - q 2^S, half = 2^(S-1):
--     RND 0 floor            q
--     RND 1 ceil             q + (rest /= 0)
--     RND 2 toward_zero      q + (x < 0 and rest /= 0)
--     RND 3 half_up          q + (rest >= half)                   ties toward +inf
--     RND 4 half_down        q + (rest >  half)                   ties toward -inf
--     RND 5 half_toward_zero q + (rest > half or rest = half and x < 0)
--     RND 6 half_away        q + (rest > half or rest = half and x >= 0)
--     RND 7 half_even        q + (rest > half or rest = half and q odd)
--   Overflow into Y_WIDTH bits, range [-2^(Y_WIDTH-1), 2^(Y_WIDTH-1)-1]:
--     OVF 0 wrap (keep the Y_WIDTH low bits)  1 saturate  2 saturate_symmetric (clip to +-max;
--     the word -2^(Y_WIDTH-1) also becomes -max)  3 saturate_zero (an overflowing value becomes 0).
-- Limits: 0 <= S < x'length when dropping, Y_WIDTH >= 2 (as the Verilog block).
--
-- numeric_std points this relies on: a slice of a SIGNED is a SIGNED (no cast back needed, unlike
-- a Verilog part-select); RESIZE of a SIGNED to fewer bits keeps the sign bit and the low bits,
-- which is not wrapping, so the wrap result is a slice, never a RESIZE.
library ieee;
use ieee.std_logic_1164.all;
use ieee.numeric_std.all;

package fxm_requant_pkg is
  -- Rounding codes (RND) and overflow codes (OVF), as in ../fxm_requant.v.
  constant RND_FLOOR            : natural := 0;
  constant RND_CEIL             : natural := 1;
  constant RND_TOWARD_ZERO      : natural := 2;
  constant RND_HALF_UP          : natural := 3;
  constant RND_HALF_DOWN        : natural := 4;
  constant RND_HALF_TOWARD_ZERO : natural := 5;
  constant RND_HALF_AWAY        : natural := 6;
  constant RND_HALF_EVEN        : natural := 7;
  constant OVF_WRAP             : natural := 0;
  constant OVF_SATURATE         : natural := 1;
  constant OVF_SATURATE_SYM     : natural := 2;
  constant OVF_SATURATE_ZERO    : natural := 3;

  -- The requantised word, Y_WIDTH bits, indexed (Y_WIDTH-1 downto 0).
  function fxm_requant(x       : signed;
                       X_FRAC  : integer;
                       Y_WIDTH : positive;
                       Y_FRAC  : integer;
                       RND     : natural;
                       OVF     : natural) return signed;
end package fxm_requant_pkg;

package body fxm_requant_pkg is
  -- Equal bit patterns, by the predefined "=" of STD_LOGIC_VECTOR. numeric_std's "=" on SIGNED
  -- warns about every metavalue, and at time 0, before the first delta cycle has carried the
  -- initial values through, a design's combinational signals are still 'U'; the predefined
  -- "=" just says false. In hardware the two are the same comparator.
  function same_bits(a, b : signed) return boolean is
  begin
    return std_logic_vector(a) = std_logic_vector(b);
  end function same_bits;

  -- Width of the rounded value: the kept bits plus one for the carry of rounding up.
  function rounded_width(x_width : positive; s : integer) return positive is
  begin
    if s > 0 then
      return x_width - s + 1;
    else
      return x_width - s;
    end if;
  end function rounded_width;

  function fxm_requant(x       : signed;
                       X_FRAC  : integer;
                       Y_WIDTH : positive;
                       Y_FRAC  : integer;
                       RND     : natural;
                       OVF     : natural) return signed is
    constant XW    : positive := x'length;
    constant S     : integer  := X_FRAC - Y_FRAC;
    constant RW    : positive := rounded_width(XW, S);
    constant MIN_W : signed(Y_WIDTH-1 downto 0) := '1' & signed'(Y_WIDTH-2 downto 0 => '0');
    constant MAX_W : signed(Y_WIDTH-1 downto 0) := not MIN_W;
    -- -max = -(2^(Y_WIDTH-1) - 1): the most negative word plus one.
    constant NEG_MAX_W : signed(Y_WIDTH-1 downto 0) := MIN_W + 1;
    variable xn       : signed(XW-1 downto 0);
    variable r        : signed(RW-1 downto 0);
    variable neg      : boolean;
    variable q_odd    : boolean;
    variable half     : boolean;  -- the top dropped bit, worth half an output LSB
    variable below_nz : boolean;  -- some dropped bit under the half bit is set
    variable rest_nz  : boolean;
    variable above    : boolean;  -- rest > half
    variable tie      : boolean;  -- rest = half
    variable up       : boolean;
    variable low      : signed(Y_WIDTH-1 downto 0);
    variable fits     : boolean;
    variable y        : signed(Y_WIDTH-1 downto 0);
  begin
    assert S < XW
      report "fxm_requant: X_FRAC - Y_FRAC must be below the input width (this block keeps at least one bit)"
      severity failure;
    assert Y_WIDTH >= 2 report "fxm_requant: Y_WIDTH must be at least 2" severity failure;
    assert RND <= 7 and OVF <= 3 report "fxm_requant: RND is 0..7, OVF 0..3" severity failure;
    xn := x;  -- whatever the caller's index range, from here on (XW-1 downto 0)

    -- Rounding.
    if S > 0 then
      neg := xn(XW-1) = '1';
      q_odd := xn(S) = '1';
      half := xn(S-1) = '1';
      below_nz := false;
      for i in 0 to S-2 loop  -- a null loop for S = 1
        if xn(i) = '1' then
          below_nz := true;
        end if;
      end loop;
      rest_nz := half or below_nz;
      above := half and below_nz;
      tie := half and not below_nz;
      case RND is
        when RND_CEIL             => up := rest_nz;
        when RND_TOWARD_ZERO      => up := neg and rest_nz;
        when RND_HALF_UP          => up := above or tie;
        when RND_HALF_DOWN        => up := above;
        when RND_HALF_TOWARD_ZERO => up := above or (tie and neg);
        when RND_HALF_AWAY        => up := above or (tie and not neg);
        when RND_HALF_EVEN        => up := above or (tie and q_odd);
        when others               => up := false;  -- floor
      end case;
      -- q = floor(x / 2^S): the kept bits, sign-extended by one for the carry.
      r := resize(xn(XW-1 downto S), RW);
      if up then
        r := r + 1;
      end if;
    elsif S = 0 then
      r := xn;
    else
      r := shift_left(resize(xn, RW), -S);  -- appended zero fraction bits
    end if;

    -- Overflow.
    if RW > Y_WIDTH then
      low := r(Y_WIDTH-1 downto 0);
      -- r fits Y_WIDTH bits iff sign-extending its Y_WIDTH low bits gives r back (its bits
      -- RW-1 .. Y_WIDTH-1 are all equal).
      fits := same_bits(resize(low, RW), r);
      if fits then
        y := low;
        if OVF = OVF_SATURATE_SYM and same_bits(low, MIN_W) then
          y := NEG_MAX_W;
        end if;
      else
        case OVF is
          when OVF_WRAP => y := low;
          when OVF_SATURATE | OVF_SATURATE_SYM =>
            if r(RW-1) = '0' then
              y := MAX_W;
            elsif OVF = OVF_SATURATE then
              y := MIN_W;
            else
              y := NEG_MAX_W;
            end if;
          when others => y := (others => '0');  -- saturate_zero
        end case;
      end if;
    else
      -- No overflow is possible: sign-extend.
      y := resize(r, Y_WIDTH);
      if OVF = OVF_SATURATE_SYM and same_bits(y, MIN_W) then
        y := NEG_MAX_W;
      end if;
    end if;
    return y;
  end function fxm_requant;
end package body fxm_requant_pkg;
