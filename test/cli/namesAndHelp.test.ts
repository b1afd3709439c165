// Issue 17's must-show through the command: --help speaks only our own names, and a spec with a
// formula language's colon form for a random term is refused with the word form to write.
import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { manyfield, tempDir } from '../support/cli.js';

const OLD_NAMES = /treatment:trial|REML criterion|singular fit|residualByTrial|\bQE\b|\bQEp\b|\bR2\b|omnibus|remlCriterion/;

describe('names in the command', () => {
  it('--help names the random terms in words and none of the old names', () => {
    const r = manyfield(['--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('treatment-by-trial');
    expect(r.stdout).not.toMatch(OLD_NAMES);
  });

  it('a spec with "treatment:trial" is refused, naming "treatment-by-trial", and writes nothing', () => {
    const dir = tempDir();
    const data = join(dir, 'plots.csv');
    writeFileSync(data, 'env,block,trt,y\nA,1,CTL,4\nA,1,T,5\nA,2,CTL,4.2\nA,2,T,5.3\n');
    const spec = join(dir, 'spec.json');
    writeFileSync(spec, JSON.stringify({ columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' }, oneStage: { random: ['trial', 'treatment:trial'] } }));
    const out = join(dir, 'out.json');
    const r = manyfield(['analyze', '--data', data, '--spec', spec, '--json', '--out', out]);
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('"treatment:trial"');
    expect(r.stderr).toContain('write "treatment-by-trial"');
    expect(r.stdout).toBe('');
  });
});
