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

bash "$(dirname "$0")/apt-install.sh" "install Icarus Verilog, Verilator and Yosys by hand" "${need[@]}"
