-- Testbench for precode_mac.vhd: the VHDL-2008 twin of ../tb_precode_mac.v. It reads the
-- stimulus of a vector set with std.textio READLINE and ieee.std_logic_1164 HREAD, streams it
-- through the block and writes tx_acc and dac in the vector-set hex form (exactly ceil(W/4)
-- lower-case, zero-padded digits of the W-bit two's-complement pattern), one word per line,
-- antenna-major ([antenna, symbol]): byte for byte what the Verilog testbench writes.
--
--   VEC_DIR   vector set holding tx_acc.in.weights.{re,im}.hex ([antenna, user]) and
--             tx_acc.in.symbols.{re,im}.hex ([user, symbol])
--   OUT_DIR   where tx_acc_re.hex, tx_acc_im.hex, dac_re.hex, dac_im.hex are written
-- Sizes, formats and both directories are generics (ghdl -r --std=08 tb_precode_mac -gM=4
-- -gVEC_DIR=vec -gOUT_DIR=sim ...). FORCE_TRUNCATE => true builds the block with floor rounding
-- in both requantise stages: a deliberately wrong RTL for the negative test.
--
-- Reading a word of W bits: HREAD into a STD_LOGIC_VECTOR of 4*ceil(W/4) bits (all the digits
-- of the line), then the W low bits; the bits above must be zero (the files pad with zeros).
-- Not HREAD into a SIGNED: numeric_std's HREAD for SIGNED wants the padding to repeat the sign
-- bit and rejects every negative word of a width that is not a multiple of 4 (3fff for a
-- 14-bit -1). Any error in a file stops the run with a "tb:" message naming file and line.
library ieee;
use ieee.std_logic_1164.all;
use ieee.numeric_std.all;
use std.textio.all;

entity tb_precode_mac is
  generic (
    M       : positive := 4;  -- antennas
    K       : positive := 4;  -- users
    N       : positive := 8;  -- symbols
    WW      : positive := 16;
    WF      : integer  := 14;
    SW      : positive := 12;
    SF      : integer  := 10;
    AW      : positive := 20;
    AF      : integer  := 14;
    DW      : positive := 12;
    DF      : integer  := 9;
    ACC_RND : natural  := 7;
    ACC_OVF : natural  := 1;
    DAC_RND : natural  := 7;
    DAC_OVF : natural  := 1;
    FORCE_TRUNCATE : boolean := false;
    VEC_DIR : string := "vec";
    OUT_DIR : string := "sim"
  );
end entity tb_precode_mac;

architecture sim of tb_precode_mac is
  -- The rounding code the block is built with (VHDL-2008 has no conditional expression in a
  -- declaration, hence the function).
  function rtl_rounding(code : natural) return natural is
  begin
    if FORCE_TRUNCATE then
      return 0;  -- floor
    end if;
    return code;
  end function rtl_rounding;

  constant ACC_RND_RTL : natural := rtl_rounding(ACC_RND);
  constant DAC_RND_RTL : natural := rtl_rounding(DAC_RND);
  constant PERIOD : time := 10 ns;

  type weight_words is array (0 to M*K-1) of signed(WW-1 downto 0);
  type symbol_words is array (0 to K*N-1) of signed(SW-1 downto 0);

  signal clk       : std_logic := '0';
  signal done      : boolean   := false;
  signal rst       : std_logic := '1';
  signal in_valid  : std_logic := '0';
  signal in_first  : std_logic := '0';
  signal in_last   : std_logic := '0';
  signal w_re      : signed(WW-1 downto 0) := (others => '0');
  signal w_im      : signed(WW-1 downto 0) := (others => '0');
  signal s_re      : signed(SW-1 downto 0) := (others => '0');
  signal s_im      : signed(SW-1 downto 0) := (others => '0');
  signal out_valid : std_logic;
  signal acc_re    : signed(AW-1 downto 0);
  signal acc_im    : signed(AW-1 downto 0);
  signal dac_re    : signed(DW-1 downto 0);
  signal dac_im    : signed(DW-1 downto 0);
  signal num_out   : natural := 0;

  file f_acc_re, f_acc_im, f_dac_re, f_dac_im : text;

  -- One stimulus file: exactly COUNT lines of ceil(W/4) hex digits, W = result'length.
  impure function read_words(name : string; count : positive; w : positive) return signed is
    constant DIGITS : positive := (w + 3) / 4;
    constant path   : string   := VEC_DIR & "/" & name;
    file f          : text;
    variable status : file_open_status;
    variable l      : line;
    variable digits_read : std_logic_vector(4*DIGITS-1 downto 0);
    variable good   : boolean;
    variable words  : signed(count*w-1 downto 0);  -- word i in bits (i+1) w - 1 .. i w
    variable c      : character;
  begin
    file_open(status, f, path, read_mode);
    assert status = open_ok report "tb: cannot open " & path severity failure;
    for i in 0 to count - 1 loop
      assert not endfile(f)
        report "tb: " & path & " has " & integer'image(i) & " lines, " & integer'image(count) & " expected"
        severity failure;
      readline(f, l);
      hread(l, digits_read, good);
      assert good
        report "tb: " & path & ":" & integer'image(i + 1) & ": not " & integer'image(DIGITS) & " hex digits"
        severity failure;
      -- HREAD into a STD_LOGIC_VECTOR takes X and Z as digits too (four X or Z bits each).
      assert not is_x(digits_read)
        report "tb: " & path & ":" & integer'image(i + 1) & ": an X or Z digit in a stimulus word"
        severity failure;
      -- HREAD stops after the digits it needs: anything left but a CR (of a CR LF line end,
      -- where a simulator keeps it) means a longer word than this width.
      while l'length > 0 loop
        read(l, c);
        assert c = CR
          report "tb: " & path & ":" & integer'image(i + 1) & ": more than " & integer'image(DIGITS) & " hex digits"
          severity failure;
      end loop;
      deallocate(l);
      -- A loop, not unsigned(digits_read(4*DIGITS-1 downto w)) = 0: for W a multiple of 4 that
      -- slice is null, and numeric_std's "=" warns about a null argument and returns false.
      for b in w to 4*DIGITS - 1 loop
        assert digits_read(b) = '0'
          report "tb: " & path & ":" & integer'image(i + 1) & ": bits above bit " & integer'image(w - 1)
                 & " set (a " & integer'image(w) & "-bit word pads its top digit with zeros)"
          severity failure;
      end loop;
      words((i+1)*w-1 downto i*w) := signed(digits_read(w-1 downto 0));
    end loop;
    while not endfile(f) loop
      readline(f, l);
      assert l'length = 0 report "tb: " & path & " has more than " & integer'image(count) & " lines" severity failure;
      deallocate(l);
    end loop;
    file_close(f);
    return words;
  end function read_words;

  -- The W-bit pattern of x as ceil(W/4) lower-case hex digits, zero-padded at the top.
  function hex_word(x : signed) return string is
    constant DIGITS : positive := (x'length + 3) / 4;
    constant HEX    : string(1 to 16) := "0123456789abcdef";
    variable padded : unsigned(4*DIGITS-1 downto 0) := resize(unsigned(x), 4*DIGITS);
    variable s      : string(1 to DIGITS);
    variable nibble : natural;
  begin
    for i in 0 to DIGITS - 1 loop
      if is_x(std_logic_vector(padded(4*i+3 downto 4*i))) then
        s(DIGITS - i) := 'x';  -- an unknown the RTL drove: fxmimo check names the line
      else
        nibble := to_integer(padded(4*i+3 downto 4*i));
        s(DIGITS - i) := HEX(nibble + 1);
      end if;
    end loop;
    return s;
  end function hex_word;

  procedure write_word(file f : text; x : signed) is
    variable l : line;
  begin
    write(l, hex_word(x));
    writeline(f, l);
  end procedure write_word;

  procedure open_dump(file f : text; name : string) is
    variable status : file_open_status;
  begin
    file_open(status, f, OUT_DIR & "/" & name, write_mode);
    assert status = open_ok report "tb: cannot open " & OUT_DIR & "/" & name & " for writing" severity failure;
  end procedure open_dump;
begin
  dut : entity work.precode_mac
    generic map (
      WW => WW, WF => WF, SW => SW, SF => SF, AW => AW, AF => AF, DW => DW, DF => DF,
      ACC_RND => ACC_RND_RTL, ACC_OVF => ACC_OVF, DAC_RND => DAC_RND_RTL, DAC_OVF => DAC_OVF
    )
    port map (
      clk => clk, rst => rst, in_valid => in_valid, in_first => in_first, in_last => in_last,
      w_re => w_re, w_im => w_im, s_re => s_re, s_im => s_im,
      out_valid => out_valid, acc_re => acc_re, acc_im => acc_im, dac_re => dac_re, dac_im => dac_im
    );

  -- The clock stops when the stimulus is done, so the simulation ends by itself (no events left).
  clock : process is
  begin
    while not done loop
      wait for PERIOD / 2;
      clk <= not clk;
    end loop;
    wait;
  end process clock;

  stimulus : process is
    constant weights_re : signed(M*K*WW-1 downto 0) := read_words("tx_acc.in.weights.re.hex", M*K, WW);
    constant weights_im : signed(M*K*WW-1 downto 0) := read_words("tx_acc.in.weights.im.hex", M*K, WW);
    constant symbols_re : signed(K*N*SW-1 downto 0) := read_words("tx_acc.in.symbols.re.hex", K*N, SW);
    constant symbols_im : signed(K*N*SW-1 downto 0) := read_words("tx_acc.in.symbols.im.hex", K*N, SW);
    variable iw, i_s : natural;
  begin
    open_dump(f_acc_re, "tx_acc_re.hex");
    open_dump(f_acc_im, "tx_acc_im.hex");
    open_dump(f_dac_re, "dac_re.hex");
    open_dump(f_dac_im, "dac_im.hex");

    for i in 1 to 2 loop
      wait until falling_edge(clk);
    end loop;
    rst <= '0';
    for i_ant in 0 to M - 1 loop
      for i_sym in 0 to N - 1 loop
        for i_user in 0 to K - 1 loop
          iw := i_ant * K + i_user;
          i_s := i_user * N + i_sym;
          in_valid <= '1';
          in_first <= '1' when i_user = 0 else '0';
          in_last <= '1' when i_user = K - 1 else '0';
          w_re <= weights_re((iw+1)*WW-1 downto iw*WW);
          w_im <= weights_im((iw+1)*WW-1 downto iw*WW);
          s_re <= symbols_re((i_s+1)*SW-1 downto i_s*SW);
          s_im <= symbols_im((i_s+1)*SW-1 downto i_s*SW);
          wait until falling_edge(clk);
        end loop;
      end loop;
    end loop;
    in_valid <= '0';
    for i in 1 to 3 loop
      wait until falling_edge(clk);
    end loop;
    file_close(f_acc_re);
    file_close(f_acc_im);
    file_close(f_dac_re);
    file_close(f_dac_im);
    assert num_out = M * N
      report "tb: " & integer'image(num_out) & " outputs, " & integer'image(M * N) & " expected"
      severity failure;
    done <= true;
    wait;
  end process stimulus;

  -- Outputs are registered on the rising edge and sampled on the falling one.
  sample : process (clk) is
  begin
    if falling_edge(clk) and out_valid = '1' then
      write_word(f_acc_re, acc_re);
      write_word(f_acc_im, acc_im);
      write_word(f_dac_re, dac_re);
      write_word(f_dac_im, dac_im);
      num_out <= num_out + 1;
    end if;
  end process sample;
end architecture sim;
