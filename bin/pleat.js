#!/usr/bin/env node
// Starts the CLI from the JavaScript that `npm run build` (run by `npm install`) produced.
import('../dist/cli/pleat.js').catch((err) => {
  const notBuilt = err && err.code === 'ERR_MODULE_NOT_FOUND' && String(err.message).includes('dist/cli');
  process.stderr.write(
    notBuilt
      ? 'pleat: the CLI is not built yet; run `npm run build` (or `npm install`) first.\n'
      : `pleat: internal error: ${err && err.message ? err.message : String(err)}\n`,
  );
  process.exit(2);
});
