#!/usr/bin/env bash
# Installs Debian's Chromium for the browser tests, only when /usr/bin/chromium is missing.
# playwright-core drives it; we never download a browser build of our own.
set -euo pipefail

CHROMIUM="${PLEAT_CHROMIUM:-/usr/bin/chromium}"
if [ -x "$CHROMIUM" ]; then
  exit 0
fi

if ! command -v apt-get >/dev/null 2>&1; then
  echo "pleat: $CHROMIUM is missing and there is no apt-get to install it; install Chromium by hand or set PLEAT_CHROMIUM" >&2
  exit 1
fi

SUDO=""
if [ "$(id -u)" -ne 0 ]; then
  if command -v sudo >/dev/null 2>&1; then SUDO="sudo"; else
    echo "pleat: Chromium is missing; installing it needs root (apt-get)" >&2
    exit 1
  fi
fi

# One lock so that two test workers starting at once do not race apt.
lock="${TMPDIR:-/tmp}/pleat-chromium.lock"
exec 9>"$lock"
if command -v flock >/dev/null 2>&1; then flock 9; fi
[ -x "$CHROMIUM" ] && exit 0

echo "pleat: installing Chromium for the browser tests (apt-get)" >&2
export DEBIAN_FRONTEND=noninteractive
$SUDO apt-get -o DPkg::Lock::Timeout=600 update -qq >&2
# Another helper may be installing packages at the same moment: wait for the dpkg lock.
$SUDO apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends chromium >&2
