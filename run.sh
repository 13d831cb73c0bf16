#!/usr/bin/env bash
# fxmimo set-up and entry point. Installs missing Debian packages (apt-get, only when missing;
# as root or through sudo), configures with CMake presets, builds and runs.
#   ./run.sh demo [ARGS...]   build, then run `fxmimo demo ARGS...`
#   ./run.sh test             build, then run the whole test suite (ctest)
#   ./run.sh bench            build, then run the Google Benchmark programs
#   ./run.sh asan             build and test under address + undefined-behaviour sanitizers (clang)
#   ./run.sh fuzz [SECONDS]   build the sanitizer tree's libFuzzer targets, fuzz every parser SECONDS (600)
#   ./run.sh slurm            install Slurm and munge, build, run the Slurm examples on a local cluster
# Environment: FXMIMO_WERROR=ON turns warnings into errors (CI sets it).
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")"

required_packages=(g++ cmake ninja-build pkg-config libeigen3-dev libboost-dev libfmt-dev libgtest-dev libgmock-dev
  libbenchmark-dev libcli11-dev libtomlplusplus-dev nlohmann-json3-dev libsystemc-dev libssl-dev libhwy-dev
  libopenmpi-dev openmpi-bin)
# Used by tests that skip themselves, with a message, where absent: RTL simulators (Icarus,
# Verilator, GHDL), NumPy and pytest with pybind11 (the Python module), xmllint (JUnit schema),
# headless Chromium (renders the HTML report).
optional_packages=(iverilog verilator ghdl python3-numpy python3-pytest python3-dev pybind11-dev libxml2-utils
  chromium)

missing_packages() {
  local p
  for p in "$@"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || echo "$p"
  done
}

install_packages() {
  local missing
  missing=$(missing_packages "$@")
  [[ -z $missing ]] && return 0
  echo "run.sh: installing missing Debian packages: $(echo $missing | tr '\n' ' ')" >&2
  local sudo=()
  if [[ $(id -u) -ne 0 ]]; then
    command -v sudo >/dev/null || { echo "run.sh: need root or sudo to install: $missing" >&2; exit 2; }
    sudo=(sudo)
  fi
  export DEBIAN_FRONTEND=noninteractive
  "${sudo[@]}" apt-get update -qq
  # shellcheck disable=SC2086
  "${sudo[@]}" apt-get install -y -qq --no-install-recommends $missing >/dev/null
}

jobs=$(nproc 2>/dev/null || echo 2)

configure_and_build() {
  local preset=$1
  shift
  cmake --preset "$preset" -DFXMIMO_WERROR="${FXMIMO_WERROR:-OFF}" >/dev/null
  cmake --build --preset "$preset" -j "$jobs" "$@"
}

command=${1:-help}
[[ $# -gt 0 ]] && shift
case $command in
  demo)
    install_packages "${required_packages[@]}"
    configure_and_build release --target fxmimo
    exec ./build/release/app/fxmimo demo "$@"
    ;;
  test)
    install_packages "${required_packages[@]}" "${optional_packages[@]}"
    configure_and_build release
    ctest --preset release -j "$jobs" "$@"
    ;;
  bench)
    install_packages "${required_packages[@]}"
    configure_and_build release --target benchmarks
    for program in build/release/bench/bench_*; do
      [[ -x $program ]] || continue
      echo "== $program"
      SYSTEMC_DISABLE_COPYRIGHT_MESSAGE=1 "$program" "$@"
    done
    ;;
  asan)
    install_packages "${required_packages[@]}" "${optional_packages[@]}" clang
    configure_and_build asan
    ctest --preset asan -j "$jobs" "$@"
    ;;
  help | -h | --help)
    sed -n '2,10p' "$0" | sed 's/^# \{0,1\}//'
    ;;
  fuzz)
    install_packages "${required_packages[@]}" clang
    configure_and_build asan --target fuzz_programs
    exec tests/fuzz/run_fuzzers.sh "${1:-600}" "${@:2}"
    ;;
  slurm)
    # The ctest label slurm: a one-node cluster (.ci/local-slurm) runs the job-array example.
    install_packages "${required_packages[@]}" slurm-wlm munge
    configure_and_build release --target fxmimo
    ctest --preset release -L slurm "$@"
    ;;
  *)
    echo "run.sh: unknown command '$command' (expected demo, test, bench, asan, fuzz or slurm)" >&2
    exit 2
    ;;
esac
