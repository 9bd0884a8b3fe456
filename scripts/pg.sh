#!/usr/bin/env bash
# The project's private PostgreSQL: a throw-away cluster on 127.0.0.1 for development, tests and
# benchmarks. Idempotent: reuses a running cluster, creates what is missing, and several callers
# at once are serialised by a lock.
#
#   bash scripts/pg.sh          start (or reuse) the cluster and create the databases
#   bash scripts/pg.sh stop     stop it
#   bash scripts/pg.sh status   say whether it runs and where it lives
#   bash scripts/pg.sh url [db] print the connection URL
#
# Environment: PLEAT_PG_PORT (default 54329), PLEAT_PG_DIR (cluster folder, default .pg/ in the
# project, or /tmp/pleat-pg-<hash> when the postgres user cannot enter the project folder),
# PLEAT_PG_DATABASES (default "pleat pleat_test"), PLEAT_PG_FSYNC (default off: a sandbox, not a
# place for data you want to keep).
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd -P)
PORT=${PLEAT_PG_PORT:-54329}
DB_USER=pleat
DATABASES=${PLEAT_PG_DATABASES:-"pleat pleat_test"}
HASH=$(printf '%s' "$ROOT" | sha256sum | cut -c1-12)
ACTION=${1:-start}

say() { echo "pleat-pg: $*" >&2; }

if [ "$ACTION" = url ]; then
  echo "postgres://$DB_USER@127.0.0.1:$PORT/${2:-pleat}"
  exit 0
fi

find_bin() { ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1; }
BIN=$(find_bin || true)
if [ -z "$BIN" ]; then
  [ "$(id -u)" = 0 ] || { say "PostgreSQL is not installed and this is not root: run 'apt-get install -y postgresql' as root"; exit 1; }
  say "installing Debian's postgresql package (apt-get)"
  apt-get update -qq
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq postgresql >/dev/null
  BIN=$(find_bin)
fi

# initdb refuses to run as root: as root the server runs as the `postgres` system user.
if [ "$(id -u)" = 0 ]; then
  if ! id -u postgres >/dev/null 2>&1; then
    say "creating the postgres system user"
    useradd --system --home-dir /var/lib/postgresql --shell /usr/sbin/nologin postgres
  fi
  AS_PG=(runuser -u postgres --)
  can_enter() { runuser -u postgres -- test -x "$1" 2>/dev/null; }
else
  AS_PG=()
  can_enter() { test -x "$1"; }
fi

# The cluster lives in the project (.pg/, git-ignored) when every parent folder is enterable by
# the server's user; otherwise in /tmp, named after the project path so checkouts do not collide.
if [ -n "${PLEAT_PG_DIR:-}" ]; then
  PGDIR=$PLEAT_PG_DIR
elif can_enter "$ROOT"; then
  PGDIR=$ROOT/.pg
else
  PGDIR=/tmp/pleat-pg-$HASH
fi
DATA=$PGDIR/data
SOCK=$PGDIR/run
LOG=$PGDIR/log/postgres.log

# fd 9 holds the lock: the server must not inherit it, or the lock would live as long as the server.
run_pg() { (cd "$PGDIR" && "${AS_PG[@]}" "$@" 9>&-); }
is_ready() { "$BIN/pg_isready" -q -h 127.0.0.1 -p "$PORT" -d postgres -U "$DB_USER" >/dev/null 2>&1; }
is_running() { [ -f "$DATA/PG_VERSION" ] && run_pg "$BIN/pg_ctl" -D "$DATA" status >/dev/null 2>&1; }

case "$ACTION" in
  status)
    if is_running; then echo "running on 127.0.0.1:$PORT, cluster in $PGDIR"; else echo "not running (cluster folder $PGDIR)"; fi
    exit 0 ;;
  stop)
    if is_running; then run_pg "$BIN/pg_ctl" -D "$DATA" -m fast -w stop >/dev/null; say "stopped"; else say "not running"; fi
    exit 0 ;;
  start) ;;
  *) say "unknown action '$ACTION' (start, stop, status, url)"; exit 2 ;;
esac

# Several processes (npm test in two terminals, two vitest workers) may call this at once.
exec 9>"/tmp/pleat-pg-$HASH.lock"
flock -w 120 9 || { say "timed out waiting for another pg.sh"; exit 1; }

mkdir -p "$PGDIR/log" "$SOCK"
if [ "$(id -u)" = 0 ] && [ "$(stat -c %U "$PGDIR" "$SOCK" "$PGDIR/log" | sort -u)" != postgres ]; then chown -R postgres: "$PGDIR"; fi
chmod 700 "$PGDIR"

if [ ! -f "$DATA/PG_VERSION" ]; then
  say "creating a cluster in $PGDIR"
  run_pg "$BIN/initdb" -D "$DATA" -U "$DB_USER" -A trust -E UTF8 --no-locale >"$PGDIR/log/initdb.log" 2>&1 \
    || { cat "$PGDIR/log/initdb.log" >&2; exit 1; }
  echo "include_if_exists = 'pleat.conf'" >>"$DATA/postgresql.conf"
fi

# Settings that follow the environment are rewritten on every start.
FSYNC=${PLEAT_PG_FSYNC:-off}
cat >"$DATA/pleat.conf" <<EOF
# Written by scripts/pg.sh on every start; edit the script, not this file.
listen_addresses = '127.0.0.1'
port = $PORT
unix_socket_directories = '$SOCK'
fsync = $FSYNC
synchronous_commit = $FSYNC
full_page_writes = $FSYNC
max_connections = 200
shared_buffers = 128MB
EOF
[ "$(id -u)" = 0 ] && chown postgres: "$DATA/pleat.conf"

if ! is_running; then
  if is_ready; then
    say "port $PORT is taken by another PostgreSQL; set PLEAT_PG_PORT to another port"
    exit 1
  fi
  if ! run_pg "$BIN/pg_ctl" -D "$DATA" -l "$LOG" -w -t 60 start >/dev/null; then
    say "PostgreSQL did not start; the end of $LOG:"
    tail -n 20 "$LOG" >&2 || true
    exit 1
  fi
fi

# After a crash pg_ctl can report a running server while connections still fail for a moment.
for _ in $(seq 1 60); do is_ready && break; sleep 0.5; done
is_ready || { say "PostgreSQL runs but does not accept connections on 127.0.0.1:$PORT; see $LOG"; exit 1; }

PSQL=("$BIN/psql" -h 127.0.0.1 -p "$PORT" -U "$DB_USER" -d postgres -v ON_ERROR_STOP=1 -qtA)
for db in $DATABASES; do
  if [ -z "$("${PSQL[@]}" -c "SELECT 1 FROM pg_database WHERE datname = '$db'")" ]; then
    "${PSQL[@]}" -c "CREATE DATABASE \"$db\"" >/dev/null
    say "created database $db"
  fi
done
say "ready on 127.0.0.1:$PORT (cluster in $PGDIR)"
