// The reading page and its downloads (issue 4, items 5–6), over HTTP against the running app:
// a measurement goes in through the API with the world's token, the worker reads it, and then
// people of each role look at it, download it and re-analyse it.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { readings } from '../src/lib/server/db/schema';
import { APP_URL, signIn, type Session } from './support/http';
import { getJson, postMeasurement, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';
import { syntheticPair, type SyntheticSpec } from '../src/lib/thermometry/synthetic';

const FIXTURES = new URL('../fixtures/spectra/', import.meta.url);
const STOKES = 'si-532-stokes.csv';
const ANTI_STOKES = 'si-532-anti-stokes.csv';

let world: World;
let id: string;
let member: Session;
let viewer: Session;
let analyst: Session;
let outsider: Session;

const path = () => `/projects/${world.project.slug}/measurements/${id}`;

async function upload(): Promise<string> {
	const form = new FormData();
	for (const [part, name] of [
		['stokes', STOKES],
		['anti_stokes', ANTI_STOKES]
	]) {
		form.append(part, new Blob([readFileSync(new URL(name, FIXTURES))]), name);
	}
	form.append(
		'metadata',
		JSON.stringify({
			laser_nm: 532,
			modes: [520.7],
			c_factor: 1,
			u_c_factor: 0.02,
			exposure_stokes_s: 1,
			exposure_anti_stokes_s: 4,
			dark_counts: 300,
			label: 'reading page A1'
		})
	);
	const response = await fetch(`${APP_URL}/api/v1/measurements`, {
		method: 'POST',
		headers: { authorization: `Bearer ${world.token}` },
		body: form
	});
	expect(response.status).toBe(202);
	return ((await response.json()) as { id: string }).id;
}

async function waitForReadings(n: number, timeoutMs = 30_000) {
	const deadline = Date.now() + timeoutMs;
	while (Date.now() < deadline) {
		const rows = await db.select().from(readings).where(eq(readings.measurementId, id));
		if (rows.length >= n) return rows;
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`fewer than ${n} readings after ${timeoutMs} ms`);
}

beforeAll(async () => {
	world = await makeWorld('reading');
	[member, viewer, analyst, outsider] = await Promise.all([
		signIn(world.people.owner.email, PASSWORD),
		signIn(world.people.viewer.email, PASSWORD),
		signIn(world.people.analyst.email, PASSWORD),
		signIn(world.people.outsider.email, PASSWORD)
	]);
	id = await upload();
	await waitForReadings(1);
}, 60_000);
afterAll(closeDb);

describe('the reading page', () => {
	it('shows a member the temperature with its expanded uncertainty, k and °C', async () => {
		const response = await viewer.get(path());
		expect(response.status).toBe(200);
		const html = await response.text();
		// si-532 is 350 K; C = 1 ± 0.02 makes U about 7 K at k = 2 (GUM-rounded to two digits).
		const match = /(\d{3}\.\d) K <span[^>]*>± (\d\.\d) K<\/span>/.exec(html);
		expect(match, 'the headline temperature').not.toBeNull();
		expect(Math.abs(Number(match![1]) - 350)).toBeLessThan(Number(match![2]));
		expect(html).toContain('(k = 2)');
		expect(html).toMatch(/\d+\.\d °C ± \d\.\d °C/);
		expect(html).toContain('Uncertainty budget');
	});

	it('lists the measurement in the project table with T ± U and who uploaded it', async () => {
		const response = await viewer.get(
			`/projects/${world.project.slug}/measurements?q=reading+page`
		);
		expect(response.status).toBe(200);
		const html = await response.text();
		expect(html).toContain('reading page A1');
		expect(html).toMatch(/\d{3}\.\d K ± \d\.\d K \(k = 2\)/);
		expect(html).toContain('test PC');
	});

	it('answers a non-member with 404 for the page, the files and the downloads', async () => {
		for (const p of [
			path(),
			`${path()}/files/stokes`,
			`${path()}/reading.json`,
			`${path()}/reading.csv`,
			`/projects/${world.project.slug}/measurements/readings.csv`
		]) {
			expect((await outsider.get(p)).status, p).toBe(404);
		}
	});

	it('gives the reading as JSON with the engine field names, and as CSV', async () => {
		const json = await viewer.get(`${path()}/reading.json`);
		expect(json.status).toBe(200);
		const body = (await json.json()) as Record<string, unknown>;
		expect(body.measurement_id).toBe(id);
		expect(body.temperature_k).toBeTypeOf('number');
		expect(body.coverage_factor).toBe(2);
		expect(Array.isArray(body.budget)).toBe(true);
		const csv = await viewer.get(`${path()}/reading.csv`);
		expect(csv.status).toBe(200);
		expect(await csv.text()).toMatch(/^measurement_id,reading_id,/);
	});

	it('hands back each original file byte for byte under its own name', async () => {
		for (const [part, name] of [
			['stokes', STOKES],
			['anti_stokes', ANTI_STOKES]
		]) {
			const response = await viewer.get(`${path()}/files/${part}`);
			expect(response.status).toBe(200);
			expect(response.headers.get('content-disposition')).toContain(name);
			const got = createHash('sha256')
				.update(Buffer.from(await response.arrayBuffer()))
				.digest('hex');
			const want = createHash('sha256')
				.update(readFileSync(new URL(name, FIXTURES)))
				.digest('hex');
			expect(got).toBe(want);
		}
	});

	it('refuses re-analysis to a viewer (403)', async () => {
		const response = await viewer.post(`${path()}?/reanalyse`, { lineshape: 'gaussian' });
		expect(response.status).toBe(403);
	});

	it('puts a wrong value back next to its field', async () => {
		const response = await analyst.post(`${path()}?/reanalyse`, { c_factor: '-1' });
		expect(response.status).toBe(400);
		expect(await response.text()).toContain('C must be a number above zero');
	});

	it('lets an analyst re-analyse: a new reading appears and the old one stays', async () => {
		const [before] = await waitForReadings(1);
		const response = await analyst.post(`${path()}?/reanalyse`, {
			lineshape: 'gaussian',
			c_factor: '1',
			u_c_factor: '0.01',
			coverage_factor: '2'
		});
		expect(response.status).toBe(303);
		const rows = await waitForReadings(2);
		expect(rows.map((r) => r.id)).toContain(before.id);
		const newer = rows.find((r) => r.id !== before.id)!;
		expect((newer.result as { lineshape: string }).lineshape).toBe('gaussian');
		const page = await (await member.get(path())).text();
		expect(page).toContain(`?reading=${before.id}`);
		expect(page).toContain(`?reading=${newer.id}`);
		const old = await member.get(`${path()}?reading=${before.id}`);
		expect(old.status).toBe(200);
		expect(await old.text()).toContain('an earlier reading');
	}, 60_000);
});

describe('a measurement with several modes (issue 5, item 4)', () => {
	// Two bands of one invented crystal at 568 and 734 cm⁻¹, both at 400 K, made by the engine's
	// generator on shared axes and added pixel by pixel (sums of Poisson counts stay Poisson).
	const T = 400;
	const spec = (modeCm1: number, seed: number): SyntheticSpec => ({
		laserNm: 532,
		modeCm1,
		temperatureK: T,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 5,
		stokesCounts: 2e5,
		exposureS: { stokes: 1, antiStokes: 2 },
		window: { halfRangeCm1: 250, points: 1600, centreCm1: 651 },
		seed
	});
	const csv = (shift: Float64Array, counts: Float64Array) =>
		'raman_shift_cm-1,counts\n' +
		Array.from(shift, (x, i) => `${x.toFixed(4)},${Math.round(counts[i])}`).join('\n');

	it('shows each mode’s temperature, the weighted mean and the consistency check', async () => {
		const a = syntheticPair(spec(568, 11));
		const b = syntheticPair(spec(734, 12));
		const sum = (x: Float64Array, y: Float64Array) => x.map((v, i) => v + y[i]);
		const parts = {
			stokes: csv(a.stokes.raw.shift, sum(a.stokes.raw.counts, b.stokes.raw.counts)),
			anti_stokes: csv(
				a.antiStokes.raw.shift,
				sum(a.antiStokes.raw.counts, b.antiStokes.raw.counts)
			)
		};
		const posted = await postMeasurement(world.token, parts, {
			laser_nm: 532,
			modes: [568, 734],
			exposure_stokes_s: 1,
			exposure_anti_stokes_s: 2,
			c_factor: 1,
			u_c_factor: 0.01,
			label: 'two-mode crystal'
		});
		expect(posted.status).toBe(202);
		const { id: twoModes } = await posted.json();
		expect((await waitForAnalysis(world.token, twoModes)).status).toBe('done');
		const { body: r } = await getJson(world.token, `/api/v1/measurements/${twoModes}/reading`);
		expect(r.modes).toHaveLength(2);
		// Each mode, and the mean, holds the generator's temperature within its expanded uncertainty.
		for (const m of r.modes)
			expect(Math.abs(m.temperature_k - T)).toBeLessThan(2 * m.u_temperature_k);
		expect(Math.abs(r.temperature_k - T)).toBeLessThan(r.expanded_uncertainty_k);
		expect(r.birge_ratio).toBeGreaterThan(0);
		const html = await (
			await member.get(`/projects/${world.project.slug}/measurements/${twoModes}`)
		).text();
		expect(html).toMatch(/Weighted mean of <span class="num">2<\/span> modes/);
		expect(html).toContain('Birge ratio of the modes');
		for (const m of r.modes) expect(html).toContain(`${m.mode_cm1} cm⁻¹`);
	}, 60_000);
});
