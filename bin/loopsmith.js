#!/usr/bin/env node
// Entry point of the loopsmith command; the code lives in dist/ (npm run build).
import { main } from '../dist/cli/main.js';

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error) => {
    process.stderr.write(`loopsmith: internal error: ${error && error.stack ? error.stack : String(error)}\n`);
    process.exitCode = 70;
  },
);
