// Source: R. H. Dehejia & S. Wahba (1999), "Causal Effects in Nonexperimental Studies:
// Reevaluating the Evaluation of Training Programs", JASA 94(448): 1053–1062 — the NSW
// experimental sample (185 treated, 260 controls) in shared/data/lalonde_nsw/
// (see shared/data/SOURCES.md). Experimental difference in mean re78: 6349.14 − 4554.80 = 1794.34.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { EffectCache, estimateEffect } from '../../src/core/effects/index.js';
import { aipw } from '../../src/core/estimators/aipw.js';
import { makeFrame, type Column } from '../../src/core/frame/frame.js';
import { graphFromEdges } from '../../src/core/graph/graph.js';
import { Rng } from '../../src/core/random/rng.js';
import { fitFixedGraph } from '../../src/core/scm/fit-model.js';
import { sharedDataFile } from './shared-data.js';

const FILE = sharedDataFile('lalonde_nsw', 'nsw_dw_experimental.csv');

function nswFrame() {
  const lines = readFileSync(FILE, 'utf8').trim().split(/\r?\n/);
  const header = lines[0].split(',');
  const cols = header.map(() => [] as number[]);
  for (const line of lines.slice(1)) line.split(',').forEach((v, j) => cols[j].push(Number(v)));
  const binary = new Set(['treat', 'black', 'hisp', 'married', 'nodegree']);
  return makeFrame(
    header.map((name, j): Column => ({ name, kind: binary.has(name) ? 'binary' : 'continuous', values: Float64Array.from(cols[j]) })),
  );
}

describe('NSW experimental sample (Dehejia & Wahba 1999)', () => {
  it('with treatment unconfounded (graph treat→re78), the simulated ATE on re78 is the experimental 1,794.34 within $1', () => {
    const frame = nswFrame();
    expect(frame.nRows).toBe(445);
    const model = fitFixedGraph(frame, graphFromEdges(['treat', 're78'], [['treat', 're78']]), { seed: 3 });
    const est = estimateEffect(new EffectCache(model), { treatment: 'treat', outcome: 're78', arm: 1, reference: 0 });
    expect(Math.abs(est.estimate - 1794.34)).toBeLessThan(1);
    expect(est.perGraph[0].adjustment).toEqual([]);
    expect(est.lower).toBeLessThan(1794.34);
    expect(est.upper).toBeGreaterThan(1794.34);
    // Interval from the influence function of the difference in means: se ≈ 670 (two-sample
    // Welch se from the same data, about 671), so the 90% interval is roughly ±1,100.
    expect(est.upper - est.lower).toBeGreaterThan(1800);
    expect(est.upper - est.lower).toBeLessThan(2800);
  });

  it('AIPW with the empty adjustment set and in-sample nuisances equals the difference in means within $1; cross-fitted within one se', () => {
    const frame = nswFrame();
    const input = { frame, treatment: 'treat', outcome: 're78', adjustment: [], arm: 1, reference: 0 } as const;
    const inSample = aipw(input, Rng.create(1), { folds: 1 });
    expect(Math.abs(inSample.ate - 1794.34)).toBeLessThan(1);
    const crossFit = aipw(input, Rng.create(1));
    expect(Math.abs(crossFit.ate - 1794.34)).toBeLessThan(crossFit.se);
  });
});
