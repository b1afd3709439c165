// A treatment replicated within a block (a central point repeated, as fractional and
// central-point designs do): accepted with a plot column, and analysed as R's lm does
// (lm(y ~ 0 + trt + block), sum-to-zero blocks; estimate and SE to 1e-8). Without a plot
// column the repeat cannot be told from a plot listed twice, and the error says what to map.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { runR } from '../../support/rscript.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-replicated-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function csv(): string {
  const u = mulberry32(31);
  const lines = ['env,block,plot,trt,rate,y'];
  for (const env of ['E1', 'E2', 'E3']) {
    for (let block = 1; block <= 3; block++) {
      // M (the central rate) three times in every block
      const plan: [string, number][] = [['CTL', 0], ['L', 50], ['M', 100], ['M', 100], ['M', 100], ['H', 150]];
      plan.forEach(([trt, rate], k) => lines.push(`${env},${block},${block * 100 + k + 1},${trt},${rate},${(5 + 0.02 * rate - 0.00005 * rate * rate + 0.2 * block + u()).toFixed(6)}`));
    }
  }
  return `${lines.join('\n')}\n`;
}

const base = { trait: 'y', control: 'CTL', contrasts: [{ name: 'rate_linear', trend: 'rate', degree: 1 }], oneStage: null };

describe('a treatment replicated within a block', () => {
  it('is accepted when a plot column is mapped and analysed as R lm does (1e-8)', async () => {
    const text = csv();
    writeFileSync(join(dir, 'rep.csv'), text);
    const spec = analysisSpecSchema.parse({ ...base, columns: { trial: 'env', block: 'block', plot: 'plot', treatment: 'trt', response: 'y', factors: { rate: 'rate' } } });
    const report = await runAnalysisFromSource({ data: join(dir, 'rep.csv'), spec, save: false });
    const r = runR(String.raw`
d <- read.csv('data.csv', stringsAsFactors = FALSE)
for (e in sort(unique(d$env))) {
  de <- d[d$env == e, ]; info <- unique(de[, c('trt', 'rate')]); info <- info[order(info$trt), ]
  de$trt <- factor(de$trt, levels = info$trt)
  m <- lm(y ~ 0 + trt + factor(block), data = de, contrasts = list('factor(block)' = 'contr.sum'))
  x <- info$rate; cf <- (x - mean(x)) / sum((x - mean(x))^2)
  b <- coef(m)[paste0('trt', info$trt)]; V <- vcov(m)[paste0('trt', info$trt), paste0('trt', info$trt)]
  emit(paste0('est_', e), sum(cf * b)); emit(paste0('se_', e), sqrt(sum(cf * (V %*% cf)))); emit(paste0('n_', e), nrow(de))
}`, { 'data.csv': text });
    for (const t of report.twoStage.trials) {
      const c = t.contrasts[0] as { estimate?: number; se?: number };
      expect('n' in t ? t.n : 0).toBe(r.values[`n_${t.trial}`]);
      expect(Math.abs((c.estimate as number) - r.values[`est_${t.trial}`])).toBeLessThan(1e-8);
      expect(Math.abs((c.se as number) - r.values[`se_${t.trial}`])).toBeLessThan(1e-8);
    }
  });

  it('without a plot column is refused with the advice to map it', async () => {
    writeFileSync(join(dir, 'rep2.csv'), csv());
    const spec = analysisSpecSchema.parse({ ...base, columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate' } } });
    await expect(runAnalysisFromSource({ data: join(dir, 'rep2.csv'), spec, save: false })).rejects.toThrow(/rep2.csv, row 5, column "block", value "1": trial "E1" already has block "1" and treatment "M" on row 4; if the treatment is replicated within the block .*map the plot column \(columns\.plot\)/);
  });
});
