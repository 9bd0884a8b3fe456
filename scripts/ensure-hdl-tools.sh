#!/usr/bin/env bash
# Installs the HDL tools the RTL tests and `pleat rtl --area` use (Debian packages), only when missing.
# Idempotent: when iverilog, vvp, verilator and yosys are all on PATH it returns at once.
set -euo pipefail

need=()
command -v iverilog >/dev/null 2>&1 && command -v vvp >/dev/null 2>&1 || need+=(iverilog)
command -v verilator >/dev/null 2>&1 || need+=(verilator)
# Yosys is optional for the tests (only `--area` needs it); PLEAT_SKIP_YOSYS=1 leaves it out.
if [ "${PLEAT_SKIP_YOSYS:-0}" != "1" ]; then
  command -v yosys >/dev/null 2>&1 || need+=(yosys)
fi

if [ ${#need[@]} -eq 0 ]; then
  exit 0
fi

if ! command -v apt-get >/dev/null 2>&1; then
  echo "pleat: missing HDL tools (${need[*]}) and no apt-get to install them; install Icarus Verilog, Verilator and Yosys by hand" >&2
  exit 1
fi

SUDO=""
if [ "$(id -u)" -ne 0 ]; then
  if command -v sudo >/dev/null 2>&1; then SUDO="sudo"; else
    echo "pleat: missing HDL tools (${need[*]}); installing them needs root (apt-get)" >&2
    exit 1
  fi
fi

# One lock so that two test workers starting at once do not race apt.
lock="${TMPDIR:-/tmp}/pleat-hdl-tools.lock"
exec 9>"$lock"
if command -v flock >/dev/null 2>&1; then flock 9; fi

# Another process may have finished the install while we waited for the lock.
still=()
for pkg in "${need[@]}"; do
  case "$pkg" in
    iverilog) command -v iverilog >/dev/null 2>&1 && command -v vvp >/dev/null 2>&1 || still+=(iverilog) ;;
    *) command -v "$pkg" >/dev/null 2>&1 || still+=("$pkg") ;;
  esac
done
[ ${#still[@]} -eq 0 ] && exit 0

echo "pleat: installing HDL tools: ${still[*]}" >&2
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get update -qq >&2
$SUDO apt-get install -y -qq --no-install-recommends "${still[@]}" >&2
