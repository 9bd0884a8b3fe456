#!/usr/bin/env bash
# `npm start`: the whole set-up a fresh clone needs, then the server with the demo.
#   dependencies -> private PostgreSQL (scripts/pg.sh) -> fake SMTP server (mail lands in
#   .data/mail/) -> build -> migrations -> demo seed -> API + web app on 127.0.0.1:$PLEAT_PORT,
#   and one worker process for plan and sweep jobs.
# Running it again reuses the database and the seed (nothing is duplicated).
set -euo pipefail
cd "$(dirname "$0")/.."

# Settings from .env (see .env.example) when there is one.
if [ -f .env ]; then set -a; . ./.env; set +a; fi
export PLEAT_PORT=${PLEAT_PORT:-4180}
export PLEAT_PG_PORT=${PLEAT_PG_PORT:-54329}
export PLEAT_SMTP_PORT=${PLEAT_SMTP_PORT:-4125}
export PLEAT_DATABASE_URL=${PLEAT_DATABASE_URL:-postgres://pleat@127.0.0.1:$PLEAT_PG_PORT/pleat}
export PLEAT_ENV=${PLEAT_ENV:-development}

port_busy() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }

if port_busy "$PLEAT_PORT"; then
  echo "pleat: port $PLEAT_PORT is in use (another npm start?); stop it or set PLEAT_PORT" >&2
  exit 1
fi

bash scripts/ensure-deps.sh
bash scripts/pg.sh

PIDS=()
cleanup() { for p in "${PIDS[@]}"; do kill "$p" 2>/dev/null || true; done; }
trap cleanup EXIT
trap 'exit 130' INT TERM

mkdir -p .data/mail
echo "pleat: building"
npm run --silent build

# The fake SMTP server: reuse one that is already listening, else start ours for this session.
if ! port_busy "$PLEAT_SMTP_PORT"; then
  node dist/server/main.js mail >.data/smtp.log 2>&1 &
  PIDS+=("$!")
fi

node dist/server/main.js migrate
node dist/server/main.js seed

PLEAT_MIGRATE=0 node dist/server/main.js serve &
SERVER=$!
PIDS+=("$SERVER")
# One worker for plan and sweep jobs beside the server; more may run anywhere against the same database.
PLEAT_MIGRATE=0 node dist/server/main.js worker >.data/worker.log 2>&1 &
PIDS+=("$!")
for _ in $(seq 1 100); do
  port_busy "$PLEAT_PORT" && break
  kill -0 "$SERVER" 2>/dev/null || { echo "pleat: the server did not start" >&2; exit 1; }
  sleep 0.1
done

cat <<EOF

  Pleat is running: http://127.0.0.1:$PLEAT_PORT

  Demo accounts (password: pleat-demo; they exist only in this local demo database):
    admin@example.com      admin: everything, users and projects
    lead@example.com       lead of the demo project: rules, CI tokens, members
    engineer@example.com   engineer: reads everything, tries designs, watches branches
    viewer@example.com     viewer: reads

  Mail sent by the server: .data/mail/*.eml, or http://127.0.0.1:$PLEAT_PORT/api/dev/mail
  Plan and sweep jobs run in one worker process (log: .data/worker.log)
  Stop with Ctrl-C.

EOF
wait "$SERVER"
