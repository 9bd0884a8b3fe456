#!/usr/bin/env bash
# Installs Debian's Chromium for the browser tests, only when /usr/bin/chromium is missing.
# playwright-core drives it; we never download a browser build of our own.
set -euo pipefail

CHROMIUM="${PLEAT_CHROMIUM:-/usr/bin/chromium}"
if [ -x "$CHROMIUM" ]; then
  exit 0
fi

bash "$(dirname "$0")/apt-install.sh" "install Chromium by hand or set PLEAT_CHROMIUM" chromium
