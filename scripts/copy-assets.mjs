// Copies non-TypeScript assets that the compiled package reads at run time into dist/.
import { cpSync, existsSync, mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const assets = ['store/schema.sql', 'pool/workerEntry.cjs'];
for (const rel of assets) {
  const from = join(root, 'src', rel);
  if (!existsSync(from)) continue;
  const to = join(root, 'dist', rel);
  mkdirSync(dirname(to), { recursive: true });
  cpSync(from, to);
}
