// `npm run bench:ingest -- [--url U] [--token T] [-n 200] [-c 16]`: concurrent API uploads on
// loopback against a running Phonotherm (npm start). Prints uploads per second, the latency
// from the start of an upload to its reading, and how many measurements were lost or
// duplicated (both must be zero). Figures only; no assertions.
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { syntheticPair } from '../src/lib/thermometry/synthetic';

const { values } = parseArgs({
	options: {
		url: { type: 'string', default: 'http://127.0.0.1:3000' },
		token: { type: 'string' },
		n: { type: 'string', short: 'n', default: '200' },
		c: { type: 'string', short: 'c', default: '16' },
		timeout: { type: 'string', default: '300' }
	}
});
const base = values.url!;
const total = Number(values.n);
const concurrency = Number(values.c);
const credentials = join(import.meta.dirname, '..', '.data', 'demo-credentials.json');
const token =
	values.token ??
	(existsSync(credentials) ? JSON.parse(readFileSync(credentials, 'utf8')).token : '');
if (!token) throw new Error('Pass --token, or run `npm start` first so the demo token exists.');
const auth = { authorization: `Bearer ${token}` };
const run = `bench-${Date.now().toString(36)}`;

// A handful of distinct pairs, reused: the benchmark measures the service, not the generator.
const pairs = Array.from({ length: 8 }, (_, i) => {
	const p = syntheticPair({
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK: 300 + 25 * i,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 1e5,
		window: { halfRangeCm1: 120, points: 2000 },
		seed: 900 + i
	});
	const csv = (w: typeof p.stokes) =>
		'raman_shift_cm-1,counts\n' +
		Array.from(w.raw.shift, (x, j) => `${x.toFixed(3)},${Math.round(w.raw.counts[j])}`).join('\n');
	return { stokes: csv(p.stokes), anti_stokes: csv(p.antiStokes) };
});

const started = new Map<string, number>(); // idempotency key → upload start (ms)
const accepted = new Map<string, string>(); // key → measurement id
let retries = 0;
let refused = 0;

async function upload(i: number) {
	const key = `${run}-${i}`;
	const pair = pairs[i % pairs.length];
	for (let attempt = 0; attempt < 8; attempt++) {
		const form = new FormData();
		form.append('stokes', new Blob([pair.stokes]), 'stokes.csv');
		form.append('anti_stokes', new Blob([pair.anti_stokes]), 'anti-stokes.csv');
		form.append(
			'metadata',
			JSON.stringify({
				laser_nm: 532,
				modes: [520.7],
				x_axis: 'raman-shift',
				c_factor: 1,
				u_c_factor: 0.02,
				series: run,
				label: key
			})
		);
		if (!started.has(key)) started.set(key, Date.now());
		try {
			const r = await fetch(`${base}/api/v1/measurements`, {
				method: 'POST',
				headers: { ...auth, 'idempotency-key': key },
				body: form
			});
			if (r.status === 202) {
				accepted.set(key, (await r.json()).id);
				return;
			}
			if (r.status === 429 || r.status === 503) {
				retries++;
				await new Promise((res) =>
					setTimeout(res, 1000 * Number(r.headers.get('retry-after') ?? 1))
				);
				continue;
			}
			refused++;
			console.error(`upload ${key}: ${r.status} ${await r.text()}`);
			return;
		} catch {
			retries++; // a dropped connection: retry with the same key, as an acquisition PC would
		}
	}
}

const t0 = Date.now();
let next = 0;
await Promise.all(
	Array.from({ length: concurrency }, async () => {
		while (next < total) await upload(next++);
	})
);
const uploadSeconds = (Date.now() - t0) / 1000;

// Poll the series until every accepted upload has its reading (or failed), then count.
interface Item {
	id: string;
	label: string;
	status: string;
	reading: { created_at: string } | null;
}
async function listSeries(): Promise<Item[]> {
	const items: Item[] = [];
	let url: string | null = `${base}/api/v1/measurements?series=${run}&limit=500`;
	while (url) {
		const r = await fetch(url, { headers: auth }).catch(() => null);
		if (!r) throw new Error(`${base} does not answer; is it still running?`);
		if (r.status === 429) {
			await new Promise((res) => setTimeout(res, 1000 * Number(r.headers.get('retry-after') ?? 1)));
			continue;
		}
		const page = await r.json();
		items.push(...page.items);
		url = page.links.next;
	}
	return items;
}
const deadline = Date.now() + Number(values.timeout) * 1000;
let items: Item[] = [];
while (Date.now() < deadline) {
	items = await listSeries();
	if (
		items.length >= accepted.size &&
		items.every((m) => m.status === 'done' || m.status === 'failed')
	)
		break;
	await new Promise((res) => setTimeout(res, 500));
}
const allSeconds = (Date.now() - t0) / 1000;

const latencies = items
	.filter((m) => m.reading)
	.map((m) => new Date(m.reading!.created_at).getTime() - started.get(m.label)!)
	.sort((a, b) => a - b);
const pct = (p: number) =>
	latencies[Math.min(latencies.length - 1, Math.floor((p / 100) * latencies.length))] ?? NaN;
const ids = new Set(items.map((m) => m.id));
const labels = new Set(items.map((m) => m.label));
const lost =
	[...accepted.keys()].filter((k) => !labels.has(k)).length +
	items.filter((m) => m.status !== 'done' && m.status !== 'failed').length;
const duplicated = items.length - labels.size;

console.log(`Phonotherm ingest benchmark against ${base} (run ${run})`);
console.log(
	`  uploads: ${total} sent by ${concurrency} concurrent clients, ${accepted.size} accepted, ${refused} refused, ${retries} retries`
);
console.log(
	`  upload throughput: ${(accepted.size / uploadSeconds).toFixed(1)} uploads/s (${uploadSeconds.toFixed(1)} s)`
);
console.log(
	`  all readings in after ${allSeconds.toFixed(1)} s: ${(latencies.length / allSeconds).toFixed(1)} readings/s end to end`
);
console.log(
	`  upload → reading latency: p50 ${pct(50)} ms, p95 ${pct(95)} ms, p99 ${pct(99)} ms (n = ${latencies.length})`
);
console.log(`  failed analyses: ${items.filter((m) => m.status === 'failed').length}`);
console.log(`  lost: ${lost}   duplicated: ${duplicated}   (distinct ids ${ids.size})`);
