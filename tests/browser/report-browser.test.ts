/**
 * The report page in a real browser: Debian's Chromium driven by playwright-core (which does
 * not download a browser of its own), JavaScript disabled and every request outside the test
 * server refused. The app runs on PGlite with the in-process queue; the demo scenario
 * (src/demo/scenario.ts) is uploaded through the API, a model with the generator's own graph
 * (fixed, so the fit is fast) is fitted, a read key mints a report link, and the page must
 * show every node and every segment row of the API's uplift answer with the same recommended
 * arm. A full-page screenshot goes to docs/images/report.png (shown in the README).
 *
 * Skipped, with a message, when /usr/bin/chromium is absent and CI is not set; in CI it runs
 * (and fails without Chromium: .ci/run installs it).
 */
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SCENARIO_COLUMNS, SCENARIO_TIERS, SCENARIO_TRUE_EDGES, generateScenario, scenarioCsv } from '../../src/demo/scenario.js';
import { startReportApp, type ReportApp } from './report-app.js';

const CHROMIUM = '/usr/bin/chromium';
const haveChromium = existsSync(CHROMIUM);
if (!haveChromium && !process.env.CI) {
  console.warn(`[report-browser] skipped: ${CHROMIUM} not found (apt-get install -y chromium); in CI this test runs and needs it.`);
}
const SCREENSHOT = join(process.cwd(), 'docs', 'images', 'report.png');
const QUERY = { arms: ['usage_report', 'thermostat_rebate'], reference: 'none', by: ['heating', 'dwelling'], better: 'lower' as const, costs: [60, 400] };

describe.skipIf(!haveChromium && !process.env.CI)('report page in headless Chromium', () => {
  let env: ReportApp;
  let base = '';
  let modelId = '';
  let readKey = '';
  let profile = '';

  beforeAll(async () => {
    env = await startReportApp();
    base = await env.app.listen({ host: '127.0.0.1', port: 0 });
    const api = env.client(base, env.adminKey);
    const upload = await api.postCsv<{ dataset: { id: string } }>('/v1/datasets?name=kestrel-households', scenarioCsv(generateScenario(3000)));
    const created = await api.post<{ model: { id: string }; job: { id: string } }>('/v1/models', {
      name: 'winter programmes',
      datasetId: upload.dataset.id,
      treatment: 'programme',
      outcome: 'winter_kwh',
      knowledge: { tiers: SCENARIO_TIERS },
      fixedGraph: { edges: SCENARIO_TRUE_EDGES },
      mechanisms: { family: 'auto' },
      referenceRows: 2000,
      seed: 7,
    });
    modelId = created.model.id;
    const deadline = Date.now() + 120_000;
    for (;;) {
      const job = await api.get<{ state: string; error?: string | null }>(`/v1/jobs/${created.job.id}`);
      if (job.state === 'succeeded') break;
      if (job.state === 'failed' || job.state === 'cancelled') throw new Error(`fit ${job.state}: ${job.error ?? ''}`);
      if (Date.now() > deadline) throw new Error('fit did not finish in 120 s');
      await new Promise((r) => setTimeout(r, 200));
    }
    readKey = await env.key(['read']);
    profile = await mkdtemp(join(tmpdir(), 'fulcrum-chromium-'));
  }, 180_000);

  afterAll(async () => {
    await env?.close();
    if (profile) await rm(profile, { recursive: true, force: true });
  });

  it('shows every node and every segment row, with the API’s recommended arm, and saves a screenshot', async () => {
    const api = env.client(base, readKey);
    const link = await api.post<{ url: string; expiresAt: string }>(`/v1/models/${modelId}/versions/current/report-links`, { expiresInMinutes: 30 });
    expect(link.url.startsWith(`${base}/reports/`)).toBe(true);
    const uplift = await api.post<{ result: { rows: Array<{ segment: { name: string }; recommended: string }> } }>(`/v1/models/${modelId}/uplift`, {
      treatment: 'programme',
      outcome: 'winter_kwh',
      arms: QUERY.arms,
      reference: QUERY.reference,
      by: { cells: QUERY.by },
      better: QUERY.better,
      costs: QUERY.costs,
    });
    const apiRows = uplift.result.rows;
    expect(apiRows.length).toBeGreaterThan(3);

    const { chromium } = await import('playwright-core');
    const context = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      javaScriptEnabled: false,
      viewport: { width: 1280, height: 900 },
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    });
    const outside: string[] = [];
    try {
      const page = context.pages()[0] ?? (await context.newPage());
      // Nothing but the test server may be asked for anything.
      await page.route('**/*', (route) => {
        const u = route.request().url();
        if (u.startsWith(base)) return route.continue();
        outside.push(u);
        return route.abort();
      });
      const url = `${link.url}?arms=${QUERY.arms.join(',')}&reference=${QUERY.reference}&by=${QUERY.by.join(',')}&better=${QUERY.better}&costs=${QUERY.costs.join(',')}`;
      const res = await page.goto(url, { waitUntil: 'load' });
      expect(res?.status()).toBe(200);
      expect(res?.headers()['content-security-policy']).toContain("script-src 'none'");

      // Every node of the graph is drawn, and visible.
      for (const name of SCENARIO_COLUMNS) {
        const node = page.locator(`svg.graph g.node[data-node="${name}"]`);
        expect(await node.count(), name).toBe(1);
        expect(await node.isVisible(), name).toBe(true);
      }
      expect(await page.locator('svg.graph g.node[data-role="treatment"]').getAttribute('data-node')).toBe('programme');
      expect(await page.locator('svg.graph g.node[data-role="outcome"]').getAttribute('data-node')).toBe('winter_kwh');

      // Every segment row of the API's answer, in order, with the same recommended arm (as shown text).
      const rows = page.locator('table.uplift tbody tr');
      expect(await rows.count()).toBe(apiRows.length);
      for (let i = 0; i < apiRows.length; i++) {
        const row = rows.nth(i);
        expect(await row.getAttribute('data-segment')).toBe(apiRows[i].segment.name);
        expect((await row.locator('td.recommended strong').innerText()).trim()).toBe(apiRows[i].recommended);
      }
      // One ATE row per arm.
      expect(await page.locator('table.effects tbody tr').count()).toBe(QUERY.arms.length);

      await mkdir(join(process.cwd(), 'docs', 'images'), { recursive: true });
      await page.screenshot({ path: SCREENSHOT, fullPage: true });

      // Asking another question needs no script: the form GETs the same link with new parameters.
      await page.selectOption('form.question select[name="better"]', 'higher');
      await page.fill('form.question input[name="costs"]', '');
      await Promise.all([page.waitForURL(/better=higher/), page.click('form.question button')]);
      const asked = new URL(page.url());
      expect(asked.pathname).toBe(new URL(link.url).pathname);
      expect(asked.searchParams.get('by')).toBe(QUERY.by.join(','));
      expect(await page.locator('table.uplift tbody tr').count()).toBe(apiRows.length);

      // Phone width: the page itself never scrolls sideways (wide tables and the graph scroll in their boxes).
      await page.setViewportSize({ width: 375, height: 800 });
      const overflow = await page.evaluate<number>('document.documentElement.scrollWidth');
      expect(overflow).toBeLessThanOrEqual(375);

      // Print: the question form and navigation are not printed; the uplift table is.
      await page.emulateMedia({ media: 'print' });
      expect(await page.locator('form.question').isVisible()).toBe(false);
      expect(await page.locator('table.uplift').isVisible()).toBe(true);
    } finally {
      await context.close();
    }
    expect(outside).toEqual([]);
  }, 120_000);
});
