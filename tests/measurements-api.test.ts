// Measurements end to end over the API: upload → storage → worker → reading, against pairs of
// known temperature (synthetic fixtures, fixtures/spectra/truth.json), and every refusal the
// acquisition PC can meet.
import { createHash } from 'node:crypto';
import { ListObjectsV2Command } from '@aws-sdk/client-s3';
import { eq } from 'drizzle-orm';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { measurementFiles, measurements, readings, users } from '../src/lib/server/db/schema';
import { bucket, s3 } from '../src/lib/server/storage';
import { createToken } from '../src/lib/server/tokens';
import { APP_URL, waitForMail } from './support/http';
import {
	coldSiliconPair,
	FIXTURE_PAIRS,
	fixture,
	getJson,
	postMeasurement,
	truth,
	waitForAnalysis
} from './support/pairs';
import { makeWorld, type World } from './support/world';

let world: World;
let other: World;
const C = { c_factor: 1, u_c_factor: 0.02 };

beforeAll(async () => {
	[world, other] = await Promise.all([makeWorld('api'), makeWorld('api-other')]);
});
afterAll(closeDb);

function partsOf(files: Record<string, string>) {
	return Object.fromEntries(Object.entries(files).map(([part, name]) => [part, fixture(name)]));
}

describe('upload to reading', () => {
	it.each(FIXTURE_PAIRS.map((p) => [p.id, p] as const))(
		'%s: the reading holds the known temperature within its expanded uncertainty',
		async (id, pair) => {
			const response = await postMeasurement(world.token, partsOf(pair.files), {
				...pair.metadata,
				...C,
				label: id
			});
			expect(response.status).toBe(202);
			const accepted = await response.json();
			expect(accepted.status).toBe('queued');
			expect(response.headers.get('location')).toBe(accepted.links.self);

			const done = await waitForAnalysis(world.token, accepted.id);
			expect(done.status).toBe('done');
			const expected = truth.find((t) => t.id === id)!.true_temperature_k;
			const r = done.reading;
			// The engine's JSON field names, unchanged, in the API (issue 4 item 2).
			for (const key of [
				'temperature_k',
				'u_temperature_k',
				'expanded_uncertainty_k',
				'coverage_factor',
				'budget',
				'flags'
			]) {
				expect(r).toHaveProperty(key);
			}
			expect(r.coverage_factor).toBe(2);
			expect(Math.abs(r.temperature_k - expected)).toBeLessThan(r.expanded_uncertainty_k);

			const reading = await getJson(world.token, `/api/v1/measurements/${accepted.id}/reading`);
			expect(reading.status).toBe(200);
			expect(reading.body.temperature_k).toBe(r.temperature_k);
		}
	);

	it('keeps the original files unchanged with their SHA-256', async () => {
		const stokes = fixture('si-532-stokes.csv');
		const response = await postMeasurement(
			world.token,
			{ stokes, anti_stokes: fixture('si-532-anti-stokes.csv') },
			{ ...FIXTURE_PAIRS[0].metadata, ...C }
		);
		const { id } = await response.json();
		const { body } = await getJson(world.token, `/api/v1/measurements/${id}`);
		const file = body.files.find((f: { part: string }) => f.part === 'stokes');
		expect(file.sha256).toBe(createHash('sha256').update(stokes).digest('hex'));
		expect(file.bytes).toBe(stokes.byteLength);
	});
});

describe('idempotency', () => {
	it('the same Idempotency-Key twice makes one measurement', async () => {
		const key = `retry-${Date.now()}`;
		const parts = partsOf(FIXTURE_PAIRS[0].files);
		const metadata = { ...FIXTURE_PAIRS[0].metadata, ...C };
		const first = await postMeasurement(world.token, parts, metadata, { 'idempotency-key': key });
		const second = await postMeasurement(world.token, parts, metadata, { 'idempotency-key': key });
		expect(first.status).toBe(202);
		expect(second.status).toBe(202);
		const [a, b] = [await first.json(), await second.json()];
		expect(b.id).toBe(a.id);
		expect(b.created).toBe(false);
		const rows = await db.select().from(measurements).where(eq(measurements.idempotencyKey, key));
		expect(rows).toHaveLength(1);
	});

	it('concurrent retries with one key still make one measurement', async () => {
		const key = `burst-${Date.now()}`;
		const parts = partsOf(FIXTURE_PAIRS[0].files);
		const metadata = { ...FIXTURE_PAIRS[0].metadata, ...C };
		const responses = await Promise.all(
			Array.from({ length: 5 }, () =>
				postMeasurement(world.token, parts, metadata, { 'idempotency-key': key })
			)
		);
		const ids = new Set(await Promise.all(responses.map(async (r) => (await r.json()).id)));
		expect(ids.size).toBe(1);
		const [id] = ids;
		const files = await db
			.select()
			.from(measurementFiles)
			.where(eq(measurementFiles.measurementId, id));
		expect(files).toHaveLength(2);
		// No stray objects from the losing copies.
		const listed = await s3().send(
			new ListObjectsV2Command({
				Bucket: bucket(),
				Prefix: `projects/${world.project.id}/measurements/`
			})
		);
		const folders = new Set(listed.Contents?.map((o) => o.Key!.split('/')[3]));
		const known = new Set(
			(await db.select({ id: measurements.id }).from(measurements)).map((m) => m.id)
		);
		expect([...folders].filter((f) => !known.has(f))).toEqual([]);
	});

	it('refuses the same key for a different upload', async () => {
		const key = `reuse-${Date.now()}`;
		const parts = partsOf(FIXTURE_PAIRS[0].files);
		await postMeasurement(
			world.token,
			parts,
			{ ...FIXTURE_PAIRS[0].metadata, ...C },
			{ 'idempotency-key': key }
		);
		const again = await postMeasurement(
			world.token,
			parts,
			{ ...FIXTURE_PAIRS[0].metadata, ...C, label: 'other' },
			{
				'idempotency-key': key
			}
		);
		expect(again.status).toBe(422);
		expect((await again.json()).detail).toMatch(/Idempotency-Key/);
	});
});

describe('refusals, each in problem+json with what to change', () => {
	const good = () => partsOf(FIXTURE_PAIRS[0].files);
	const meta = { ...FIXTURE_PAIRS[0].metadata, ...C };

	async function refused(response: Response, status: number, detail: RegExp) {
		expect(response.status).toBe(status);
		expect(response.headers.get('content-type')).toBe('application/problem+json');
		const body = await response.json();
		expect(body.detail).toMatch(detail);
		return body;
	}

	it.each([
		[
			'a non-numeric file',
			'not-numeric',
			'broken',
			'x,y\n' + Array.from({ length: 30 }, (_, i) => `${i},abc`).join('\n')
		],
		['an empty file', 'empty', 'empty', '\n\n'],
		['too few points', 'too-few-points', 'few', 'x,y\n1,2\n2,3\n3,4'],
		[
			'a duplicate x',
			'duplicate-x',
			'dup',
			Array.from({ length: 40 }, (_, i) => `${500 + (i === 20 ? 19 : i)},${100 + i}`).join('\n')
		]
	])('%s → 422 naming the problem', async (_label, code, _name, text) => {
		const body = await refused(
			await postMeasurement(world.token, { ...good(), stokes: text }, meta),
			422,
			/stokes/i
		);
		expect(body.code).toContain(code.split('-')[0]);
	});

	it('the anti-Stokes window given in the Stokes part → 422', async () => {
		const parts = {
			stokes: fixture('si-532-anti-stokes.csv'),
			anti_stokes: fixture('si-532-stokes.csv')
		};
		await refused(await postMeasurement(world.token, parts, meta), 422, /anti-Stokes|Stokes/);
	});

	it('a mode outside the windows → 422', async () => {
		await refused(
			await postMeasurement(world.token, good(), { ...meta, modes: [1332.5] }),
			422,
			/band|1332/
		);
	});

	it('metadata without C → 422 naming the field', async () => {
		const body = await refused(
			await postMeasurement(world.token, good(), { laser_nm: 532, modes: [520.7] }),
			422,
			/c_factor/
		);
		expect(body.errors.map((e: { pointer: string }) => e.pointer)).toContain('/c_factor');
	});

	it('metadata that is not JSON → 422', async () => {
		await refused(await postMeasurement(world.token, good(), '{laser_nm:'), 422, /not valid JSON/);
	});

	it('one window only → 422', async () => {
		await refused(
			await postMeasurement(world.token, { stokes: good().stokes }, meta),
			422,
			/anti_stokes/
		);
	});

	it('an oversize file → 413 saying what to change', async () => {
		const big = new Uint8Array(17 * 1024 * 1024).fill(0x31);
		await refused(await postMeasurement(world.token, { ...good(), stokes: big }, meta), 413, /MiB/);
	});

	it('a token without the write scope → 403', async () => {
		const { secret } = await createToken(
			world.project.id,
			'read only',
			['measurements:read'],
			null
		);
		await refused(await postMeasurement(secret, good(), meta), 403, /scope/);
	});

	it("another project's token gets 404 for this project's measurement", async () => {
		const { id } = await (await postMeasurement(world.token, good(), meta)).json();
		for (const path of [`/api/v1/measurements/${id}`, `/api/v1/measurements/${id}/reading`]) {
			const { status, body } = await getJson(other.token, path);
			expect(status).toBe(404);
			expect(body.status).toBe(404);
		}
		expect((await getJson(other.token, '/api/v1/measurements/not-a-uuid')).status).toBe(404);
	});

	it('too many requests from one token → 429 with Retry-After', async () => {
		const { secret } = await createToken(
			other.project.id,
			'chatty PC',
			['measurements:read'],
			null
		);
		let last: Response | undefined;
		// Twice the limit and more: the count is per clock minute, and a run may straddle two.
		for (let i = 0; i < 1300 && last?.status !== 429; i++) {
			last = await fetch(`${APP_URL}/api/v1/whoami`, {
				headers: { authorization: `Bearer ${secret}` }
			});
		}
		const body = await refused(last!, 429, /requests in a minute/);
		expect(body.limit_per_minute).toBeGreaterThan(0);
		expect(Number(last!.headers.get('retry-after'))).toBeGreaterThan(0);
	});
});

describe('large files through presigned uploads', () => {
	it('PUTs straight to storage, then creates the measurement from the keys', async () => {
		const stokes = fixture('si-532-stokes.csv');
		const anti = fixture('si-532-anti-stokes.csv');
		const asked = await fetch(`${APP_URL}/api/v1/uploads`, {
			method: 'POST',
			headers: { authorization: `Bearer ${world.token}`, 'content-type': 'application/json' },
			body: JSON.stringify({
				files: [
					{ part: 'stokes', file_name: 'big-stokes.csv', bytes: stokes.byteLength },
					{ part: 'anti_stokes', file_name: 'big-anti.csv', bytes: anti.byteLength }
				]
			})
		});
		expect(asked.status).toBe(201);
		const { uploads } = await asked.json();
		for (const u of uploads) {
			const body = u.part === 'stokes' ? stokes : anti;
			const put = await fetch(u.url, { method: 'PUT', body });
			expect(put.status).toBe(200);
		}
		const keys = Object.fromEntries(
			uploads.map((u: { part: string; upload_key: string }) => [u.part, u.upload_key])
		);
		const created = await fetch(`${APP_URL}/api/v1/measurements`, {
			method: 'POST',
			headers: { authorization: `Bearer ${world.token}`, 'content-type': 'application/json' },
			body: JSON.stringify({
				metadata: { ...FIXTURE_PAIRS[0].metadata, ...C, label: 'presigned' },
				uploads: keys
			})
		});
		expect(created.status).toBe(202);
		const done = await waitForAnalysis(world.token, (await created.json()).id);
		expect(done.status).toBe('done');
		expect(done.files.find((f: { part: string }) => f.part === 'stokes').sha256).toBe(
			createHash('sha256').update(stokes).digest('hex')
		);
		// The staging objects are gone once the measurement holds its own copies.
		const staged = await s3().send(
			new ListObjectsV2Command({ Bucket: bucket(), Prefix: keys.stokes })
		);
		expect(staged.Contents ?? []).toEqual([]);
	});

	it("refuses keys that are not this project's uploads", async () => {
		const response = await fetch(`${APP_URL}/api/v1/measurements`, {
			method: 'POST',
			headers: { authorization: `Bearer ${world.token}`, 'content-type': 'application/json' },
			body: JSON.stringify({
				metadata: { ...FIXTURE_PAIRS[0].metadata, ...C },
				uploads: {
					stokes: `uploads/${other.project.id}/x/stokes/a.csv`,
					anti_stokes: 'projects/1/x'
				}
			})
		});
		expect(response.status).toBe(422);
	});
});

describe('listing and export', () => {
	it('filters by label series and pages with a cursor', async () => {
		const series = `sweep-${Date.now()}`;
		const ids: string[] = [];
		for (let i = 0; i < 3; i++) {
			const r = await postMeasurement(other.token, partsOf(FIXTURE_PAIRS[0].files), {
				...FIXTURE_PAIRS[0].metadata,
				...C,
				series,
				label: `spot ${i}`
			});
			ids.push((await r.json()).id);
		}
		const first = await getJson(other.token, `/api/v1/measurements?series=${series}&limit=2`);
		expect(first.body.items).toHaveLength(2);
		expect(first.body.next_cursor).toBeTruthy();
		const second = await getJson(
			other.token,
			`/api/v1/measurements?series=${series}&limit=2&cursor=${first.body.next_cursor}`
		);
		expect(second.body.items).toHaveLength(1);
		expect(second.body.next_cursor).toBeNull();
		const seen = [...first.body.items, ...second.body.items].map((m: { id: string }) => m.id);
		expect(seen.sort()).toEqual(ids.sort());
		expect((await getJson(other.token, '/api/v1/measurements?cursor=garbage')).status).toBe(400);
	});

	it('the CSV export round-trips the readings the API returns', async () => {
		const r = await postMeasurement(other.token, partsOf(FIXTURE_PAIRS[1].files), {
			...FIXTURE_PAIRS[1].metadata,
			...C,
			label: 'csv'
		});
		const { id } = await r.json();
		const done = await waitForAnalysis(other.token, id);
		const csv = await fetch(`${APP_URL}/api/v1/readings.csv`, {
			headers: { authorization: `Bearer ${other.token}` }
		});
		expect(csv.headers.get('content-type')).toContain('text/csv');
		const parsed = Papa.parse<Record<string, string>>(await csv.text(), {
			header: true,
			skipEmptyLines: true
		});
		const row = parsed.data.find((x) => x.measurement_id === id)!;
		expect(Number(row.temperature_k)).toBe(done.reading.temperature_k);
		expect(Number(row.expanded_uncertainty_k)).toBe(done.reading.expanded_uncertainty_k);
		expect(row.label).toBe('csv');
		expect(row.flags.split(' ').filter(Boolean)).toEqual(
			done.reading.flags.map((f: { code: string }) => f.code)
		);
	});
});

describe('mail preferences', () => {
	it('sends nothing to an uploader who switched the notices off', async () => {
		await db
			.update(users)
			.set({ notifyOnProblems: false })
			.where(eq(users.id, other.people.owner.id));
		const started = Date.now();
		const pair = coldSiliconPair(8);
		const response = await postMeasurement(
			other.token,
			{ stokes: pair.stokes, anti_stokes: pair.anti_stokes },
			{
				laser_nm: 532,
				modes: [520.7],
				x_axis: 'raman-shift',
				...C,
				label: 'quiet cold film'
			}
		);
		await waitForAnalysis(other.token, (await response.json()).id);
		await expect(waitForMail(other.people.owner.email, started, 3000)).rejects.toThrow(/no mail/);
	});
});

describe('a reading the data cannot support', () => {
	it('withholds the temperature, says why, and e-mails the uploader', async () => {
		const pair = coldSiliconPair(7);
		const started = Date.now();
		const response = await postMeasurement(
			world.token,
			{ stokes: pair.stokes, anti_stokes: pair.anti_stokes },
			{
				laser_nm: 532,
				modes: [520.7],
				x_axis: 'raman-shift',
				...C,
				label: 'cold film'
			}
		);
		const { id } = await response.json();
		const done = await waitForAnalysis(world.token, id);
		const errors = (done.reading?.flags ?? []).filter(
			(f: { severity: string }) => f.severity === 'error'
		);
		if (done.status === 'done') {
			expect(done.reading.temperature_k).toBeNull();
			expect(errors.length).toBeGreaterThan(0);
		} else {
			expect(done.failure.message).toBeTruthy();
		}
		const mail = await waitForMail(world.people.owner.email, started);
		expect(mail.subject).toMatch(/cold film/);
		expect(mail.text).toContain(`/measurements/${id}`);
		const rows = await db.select().from(readings).where(eq(readings.measurementId, id));
		expect(rows.length).toBeLessThanOrEqual(1);
	});
});
