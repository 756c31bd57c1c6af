/**
 * The package as it is published: `npm pack` of this folder (built beforehand: `npm test` builds),
 * installed from the tarball into an empty project whose own package.json says version 1.0.0. There
 * the `loopsmith` command and the README's programmatic example must behave as they do in this
 * folder: same version, same evaluation metrics, same front, same exported sheets.
 *
 * The install is run with --ignore-scripts and better-sqlite3's native binary is copied from this
 * folder's node_modules (built by `npm ci` for the same Node ABI): the only install script in the
 * dependency tree is that native compile, which costs minutes of CPU and tests nothing of ours.
 * LOOPSMITH_PACKAGE_FULL_INSTALL=1 installs exactly as a user does, compile included. One install
 * serves every test here.
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const REPO = fileURLToPath(new URL('../../', import.meta.url));
const REPO_VERSION = (JSON.parse(readFileSync(join(REPO, 'package.json'), 'utf8')) as { version: string }).version;
const INSTALL_TIMEOUT_MS = 30 * 60_000; // seen: 661-931 s for the install on a 2-core machine at load average ~20
const COMMAND_TIMEOUT_MS = 5 * 60_000;
const RUN_ARGS = ['--generations', '4', '--population', '16', '--seed', '3', '--workers', '1', '--quiet'];

interface Output {
  readonly stdout: string;
  readonly stderr: string;
}

/** Environment of the commands: vitest's own NODE_OPTIONS must not reach them. */
function childEnv(): NodeJS.ProcessEnv {
  const env = { ...process.env };
  delete env['NODE_OPTIONS'];
  return env;
}

function exec(command: string, args: readonly string[], cwd: string): Output {
  const r = spawnSync(command, args, { cwd, env: childEnv(), encoding: 'utf8', maxBuffer: 64 * 1024 * 1024, timeout: INSTALL_TIMEOUT_MS });
  if (r.error) throw r.error;
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} (in ${cwd}) exited with ${r.status}:\n${r.stderr}\n${r.stdout}`);
  return { stdout: r.stdout, stderr: r.stderr };
}

let work = '';
let project = '';
let repoWork = '';
let repoExampleDir = '';

const installed = {
  loopsmith: (...args: string[]): Output => exec(join(project, 'node_modules', '.bin', 'loopsmith'), args, project),
  study: (name: string): string => join(project, 'node_modules', 'loopsmith', 'studies', `${name}.yaml`),
};
const repository = {
  loopsmith: (...args: string[]): Output => exec(process.execPath, [join(REPO, 'bin', 'loopsmith.js'), ...args], repoWork),
  study: (name: string): string => join(REPO, 'studies', `${name}.yaml`),
};

/** The code block between the README's example markers. */
function readmeExample(): string {
  const readme = readFileSync(join(REPO, 'README.md'), 'utf8');
  const match = /<!-- readme-example:start -->\n```js\n([\s\S]*?)```\n<!-- readme-example:end -->/.exec(readme);
  if (!match) throw new Error('README.md has no block between <!-- readme-example:start --> and <!-- readme-example:end -->');
  return match[1]!;
}

beforeAll(() => {
  if (!existsSync(join(REPO, 'dist', 'index.js'))) throw new Error('dist/ is missing: run "npm run build" first');
  work = mkdtempSync(join(tmpdir(), 'loopsmith-package-'));
  // --ignore-scripts: prepack would rebuild dist/ while other test files use it; npm test has built it.
  const packed = JSON.parse(exec('npm', ['pack', '--ignore-scripts', '--json', '--pack-destination', work], REPO).stdout) as { filename: string }[];
  project = join(work, 'project');
  repoWork = join(work, 'repository');
  mkdirSync(project);
  mkdirSync(repoWork);
  writeFileSync(join(project, 'package.json'), JSON.stringify({ name: 'user-project', version: '1.0.0', private: true, type: 'module' }, null, 2));
  const started = Date.now();
  const tarball = join(work, packed[0]!.filename);
  if (process.env.LOOPSMITH_PACKAGE_FULL_INSTALL === '1') {
    // The user's install as it is, native compile of better-sqlite3 included (minutes of CPU).
    exec('npm', ['install', tarball, '--no-audit', '--no-fund', '--prefer-offline'], project);
  } else {
    // Same package and dependency tree, but the one install script of the tree (better-sqlite3's native
    // build) is replaced by the binary `npm ci` already built for this Node ABI in the repository.
    exec('npm', ['install', tarball, '--no-audit', '--no-fund', '--prefer-offline', '--ignore-scripts'], project);
    const release = join('node_modules', 'better-sqlite3', 'build', 'Release');
    mkdirSync(join(project, release), { recursive: true });
    copyFileSync(join(REPO, release, 'better_sqlite3.node'), join(project, release, 'better_sqlite3.node'));
  }
  console.log(`npm install of the packed tarball: ${((Date.now() - started) / 1000).toFixed(0)} s`);
}, INSTALL_TIMEOUT_MS);

afterAll(() => {
  if (work) rmSync(work, { recursive: true, force: true });
  if (repoExampleDir) rmSync(repoExampleDir, { recursive: true, force: true });
});

describe('loopsmith installed from its packed tarball', { timeout: COMMAND_TIMEOUT_MS }, () => {
  it('reports its own version, not the version of the project it is installed in', () => {
    const version = installed.loopsmith('--version').stdout.trim();
    expect(version).toBe(REPO_VERSION);
    expect(version).not.toBe('1.0.0');
    expect(repository.loopsmith('--version').stdout.trim()).toBe(version);
  });

  it('every file a compiled module locates from its own place (new URL(..., import.meta.url), packageFile) is in the package', () => {
    const root = join(project, 'node_modules', 'loopsmith');
    const located: string[] = [];
    const visit = (dir: string): void => {
      for (const entry of readdirSync(dir, { withFileTypes: true })) {
        const path = join(dir, entry.name);
        if (entry.isDirectory()) visit(path);
        else if (entry.name.endsWith('.js')) {
          const text = readFileSync(path, 'utf8');
          for (const m of text.matchAll(/new URL\((['"])([^'"]+)\1, import\.meta\.url\)/g)) located.push(fileURLToPath(new URL(m[2]!, pathToFileURL(path))));
          for (const m of text.matchAll(/packageFile\((['"])([^'"]+)\1\)/g)) located.push(join(root, m[2]!));
        }
      }
    };
    visit(join(root, 'dist'));
    expect(located.length).toBeGreaterThan(3);
    expect(located.filter((file) => !existsSync(file)).map((file) => relative(root, file))).toEqual([]);
  });

  it('new writes a template pointing at the installed study schema; check and evaluate accept it', () => {
    installed.loopsmith('new', 'my-study.yaml');
    repository.loopsmith('new', 'my-study.yaml');
    const schemaLine = /^# yaml-language-server: \$schema=(.*)$/m;
    const installedText = readFileSync(join(project, 'my-study.yaml'), 'utf8');
    const schemaPath = schemaLine.exec(installedText)?.[1] ?? '';
    expect(schemaPath.startsWith(join(project, 'node_modules', 'loopsmith'))).toBe(true);
    expect(existsSync(schemaPath)).toBe(true);
    const repoText = readFileSync(join(repoWork, 'my-study.yaml'), 'utf8');
    expect(installedText.replace(schemaLine, '')).toBe(repoText.replace(schemaLine, ''));

    const check = installed.loopsmith('check', 'my-study.yaml');
    expect(check.stdout).toContain('my-study.yaml: valid');
    expect(check.stdout).toBe(repository.loopsmith('check', 'my-study.yaml').stdout);
    // The file hash differs with the schema path written into the file; everything else must not.
    const checkJson = (o: Output): unknown => ({ ...(JSON.parse(o.stdout) as object), fileHash: undefined });
    expect(checkJson(installed.loopsmith('check', 'my-study.yaml', '--json'))).toEqual(checkJson(repository.loopsmith('check', 'my-study.yaml', '--json')));
    const template = JSON.parse(installed.loopsmith('evaluate', 'my-study.yaml', '--json').stdout) as unknown;
    expect(template).toEqual(JSON.parse(repository.loopsmith('evaluate', 'my-study.yaml', '--json').stdout));
  });

  it('evaluate gives the same metrics and constraints, a demo study with a drive catalogue included', () => {
    for (const name of ['parcel-sorter', 'parcel-sorter-drives']) {
      const here = JSON.parse(installed.loopsmith('evaluate', installed.study(name), '--json', '--set', 'crank_1=260mm').stdout) as { metrics: Record<string, unknown> };
      const there = JSON.parse(repository.loopsmith('evaluate', repository.study(name), '--json', '--set', 'crank_1=260mm').stdout) as { metrics: Record<string, unknown> };
      expect(Object.keys(here.metrics).length).toBeGreaterThan(10);
      expect(here).toEqual(there);
    }
  });

  it('a short run on worker threads, its front and its export give the same designs', () => {
    installed.loopsmith('run', installed.study('parcel-sorter'), '--db', 'run.db', ...RUN_ARGS);
    repository.loopsmith('run', repository.study('parcel-sorter'), '--db', 'run.db', ...RUN_ARGS);
    const front = JSON.parse(installed.loopsmith('front', 'run.db', '--format', 'json').stdout) as { designs: { id: number; variables: Record<string, number> }[] };
    expect(front.designs.length).toBeGreaterThan(0);
    expect(front).toEqual(JSON.parse(repository.loopsmith('front', 'run.db', '--format', 'json').stdout));

    installed.loopsmith('export', 'run.db', '--front', '--format', 'json', '--out', 'sheets');
    repository.loopsmith('export', 'run.db', '--front', '--format', 'json', '--out', 'sheets');
    const files = readdirSync(join(project, 'sheets')).sort();
    expect(files).toEqual(front.designs.map((d) => `candidate-${d.id}.json`).sort());
    expect(readdirSync(join(repoWork, 'sheets')).sort()).toEqual(files);
    for (const file of files) {
      const sheet = JSON.parse(readFileSync(join(project, 'sheets', file), 'utf8')) as { provenance: { loopsmithVersion: string } };
      expect(sheet.provenance.loopsmithVersion).toBe(REPO_VERSION);
      expect(sheet).toEqual(JSON.parse(readFileSync(join(repoWork, 'sheets', file), 'utf8')));
    }
  });

  it("runs the README's programmatic example with the output it gives in the repository", () => {
    const example = readmeExample();
    writeFileSync(join(project, 'example.mjs'), example);
    const here = exec(process.execPath, ['example.mjs'], project).stdout;
    // In the repository the example imports 'loopsmith' by the package's own name (self-reference),
    // which resolves only for files inside this folder; it runs with the same empty working folder.
    repoExampleDir = mkdtempSync(join(REPO, 'results', 'readme-example-'));
    writeFileSync(join(repoExampleDir, 'example.mjs'), example);
    const exampleWork = join(work, 'repository-example');
    mkdirSync(exampleWork);
    const there = exec(process.execPath, [join(repoExampleDir, 'example.mjs')], exampleWork).stdout;
    expect(here).toMatch(/designs on the feasible front/);
    expect(existsSync(join(project, 'results', 'demo.db'))).toBe(true);
    expect(here).toBe(there);
  });

  it('the installed API checks its arguments and accepts both study shapes', () => {
    const script = [
      "import { loadStudyFile, demoStudyPath, evaluateDesign, ApiArgumentError } from 'loopsmith';",
      "const loaded = loadStudyFile(demoStudyPath('parcel-sorter'));",
      'const a = evaluateDesign(loaded, []).report.metrics;',
      'const b = evaluateDesign(loaded.study).report.metrics;',
      "let message = 'no error';",
      'try { evaluateDesign(loaded, 250); } catch (e) { message = `${e instanceof ApiArgumentError} ${e.message}`; }',
      'console.log(JSON.stringify({ same: JSON.stringify(a) === JSON.stringify(b), message }));',
    ].join('\n');
    writeFileSync(join(project, 'arguments.mjs'), script);
    const result = JSON.parse(exec(process.execPath, ['arguments.mjs'], project).stdout) as { same: boolean; message: string };
    expect(result.same).toBe(true);
    expect(result.message).toMatch(/^true evaluateDesign: overrides must be design overrides: .*; got the number 250$/);
  });
});
