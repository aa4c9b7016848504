// Spectrum pairs for API tests: the committed synthetic fixtures (known temperatures in
// fixtures/spectra/truth.json) and fresh ones from the engine's own generator.
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';
import { join } from 'node:path';
import { syntheticPair, type SyntheticSpec } from '../../src/lib/thermometry/synthetic';
import { APP_URL } from './http';

const FIXTURES = join(import.meta.dirname, '..', '..', 'fixtures', 'spectra');

export const fixture = (name: string) => readFileSync(join(FIXTURES, name));
export const truth = JSON.parse(readFileSync(join(FIXTURES, 'truth.json'), 'utf8')) as {
	id: string;
	true_temperature_k: number;
}[];

/** The committed fixture pairs with the metadata each was made with (fixtures/spectra/README.md). */
export const FIXTURE_PAIRS = [
	{
		id: 'si-532',
		files: { stokes: 'si-532-stokes.csv', anti_stokes: 'si-532-anti-stokes.csv' },
		metadata: {
			laser_nm: 532,
			modes: [520.7],
			exposure_stokes_s: 1,
			exposure_anti_stokes_s: 4,
			dark_counts: 300
		}
	},
	{
		id: 'diamond-633',
		files: { stokes: 'diamond-633-stokes.tsv', anti_stokes: 'diamond-633-anti-stokes.tsv' },
		metadata: { laser_nm: 633, modes: [1332.5], exposure_stokes_s: 1, exposure_anti_stokes_s: 10 }
	},
	{
		id: 'ge-785',
		files: { stokes: 'ge-785-stokes.jdx', anti_stokes: 'ge-785-anti-stokes.jdx' },
		metadata: {
			laser_nm: 785,
			modes: [300.7],
			lineshape: 'gaussian',
			exposure_stokes_s: 2,
			exposure_anti_stokes_s: 2
		}
	},
	{
		id: 'si-785-combined',
		files: { combined: 'si-785-combined.csv', dark: 'si-785-dark.csv' },
		metadata: { laser_nm: 785, modes: [520.7], exposure_stokes_s: 2, baseline: 'polynomial' }
	}
] as const;

/** A synthetic pair as two CSV texts on the Raman-shift axis. */
export function syntheticCsv(spec: SyntheticSpec) {
	const pair = syntheticPair(spec);
	const csv = (w: typeof pair.stokes) =>
		'raman_shift_cm-1,counts\n' +
		Array.from(w.raw.shift, (x, i) => `${x.toFixed(4)},${Math.round(w.raw.counts[i])}`).join('\n');
	return { stokes: csv(pair.stokes), anti_stokes: csv(pair.antiStokes), truth: pair.truth };
}

// Si at 40 K: the anti-Stokes band is e^(−c₂·520.7/40) ≈ 10⁻⁸ of the Stokes one — not there.
export const coldSiliconPair = (seed: number) =>
	syntheticCsv({
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK: 40,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 2e5,
		seed
	});

export type Parts = Partial<
	Record<'stokes' | 'anti_stokes' | 'combined' | 'dark', Uint8Array | string>
>;

export async function postMeasurement(
	token: string,
	parts: Parts,
	metadata: unknown,
	headers: Record<string, string> = {}
): Promise<Response> {
	const form = new FormData();
	for (const [part, content] of Object.entries(parts)) {
		form.append(part, new Blob([content as BlobPart], { type: 'text/plain' }), `${part}.csv`);
	}
	form.append('metadata', typeof metadata === 'string' ? metadata : JSON.stringify(metadata));
	return fetch(`${APP_URL}/api/v1/measurements`, {
		method: 'POST',
		headers: { authorization: `Bearer ${token}`, ...headers },
		body: form
	});
}

export async function getJson(token: string, path: string) {
	const response = await fetch(`${APP_URL}${path}`, {
		headers: { authorization: `Bearer ${token}` }
	});
	return { status: response.status, body: await response.json() };
}

/** Poll a measurement until its analysis is done or failed. */
export async function waitForAnalysis(token: string, id: string, timeoutMs = 30_000) {
	const deadline = Date.now() + timeoutMs;
	while (Date.now() < deadline) {
		const { body } = await getJson(token, `/api/v1/measurements/${id}`);
		if (body.status === 'done' || body.status === 'failed') return body;
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`measurement ${id} was not analysed within ${timeoutMs} ms`);
}

/** The Si 532 nm fixture pair as the ingest service takes it, for tests that call it directly. */
export function si532Ingest() {
	const file = (part: 'stokes' | 'anti_stokes', name: string) => ({
		part,
		fileName: name,
		contentType: 'text/csv',
		bytes: new Uint8Array(fixture(name))
	});
	return {
		metadata: { ...FIXTURE_PAIRS[0].metadata, c_factor: 1, u_c_factor: 0.02 } as never,
		files: [file('stokes', 'si-532-stokes.csv'), file('anti_stokes', 'si-532-anti-stokes.csv')]
	};
}

/** Upload the Si 532 nm fixture pair with a label and wait for its reading (which must come). */
export async function measureSi532(token: string, label: string) {
	const pair = FIXTURE_PAIRS[0];
	const parts = Object.fromEntries(
		Object.entries(pair.files).map(([part, name]) => [part, fixture(name)])
	);
	const response = await postMeasurement(token, parts, {
		...pair.metadata,
		c_factor: 1,
		u_c_factor: 0.02,
		label
	});
	expect(response.status).toBe(202);
	const { id } = (await response.json()) as { id: string };
	const done = await waitForAnalysis(token, id);
	expect(done.status).toBe('done');
	return { id, reading: done.reading.id as string };
}
