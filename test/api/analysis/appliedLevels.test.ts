// Treatments coded by level number (N0..N3) with the amount applied at each site: `analyze
// --data` keeps each trial's amounts, its trend is fitted on them (checked live against R lm on
// the trial's own amounts, estimate and SE 1e-8), the rate curves use them, and one warning says
// so in words. The one-stage trend over treatment means is then not compared.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runAnalysisFromSource } from '../../../src/api/analysis/fromSource.js';
import { mulberry32 } from '../../../src/engine/stats/random.js';
import { analysisSpecSchema } from '../../../src/spec/analysisSpec.js';
import { runR } from '../../support/rscript.js';

const dir = mkdtempSync(join(tmpdir(), 'manyfield-applied-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const AMOUNTS: Record<string, readonly number[]> = { S1: [0, 40, 80, 120], S2: [0, 50, 100, 150], S3: [0, 60, 120, 180], S4: [0, 40, 80, 120] };

function csv(withinTrialSlip = false): string {
  const u = mulberry32(77);
  const lines = ['env,block,trt,rate,y'];
  for (const [env, amounts] of Object.entries(AMOUNTS)) {
    for (let block = 1; block <= 4; block++) {
      amounts.forEach((rate, level) => {
        const written = withinTrialSlip && env === 'S2' && block === 3 && level === 2 ? 90 : rate;
        lines.push(`${env},${block},N${level},${written},${(5 + 3 * (1 - Math.exp(-0.012 * rate)) + 0.2 * block + 0.5 * u()).toFixed(6)}`);
      });
    }
  }
  return `${lines.join('\n')}\n`;
}

const spec = analysisSpecSchema.parse({
  trait: 'y',
  columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y', factors: { rate: 'rate' } },
  control: 'N0',
  contrasts: [{ name: 'rate_linear', trend: 'rate', degree: 1 }],
  oneStage: { lrt: false, profile: false },
  rateResponse: { factor: 'rate', model: 'quadratic', priceRatio: 0.005, bootstrap: 0 },
});

describe('treatments coded by level number with site-specific amounts', () => {
  it('fits each trial trend on the amounts applied there (R lm, 1e-8), warns once and does not compare the one-stage trend', async () => {
    const text = csv();
    writeFileSync(join(dir, 'levels.csv'), text);
    const report = await runAnalysisFromSource({ data: join(dir, 'levels.csv'), spec, save: false });
    const r = runR(String.raw`
d <- read.csv('data.csv', stringsAsFactors = FALSE)
for (e in sort(unique(d$env))) {
  de <- d[d$env == e, ]; info <- unique(de[, c('trt', 'rate')]); info <- info[order(info$trt), ]
  de$trt <- factor(de$trt, levels = info$trt)
  m <- lm(y ~ 0 + trt + factor(block), data = de, contrasts = list('factor(block)' = 'contr.sum'))
  x <- info$rate; cf <- (x - mean(x)) / sum((x - mean(x))^2)
  b <- coef(m)[paste0('trt', info$trt)]; V <- vcov(m)[paste0('trt', info$trt), paste0('trt', info$trt)]
  emit(paste0('est_', e), sum(cf * b)); emit(paste0('se_', e), sqrt(sum(cf * (V %*% cf))))
}`, { 'data.csv': text });
    for (const t of report.twoStage.trials) {
      const c = t.contrasts[0] as { estimate?: number; se?: number };
      expect(Math.abs((c.estimate as number) - r.values[`est_${t.trial}`]), t.trial).toBeLessThan(1e-8);
      expect(Math.abs((c.se as number) - r.values[`se_${t.trial}`]), t.trial).toBeLessThan(1e-8);
    }
    expect(report.twoStage.pooled[0].k).toBe(4);
    const amounts = report.warnings.filter((w) => w.startsWith('treatments were applied at different amounts'));
    expect(amounts).toHaveLength(1);
    expect(amounts[0]).toMatch(/in 2 trials \(e\.g\. N1 is rate 50 in S2 \(40 where first seen\)/);
    expect(report.agreement[0].agree).toBeNull();
    expect(report.agreement[0].note).toMatch(/^not compared: treatments were applied at different rate amounts/);
    // Rate curves use each site's amounts: S3's tested range runs to 180.
    const s3 = (report.rateResponse?.trials as readonly { trial: string; testedRange?: readonly number[]; rates?: readonly number[] }[] | undefined)?.find((t) => t.trial === 'S3');
    expect(JSON.stringify(s3)).toMatch(/180/);
    expect(report.rateResponse?.warnings.some((w) => w.startsWith('Some treatments were applied at different rate amounts'))).toBe(true);
  });

  it('still refuses a treatment with two amounts within one trial, naming the row', async () => {
    writeFileSync(join(dir, 'slip.csv'), csv(true));
    await expect(runAnalysisFromSource({ data: join(dir, 'slip.csv'), spec, save: false })).rejects.toThrow(/row 28, column "rate", value "90": treatment "N2" has rate "100" earlier in trial "S2": within a trial a treatment has one level/);
  });
});
