/**
 * The demo scenario: Kestrel Valley Energy, a fictional electricity co-op, and its three
 * winter programmes. The structural equations below ARE the truth of the demo: the data
 * are drawn from them, and the true effects come from evaluating the same equations under
 * an intervention on `programme` with the same exogenous noise (common random numbers),
 * never from a fitted model.
 *
 * Story of the equations (kWh over one winter):
 * - high users were targeted, and the roll-out was staged by region → confounding;
 * - the thermostat rebate lowers the setpoint; a degree matters a lot in electrically
 *   heated homes (heat pump, resistive) and little where a gas boiler heats the house;
 * - the usage report works through app engagement, and saves a share of last winter's use,
 *   so it pays most in high-use homes;
 * - support calls rise with enrolment and with consumption (a collider).
 */
import { Rng } from '../core/random/rng.js';

export const REGIONS = ['coast', 'valley', 'upland'] as const;
export const DWELLINGS = ['flat', 'terrace', 'detached'] as const;
export const HEATING = ['heat_pump', 'gas_boiler', 'resistive'] as const;
export const PROGRAMMES = ['none', 'usage_report', 'thermostat_rebate'] as const;
export type Programme = (typeof PROGRAMMES)[number];

/** Variable order of the generated table (a valid causal order). */
export const SCENARIO_COLUMNS = [
  'region',
  'dwelling',
  'occupants',
  'heating',
  'prior_kwh',
  'programme',
  'app_sessions',
  'setpoint_c',
  'winter_kwh',
  'support_calls',
] as const;

/** The tiers a practitioner would state: household facts, last winter, programme, engagement, this winter, calls. */
export const SCENARIO_TIERS: string[][] = [
  ['region', 'dwelling', 'occupants', 'heating'],
  ['prior_kwh'],
  ['programme'],
  ['app_sessions', 'setpoint_c'],
  ['winter_kwh'],
  ['support_calls'],
];

/** The true edges of the generator, for printing beside the learned graph. */
export const SCENARIO_TRUE_EDGES: Array<[string, string]> = [
  ['dwelling', 'heating'],
  ['region', 'heating'],
  ['dwelling', 'prior_kwh'],
  ['occupants', 'prior_kwh'],
  ['heating', 'prior_kwh'],
  ['region', 'prior_kwh'],
  ['prior_kwh', 'programme'],
  ['region', 'programme'],
  ['programme', 'app_sessions'],
  ['occupants', 'app_sessions'],
  ['programme', 'setpoint_c'],
  ['heating', 'setpoint_c'],
  ['prior_kwh', 'winter_kwh'],
  ['setpoint_c', 'winter_kwh'],
  ['app_sessions', 'winter_kwh'],
  ['heating', 'winter_kwh'],
  ['occupants', 'winter_kwh'],
  ['region', 'winter_kwh'],
  ['programme', 'support_calls'],
  ['winter_kwh', 'support_calls'],
];

/** Exogenous noise of n households: every random draw of the generator, made once. */
interface Noise {
  n: number;
  region: Float64Array;
  dwelling: Float64Array;
  occupants: Float64Array;
  heating: Float64Array;
  prior: Float64Array;
  programme: Float64Array;
  sessions: Float64Array;
  setpoint: Float64Array;
  winter: Float64Array;
  calls: Float64Array;
}

/** One household table, categorical columns as level labels. */
export interface ScenarioTable {
  region: string[];
  dwelling: string[];
  occupants: Float64Array;
  heating: string[];
  prior_kwh: Float64Array;
  programme: string[];
  app_sessions: Float64Array;
  setpoint_c: Float64Array;
  winter_kwh: Float64Array;
  support_calls: Float64Array;
}

function drawNoise(n: number, rng: Rng): Noise {
  const u = () => {
    const a = new Float64Array(n);
    for (let i = 0; i < n; i++) a[i] = rng.uniform();
    return a;
  };
  const z = () => {
    const a = new Float64Array(n);
    for (let i = 0; i < n; i++) a[i] = rng.normal();
    return a;
  };
  return {
    n,
    region: u(),
    dwelling: u(),
    occupants: u(),
    heating: u(),
    prior: z(),
    programme: u(),
    sessions: z(),
    setpoint: z(),
    winter: z(),
    calls: u(),
  };
}

/** Index of the category drawn by inverse CDF from unnormalised weights. */
function pick(u: number, weights: readonly number[]): number {
  let total = 0;
  for (const w of weights) total += w;
  let acc = 0;
  for (let k = 0; k < weights.length; k++) {
    acc += weights[k] / total;
    if (u < acc) return k;
  }
  return weights.length - 1;
}

/** Inverse CDF of a Poisson(lambda) at u (small lambda). */
function poissonQuantile(u: number, lambda: number): number {
  let k = 0;
  let p = Math.exp(-lambda);
  let cdf = p;
  while (u > cdf && k < 200) {
    k++;
    p *= lambda / k;
    cdf += p;
  }
  return k;
}

/** The structural equations, evaluated for every household, optionally under do(programme = arm). */
function evaluate(noise: Noise, forced?: Programme): ScenarioTable {
  const n = noise.n;
  const t: ScenarioTable = {
    region: new Array<string>(n),
    dwelling: new Array<string>(n),
    occupants: new Float64Array(n),
    heating: new Array<string>(n),
    prior_kwh: new Float64Array(n),
    programme: new Array<string>(n),
    app_sessions: new Float64Array(n),
    setpoint_c: new Float64Array(n),
    winter_kwh: new Float64Array(n),
    support_calls: new Float64Array(n),
  };
  for (let i = 0; i < n; i++) {
    const region = pick(noise.region[i], [0.4, 0.35, 0.25]);
    const dwelling = pick(noise.dwelling[i], [0.35, 0.4, 0.25]);
    const occupants = 1 + pick(noise.occupants[i], [0.2, 0.3, 0.2, 0.15, 0.1, 0.05]);
    // Heat pumps are common in detached valley homes, resistive heaters in coastal flats.
    const hpW = Math.exp(-0.5 + 0.9 * (dwelling === 2 ? 1 : 0) + 0.6 * (region === 1 ? 1 : 0) - 0.4 * (dwelling === 0 ? 1 : 0));
    const gasW = Math.exp(0.3 - 0.8 * (region === 2 ? 1 : 0));
    const resW = Math.exp(-0.6 + 1.0 * (dwelling === 0 ? 1 : 0) + 0.5 * (region === 0 ? 1 : 0));
    const heating = pick(noise.heating[i], [hpW, gasW, resW]);
    const prior =
      3000 +
      [0, 800, 1800][dwelling] +
      450 * occupants +
      [-600, -1200, 1500][heating] +
      [0, 300, 900][region] +
      450 * noise.prior[i];
    // Targeting: high users and (staged roll-out) upland first for rebates, coast first for reports.
    const c = (prior - 5000) / 1000;
    let programme: number;
    if (forced !== undefined) programme = PROGRAMMES.indexOf(forced);
    else {
      const wReport = Math.exp(-0.4 + 0.3 * c + [0.5, 0, -0.3][region]);
      const wRebate = Math.exp(-0.9 + 0.6 * c + [-0.4, 0, 0.6][region]);
      programme = pick(noise.programme[i], [1, wReport, wRebate]);
    }
    // Larger households open the app less often per household member's bill.
    const sessions = Math.max(0, [0.5, 8, 3][programme] - [0, 0.6, 0.3][programme] * occupants + 1.5 * noise.sessions[i]);
    const setpoint = 20.5 + [0, -0.3, 0.4][heating] + [0, -0.1, -1.6][programme] + 1.1 * noise.setpoint[i];
    // kWh per degree of setpoint: large where heating is electric.
    const perDegree = [420, 50, 340][heating];
    // Mild nonlinearity in last winter's use: very high users regress towards the middle.
    const d = (prior - 5000) / 1000;
    const winter =
      600 +
      0.92 * prior -
      60 * d * d * Math.sign(d) +
      perDegree * (setpoint - 20.5) -
      0.02 * prior * sessions +
      [0, 150, -100][heating] +
      110 * occupants +
      [0, 80, 250][region] +
      300 * noise.winter[i];
    const lambda = Math.exp(-0.2 + [0, 0.7, 0.9][programme] + 0.0004 * (winter - 5000));
    const calls = poissonQuantile(noise.calls[i], lambda);
    t.region[i] = REGIONS[region];
    t.dwelling[i] = DWELLINGS[dwelling];
    t.occupants[i] = occupants;
    t.heating[i] = HEATING[heating];
    t.prior_kwh[i] = Math.round(prior * 10) / 10;
    t.programme[i] = PROGRAMMES[programme];
    t.app_sessions[i] = Math.round(sessions * 100) / 100;
    t.setpoint_c[i] = Math.round(setpoint * 100) / 100;
    t.winter_kwh[i] = Math.round(winter * 10) / 10;
    t.support_calls[i] = calls;
  }
  return t;
}

/** n households of observational data, reproducible from the seed. */
export function generateScenario(n: number, seed = 20261201): ScenarioTable {
  return evaluate(drawNoise(n, Rng.create(seed)));
}

/**
 * The same households (same seed, same noise) under do(programme = arm) for each arm:
 * the generator's own potential outcomes, from which every true effect is computed.
 */
export function scenarioPotentialOutcomes(n: number, seed = 20261201): Record<Programme, ScenarioTable> {
  const noise = drawNoise(n, Rng.create(seed));
  return {
    none: evaluate(noise, 'none'),
    usage_report: evaluate(noise, 'usage_report'),
    thermostat_rebate: evaluate(noise, 'thermostat_rebate'),
  };
}

/** The table as CSV text with a header row. */
export function scenarioCsv(t: ScenarioTable): string {
  const n = t.region.length;
  const lines: string[] = [SCENARIO_COLUMNS.join(',')];
  for (let i = 0; i < n; i++) {
    lines.push(SCENARIO_COLUMNS.map((c) => String((t as unknown as Record<string, ArrayLike<unknown>>)[c][i])).join(','));
  }
  return lines.join('\n') + '\n';
}
