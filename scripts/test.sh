#!/usr/bin/env bash
# `npm test`: the whole set-up a fresh clone needs, then every test.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/ensure-deps.sh
# Tools the tests drive, from Debian's packages: installed once, one apt run after another.
bash scripts/ensure-hdl-tools.sh
bash scripts/ensure-chromium.sh
# The server's tests need the private PostgreSQL and a migrated pleat_test database.
bash scripts/pg.sh
PLEAT_DATABASE_URL="$(bash scripts/pg.sh url pleat_test)" npx tsx server/main.ts migrate
npm run --silent build
npx tsc --noEmit -p tsconfig.json
# The import rules of DEVELOPERS.md, enforced (no circles, the engine pure, no room importing another it must not).
npx depcruise --config .dependency-cruiser.cjs shared solvers cli server src
npx vitest run "$@"
