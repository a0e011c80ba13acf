/**
 * A fitted model for api suites that need one: the demo scenario uploaded into a workspace and
 * fitted on its true graph with linear mechanisms (quick), waited on through GET /v1/jobs.
 * The fit runtime must already run on the app's queue (startFitRuntime with app.models).
 */
import { expect } from 'vitest';
import { generateScenario, scenarioCsv, SCENARIO_TRUE_EDGES } from '../../../src/demo/scenario.js';
import { bearer, type TestApp, type TestWorkspace } from './test-app.js';

/** Ids of the uploaded dataset, the model and its first fit job. */
export interface ScenarioModel {
  datasetId: string;
  modelId: string;
  jobId: string;
}

/** Uploads `rows` households of the demo scenario (seed `seed`) as a CSV dataset, optionally edited first; returns its id. */
export async function uploadScenario(t: TestApp, ws: TestWorkspace, opts: { name: string; rows: number; seed: number; edit?: (csv: string) => string }): Promise<string> {
  const csv = scenarioCsv(generateScenario(opts.rows, opts.seed));
  const ds = await t.app.inject({
    method: 'POST',
    url: `/v1/datasets?name=${encodeURIComponent(opts.name)}`,
    headers: { ...bearer(ws.adminKey), 'content-type': 'text/csv' },
    payload: opts.edit ? opts.edit(csv) : csv,
  });
  expect(ds.statusCode).toBe(201);
  return ds.json().dataset.id as string;
}

export async function fitScenarioModel(t: TestApp, ws: TestWorkspace, opts: { name: string; rows: number; seed: number }): Promise<ScenarioModel> {
  const datasetId = await uploadScenario(t, ws, opts);
  const model = await t.app.inject({
    method: 'POST',
    url: '/v1/models',
    headers: bearer(ws.adminKey),
    payload: { name: opts.name, datasetId, fixedGraph: { edges: SCENARIO_TRUE_EDGES }, mechanisms: { family: 'linear' }, referenceRows: 200 },
  });
  expect(model.statusCode).toBe(202);
  const modelId = model.json().model.id as string;
  const jobId = model.json().job.id as string;
  let state = '';
  for (let i = 0; i < 600 && state !== 'succeeded'; i++) {
    state = (await t.app.inject({ method: 'GET', url: `/v1/jobs/${jobId}`, headers: bearer(ws.adminKey) })).json().state;
    expect(state).not.toBe('failed');
    if (state !== 'succeeded') await new Promise((r) => setTimeout(r, 100));
  }
  expect(state).toBe('succeeded');
  return { datasetId, modelId, jobId };
}
