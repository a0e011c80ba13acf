import { describe, expect, it } from 'vitest';
import { generateScenario, scenarioPotentialOutcomes, PROGRAMMES } from '../../src/demo/scenario.js';

describe('demo scenario generator', () => {
  const n = 4000;
  const obs = generateScenario(n, 7);
  const po = scenarioPotentialOutcomes(n, 7);

  it('is consistent: each household’s observed outcome is its potential outcome under the programme it got', () => {
    // Consistency of potential outcomes (an identity of any structural causal model).
    for (let i = 0; i < n; i++) {
      const arm = obs.programme[i] as (typeof PROGRAMMES)[number];
      expect(po[arm].winter_kwh[i]).toBe(obs.winter_kwh[i]);
      expect(po[arm].support_calls[i]).toBe(obs.support_calls[i]);
    }
  });

  it('leaves pre-treatment variables untouched by the intervention', () => {
    for (let i = 0; i < n; i++) {
      expect(po.thermostat_rebate.prior_kwh[i]).toBe(obs.prior_kwh[i]);
      expect(po.usage_report.heating[i]).toBe(obs.heating[i]);
    }
  });

  it('moves the setpoint by the equation’s −1.6 °C under the rebate, for every household', () => {
    for (let i = 0; i < n; i++) {
      expect(po.thermostat_rebate.setpoint_c[i] - po.none.setpoint_c[i]).toBeCloseTo(-1.6, 1);
    }
  });

  it('is confounded: the naive difference in means has the opposite sign of the true effect', () => {
    const mean = (a: Float64Array, keep: (i: number) => boolean) => {
      let s = 0;
      let c = 0;
      for (let i = 0; i < a.length; i++) if (keep(i)) (s += a[i]), c++;
      return s / c;
    };
    const naive = mean(obs.winter_kwh, (i) => obs.programme[i] === 'thermostat_rebate') - mean(obs.winter_kwh, (i) => obs.programme[i] === 'none');
    const truth = mean(po.thermostat_rebate.winter_kwh, () => true) - mean(po.none.winter_kwh, () => true);
    expect(truth).toBeLessThan(0);
    expect(naive).toBeGreaterThan(0);
  });
});
