# The custom-stage example (examples/custom-stage/) built against the installed package and run
# through fxmimo's commands on its extended datapath: run, vectors + check, sweep, range, tune,
# report. Variables: BINARY_DIR (fxmimo build tree), EXAMPLE_DIR, WORK_DIR (scratch).
include(${CMAKE_CURRENT_LIST_DIR}/build_against_install.cmake)
fxmimo_build_against_install(${EXAMPLE_DIR} "the custom-stage example")
file(MAKE_DIRECTORY ${WORK_DIR}/out)
set(exe ${WORK_DIR}/build/calibrated-fxmimo)
set(scenario ${EXAMPLE_DIR}/calibrated.toml)
set(out ${WORK_DIR}/out)

# Runs the example program; fails unless it exits with `expected_rc` and prints every `needle`.
function(expect_run expected_rc)
  cmake_parse_arguments(ARG "" "" "ARGS;PRINTS" ${ARGN})
  execute_process(COMMAND ${exe} ${ARG_ARGS} OUTPUT_VARIABLE stdout ERROR_VARIABLE stderr RESULT_VARIABLE rc
                  WORKING_DIRECTORY ${out})
  if(NOT rc EQUAL expected_rc)
    message(FATAL_ERROR "calibrated-fxmimo ${ARG_ARGS}: exit ${rc}, expected ${expected_rc}\n${stdout}\n${stderr}")
  endif()
  foreach(needle ${ARG_PRINTS})
    string(FIND "${stdout}" "${needle}" at)
    if(at EQUAL -1)
      message(FATAL_ERROR "calibrated-fxmimo ${ARG_ARGS}: output lacks '${needle}'\n${stdout}")
    endif()
  endforeach()
endfunction()

# The two new nodes appear in datapath order, between tx_acc and dac.
expect_run(0 ARGS run -c ${scenario} --trials 3 --threads 1 --json run.json
           PRINTS "tx_acc          Q1.14" "cal_rom         Q1.10" "tx_cal          Q1.14" "dac             Q0.11")
# Vectors of tx_cal with its two input ports, checked bit for bit against themselves, then with
# one planted word changed.
expect_run(0 ARGS vectors -c ${scenario} -o vec --nodes tx_cal --trials 0
           PRINTS "tx_cal.in.tx_acc.re.hex" "tx_cal.in.cal_rom.re.hex" "[trial=1, antenna=16, symbol=96]")
expect_run(0 ARGS check vec --node tx_cal --dump vec/tx_cal.out.re.hex --dump vec/tx_cal.out.im.hex PRINTS "PASS")
file(STRINGS ${out}/vec/tx_cal.out.re.hex words)
list(GET words 0 first)
if(first STREQUAL "0000")
  set(planted "0001")
else()
  set(planted "0000")
endif()
list(REMOVE_AT words 0)
list(INSERT words 0 ${planted})
list(JOIN words "\n" text)
file(WRITE ${out}/bad_re.hex "${text}\n")
expect_run(1 ARGS check vec --node tx_cal --dump bad_re.hex --dump vec/tx_cal.out.im.hex PRINTS "antenna=0" "symbol=0")
expect_run(0 ARGS sweep -c ${scenario} --node tx_cal,cal_rom --bits 9:10 --trials 2 --threads 1 --json sweep.json
           PRINTS "tx_cal " "cal_rom ")
expect_run(0 ARGS range -c ${scenario} --range-trials 3 --threads 1 --json range.json PRINTS "tx_cal " "cal_rom ")
expect_run(0 ARGS tune -c ${scenario} --trials 2 --range-trials 40 --verify-trials 2 --threads 1 --max-evm 1.0 --json tune.json -o tuned.toml
           PRINTS "tx_cal " "cal_rom ")
file(READ ${out}/tuned.toml tuned)
string(FIND "${tuned}" "[nodes.tx_cal]" at)
if(at EQUAL -1)
  message(FATAL_ERROR "tune -o did not write [nodes.tx_cal]:\n${tuned}")
endif()
expect_run(0 ARGS report run.json sweep.json range.json tune.json -o report.html PRINTS "wrote report.html")
file(READ ${out}/report.html page)
string(FIND "${page}" "tx_cal" at)
if(at EQUAL -1)
  message(FATAL_ERROR "the report does not show tx_cal")
endif()
message(STATUS "custom stage: run, vectors, check, sweep, range, tune and report on the extended datapath")
