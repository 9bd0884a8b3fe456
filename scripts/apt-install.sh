#!/usr/bin/env bash
# Installs Debian packages for the ensure-*.sh scripts: apt-install.sh HINT PACKAGE...
# The caller has already found something missing; HINT says what to do by hand when apt-get or
# root is not available. Packages dpkg already lists as installed are skipped.
set -euo pipefail

hint="$1"
shift
[ $# -gt 0 ] || exit 0

if ! command -v apt-get >/dev/null 2>&1; then
  echo "pleat: missing $* and there is no apt-get to install it; $hint" >&2
  exit 1
fi

SUDO=""
if [ "$(id -u)" -ne 0 ]; then
  if command -v sudo >/dev/null 2>&1; then SUDO="sudo"; else
    echo "pleat: missing $*; installing it needs root (apt-get); $hint" >&2
    exit 1
  fi
fi

# One lock for every install of ours, so that test workers starting at once do not race apt.
lock="${TMPDIR:-/tmp}/pleat-apt.lock"
exec 9>"$lock"
if command -v flock >/dev/null 2>&1; then flock 9; fi

# Another process may have installed some of them while we waited for the lock.
still=()
for pkg in "$@"; do
  [ "$(dpkg-query -W -f='${Status}' "$pkg" 2>/dev/null || true)" = "install ok installed" ] || still+=("$pkg")
done
[ ${#still[@]} -eq 0 ] && exit 0

echo "pleat: installing ${still[*]} (apt-get)" >&2
export DEBIAN_FRONTEND=noninteractive
# Something else on the machine may hold the dpkg lock (unattended upgrades, another helper): wait for it.
$SUDO apt-get -o DPkg::Lock::Timeout=600 update -qq >&2
$SUDO apt-get -o DPkg::Lock::Timeout=600 install -y -qq --no-install-recommends "${still[@]}" >&2
