#!/usr/bin/env bash
# `npm test`: the whole set-up a fresh clone needs, then every test.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/ensure-deps.sh
npm run --silent build
npx tsc --noEmit -p tsconfig.json
npx vitest run "$@"
