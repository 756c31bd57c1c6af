import { existsSync } from 'node:fs';
import { defineConfig } from 'vitest/config';

/**
 * The report's browser tests drive Debian's Chromium. On a machine without it they are left out with
 * a printed reason (install: `apt-get install -y chromium`); `.ci/run` installs it and sets
 * LOOPSMITH_REQUIRE_BROWSER=1, so CI never skips them silently.
 */
const CHROMIUM = '/usr/bin/chromium';
const BROWSER_TESTS = ['tests/report/report.test.ts', 'tests/report/architectures-report.test.ts'];
const browserMissing = !existsSync(CHROMIUM) && process.env['LOOPSMITH_REQUIRE_BROWSER'] !== '1';
if (browserMissing) {
  process.stderr.write(
    `loopsmith tests: ${CHROMIUM} is missing, so the browser tests of the report are skipped (${BROWSER_TESTS.join(', ')}).\n` +
      'Install Chromium to run them: sudo apt-get install -y chromium fonts-dejavu-core (Debian/Ubuntu).\n',
  );
}

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    exclude: ['**/node_modules/**', ...(browserMissing ? BROWSER_TESTS : [])],
    testTimeout: 120_000,
    hookTimeout: 120_000,
    pool: 'forks',
  },
});
