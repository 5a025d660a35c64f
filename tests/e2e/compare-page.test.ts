/**
 * The comparison page in Chromium over the real API: a run imported through
 * the API (fixtures/tunnel-clean-polar.csv, 21 points, with a note line of
 * its own in front so its SHA-256 differs from other tests' uploads) is
 * opened on /compare by an aerodynamicist, who predicts it from the page and
 * sees measured markers, the predicted line, the tolerance band and a
 * legend on each chart; the chart's CSV export carries the same points. A
 * second run of the same data with the flap configuration gives the
 * increment chart. Screenshots go to test-results/.
 */
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import { parse } from 'csv-parse/sync';
import type { Browser, Page } from 'playwright-core';
import { launchChromium } from '../support/browser';
import { baseUrl } from '../support/env';
import { demoAccount } from '../support/session';
import { signInInBrowser } from '../support/browser-session';

const root = join(import.meta.dirname, '..', '..');
const results = join(root, 'test-results');
const tag = randomBytes(3).toString('hex');

describe('the comparison page', () => {
	let browser: Browser;
	let page: Page;
	let campaignId: number;
	const runs: { id: number; runNumber: string }[] = [];
	const pageErrors: string[] = [];
	const apiProblems: string[] = [];

	beforeAll(async () => {
		mkdirSync(results, { recursive: true });
		browser = await launchChromium();
		// Import as the test engineer (aerodynamicists do not import).
		const importer = await browser.newPage();
		const who = demoAccount('test_engineer');
		await signInInBrowser(importer, who.email, who.password);
		const list = await (await importer.request.get(`${baseUrl()}/api/v1/campaigns`)).json();
		const campaign = list.items.find((c: { code: string }) => c.code === 'ET1-WT-01');
		campaignId = campaign.id;
		const detail = await (await importer.request.get(`${baseUrl()}/api/v1/campaigns/${campaignId}`)).json();
		const config = (name: string) => detail.configurations.filter((c: { name: string }) => c.name === name).sort((a: { version: number }, b: { version: number }) => b.version - a.version)[0];
		const fixture = readFileSync(join(root, 'fixtures', 'tunnel-clean-polar.csv'));
		for (const [k, name] of [['C', 'ET-1 model clean wing'], ['F', 'ET-1 model flap 15']] as const) {
			const cfg = config(name);
			expect(cfg, `seeded configuration ${name}`).toBeTruthy();
			const body = Buffer.concat([Buffer.from(`Note,compare page browser test ${k} ${tag}\n`), fixture]);
			const runNumber = `E2E-CMP-${k}-${tag}`;
			const q = new URLSearchParams({ name: `compare-${k}.csv`, kind: 'tunnel', runNumber, configurationId: String(cfg.id) });
			const res = await importer.request.post(`${baseUrl()}/api/v1/campaigns/${campaignId}/runs?${q}`, { data: body, headers: { 'Content-Type': 'text/csv' } });
			expect(res.status(), await res.text()).toBe(201);
			runs.push({ id: (await res.json()).run.id, runNumber });
		}
		await importer.close();

		page = await browser.newPage({ viewport: { width: 1500, height: 1400 }, acceptDownloads: true });
		page.on('pageerror', (e) => pageErrors.push(e.message));
		// Failed API answers are kept to explain a failing step.
		page.on('response', async (r) => {
			if (r.url().includes('/api/v1/') && r.status() >= 400) apiProblems.push(`${r.status()} ${r.url()} ${(await r.text().catch(() => '')).slice(0, 400)}`);
		});
		const aero = demoAccount('aerodynamicist');
		await signInInBrowser(page, aero.email, aero.password);
	});
	afterAll(async () => {
		await browser?.close();
	});

	it('shows measured markers, the predicted line, the tolerance band and a legend, and exports the data', async () => {
		const [clean] = runs;
		await page.goto(`${baseUrl()}/compare?campaign=${campaignId}&runs=${clean.id}`);
		const row = page.locator('[data-testid="compare-runs"] tr', { hasText: clean.runNumber });
		await row.waitFor();
		// Predict from the page, as the aerodynamicist would.
		await row.getByRole('button', { name: 'predict' }).click();
		const lift = page.getByTestId('chart-lift');
		const alert = page.getByRole('alert');
		await expect.poll(async () => ((await alert.count()) ? `problem: ${await alert.first().textContent()} ${apiProblems.join(' | ')}` : lift.getByTestId('chart-legend').textContent()), { timeout: 20_000 }).toMatch(/predicted/);
		const legend = (await lift.getByTestId('chart-legend').locator('li').allTextContents()).map((t) => t.trim());
		expect(legend).toHaveLength(3);
		expect(legend[0]).toMatch(new RegExp(`^run ${clean.runNumber} tolerance ±[\\d.]+ CL$`));
		expect(legend[1]).toMatch(new RegExp(`^run ${clean.runNumber} predicted \\(linear, v\\d+\\)$`));
		expect(legend[2]).toBe(`run ${clean.runNumber} measured`);
		expect(await lift.locator('canvas').count()).toBe(1);
		// Every chart has its legend and its export buttons.
		// The seeded wing has no profile-drag estimate, so the polars have no predicted line (measured only); the induced part has one.
		for (const [id, items] of [['chart-lift', 3], ['chart-polar', 1], ['chart-cl2', 1], ['chart-induced', 3]] as const) {
			const chart = page.getByTestId(id);
			expect(await chart.getByTestId('chart-legend').locator('li').count(), id).toBe(items);
			expect(await chart.getByRole('button', { name: /as PNG/ }).isEnabled()).toBe(true);
			expect(await chart.getByRole('button', { name: /as CSV/ }).isEnabled()).toBe(true);
		}
		// The deltas table of the run is there.
		await page.getByTestId(`deltas-${clean.runNumber}`).waitFor();

		// The lift curve's CSV: 21 measured points and the predicted curve, the same numbers the API gives.
		const [download] = await Promise.all([page.waitForEvent('download'), lift.getByRole('button', { name: /as CSV/ }).click()]);
		const csv: string[][] = parse(readFileSync((await download.path())!, 'utf8'), { bom: true });
		expect(csv[0]).toEqual(['series', 'α (deg)', 'CL', 'CL lower', 'CL upper']);
		const measuredRows = csv.filter((r) => r[0] === `run ${clean.runNumber} measured`);
		const predictedRows = csv.filter((r) => /^run .* predicted \(linear, v\d+\)$/.test(r[0]));
		const bandRows = csv.filter((r) => r[0].startsWith(`run ${clean.runNumber} tolerance`));
		expect(measuredRows).toHaveLength(21);
		expect(predictedRows.length).toBeGreaterThan(20);
		expect(bandRows).toHaveLength(predictedRows.length);
		const api = await (await page.request.get(`${baseUrl()}/api/v1/correlation/runs/${clean.id}`)).json();
		const first = api.points.find((p: { excluded: boolean }) => !p.excluded);
		expect(measuredRows[0].slice(1, 3).map(Number)).toEqual([first.alphaDeg, first.CL]);
		// The band is the predicted line ± the tolerance.
		const t = Number(legend[0].match(/±([\d.]+)/)![1]);
		bandRows.forEach((r, i) => {
			expect(Number(r[3])).toBeCloseTo(Number(predictedRows[i][2]) - t, 12);
			expect(Number(r[4])).toBeCloseTo(Number(predictedRows[i][2]) + t, 12);
		});
		// The PNG export is a real PNG picture.
		const [png] = await Promise.all([page.waitForEvent('download'), lift.getByRole('button', { name: /as PNG/ }).click()]);
		const bytes = readFileSync((await png.path())!);
		expect(bytes.subarray(1, 4).toString()).toBe('PNG');
		expect(bytes.length).toBeGreaterThan(5000);

		await page.screenshot({ path: join(results, 'compare-page.png'), fullPage: true });
		expect(pageErrors).toEqual([]);
	});

	it('overlays a second run and shows the increment between the two configurations, measured versus predicted', async () => {
		const [clean, flap] = runs;
		const row = page.locator('[data-testid="compare-runs"] tr', { hasText: flap.runNumber });
		await row.getByRole('button', { name: 'predict' }).click();
		await row.getByRole('checkbox').check();
		const inc = page.getByTestId('chart-increment');
		await expect.poll(async () => (await inc.count()) && inc.getByTestId('chart-legend').textContent(), { timeout: 20_000 }).toMatch(/predicted ΔCL/);
		const legend = await inc.getByTestId('chart-legend').textContent();
		expect(legend).toContain(`measured ΔCL (run ${flap.runNumber} − run ${clean.runNumber})`);
		// Same measured data under both configurations: the measured increment is zero, the predicted one is the flap's.
		const [download] = await Promise.all([page.waitForEvent('download'), inc.getByRole('button', { name: /as CSV/ }).click()]);
		const lines: string[][] = parse(readFileSync((await download.path())!, 'utf8'), { bom: true }).slice(1);
		const measured = lines.filter((l) => l[0].startsWith('measured')).map((l) => Number(l[2]));
		const predicted = lines.filter((l) => l[0].startsWith('predicted')).map((l) => Number(l[2]));
		expect(measured).toHaveLength(21);
		measured.forEach((v) => expect(Math.abs(v)).toBeLessThan(1e-9));
		expect(predicted.length).toBeGreaterThan(10);
		// A trailing-edge-down flap adds lift at every α (its Δα_L0 < 0, from thin-airfoil theory here).
		predicted.forEach((v) => expect(v).toBeGreaterThan(0.05));
		expect(await page.getByTestId('chart-lift').getByTestId('chart-legend').locator('li').count()).toBe(6);
		await page.screenshot({ path: join(results, 'compare-page-increment.png'), fullPage: true });
		expect(pageErrors).toEqual([]);
	});

	it('calibrates the clean wing to the imported run and shows the calibrated model, the runs and the drift', async () => {
		const [clean] = runs;
		await page.goto(`${baseUrl()}/campaigns/${campaignId}/calibration`);
		const select = page.getByLabel('configuration to calibrate');
		await select.waitFor();
		const option = await select.locator('option', { hasText: /ET-1 model clean wing v\d+/ }).evaluateAll((os) => os.map((o) => ({ value: (o as HTMLOptionElement).value, text: o.textContent ?? '' })));
		const newest = option.sort((a, b) => Number(b.text.match(/v(\d+)/)![1]) - Number(a.text.match(/v(\d+)/)![1]))[0];
		await select.selectOption(newest.value);
		await page.getByLabel(`fit run ${clean.runNumber}`).check();
		await page.getByTestId('calibrate').click();
		const result = page.getByTestId('calibration-result');
		await expect.poll(async () => ((await page.getByRole('alert').count()) ? `problem: ${await page.getByRole('alert').first().textContent()}` : (await result.count()) ? result.textContent() : ''), { timeout: 20_000 }).toMatch(/effective a₀/);
		// The fitted values are the API's, shown with their intervals.
		const history = await (await page.request.get(`${baseUrl()}/api/v1/correlation/campaigns/${campaignId}/calibration`)).json();
		const last = history.items[history.items.length - 1];
		expect(last.runIds).toEqual([clean.id]);
		expect(await result.textContent()).toContain(String(Number(last.result.effectiveA0.value.toPrecision(5))));
		// The calibrated model is drawn against the runs of the campaign, and the run is marked as used.
		const chart = page.getByTestId('chart-calibrated');
		expect(await chart.getByTestId('chart-legend').textContent()).toContain(`run ${clean.runNumber} measured (in the fit)`);
		const row = page.getByTestId('calibration-check').locator('tr', { hasText: clean.runNumber });
		expect(await row.textContent()).toContain('yes');
		// Fitting over its own linear range, the calibrated model is no worse than the original one on that run.
		const check = await (await page.request.get(`${baseUrl()}/api/v1/correlation/calibrations/${last.id}`)).json();
		const mine = check.runs.find((r: { runId: number }) => r.runId === clean.id);
		expect(mine.rmsCalibrated).toBeLessThanOrEqual(mine.rmsOriginal + 1e-12);
		expect(mine.compared).toHaveLength(mine.points);
		await page.getByTestId('chart-drift-a0').waitFor();
		expect(await page.getByTestId('chart-drift-a0').getByTestId('chart-legend').textContent()).toContain('effective a₀');
		await page.screenshot({ path: join(results, 'calibration-page.png'), fullPage: true });
		expect(pageErrors).toEqual([]);
	});
});
