#!/usr/bin/env node
// Entry point: the compiled CLI (built by `npm install` through the prepare script).
import('../dist/src/cli/main.js').then((m) => m.main(process.argv)).catch((err) => {
  process.stderr.write(`fibrewatch: ${err && err.stack ? err.stack : err}\n`);
  process.exit(1);
});
