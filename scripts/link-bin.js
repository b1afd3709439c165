#!/usr/bin/env node
// npm links the bins of dependencies, not of the project itself, and npm 11's self-execution
// of a package.json "bin" fails (it looks for an npx cache install it never made). So the
// project declares no "bin" and links bin/manyfield.cjs into node_modules/.bin here, which
// `npx manyfield` finds right after `npm install`.
import { mkdirSync, rmSync, symlinkSync, chmodSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

const root = fileURLToPath(new URL('..', import.meta.url));
const binDir = join(root, 'node_modules', '.bin');
mkdirSync(binDir, { recursive: true });
const link = join(binDir, 'manyfield');
rmSync(link, { force: true });
symlinkSync('../../bin/manyfield.cjs', link);
chmodSync(join(root, 'bin', 'manyfield.cjs'), 0o755);
