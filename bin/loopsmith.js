#!/usr/bin/env node
// Entry point of the loopsmith command; the code lives in dist/ (npm run build).
import { main } from '../dist/cli/main.js';

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error) => {
    // A defect in loopsmith, not a user's mistake: one line, the stack only on request.
    const detail = process.env.LOOPSMITH_DEBUG && error && error.stack ? `\n${error.stack}` : '';
    const text = error instanceof Error ? `${error.name}: ${error.message}` : String(error);
    process.stderr.write(`loopsmith: internal error: ${text}${detail}\n(this is a defect in loopsmith; rerun with LOOPSMITH_DEBUG=1 for the stack trace and report it)\n`);
    process.exitCode = 70;
  },
);
