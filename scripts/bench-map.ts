// `npm run bench:map -- [--size 100] [--runs 7] [--url http://127.0.0.1:3000] [--keep]`: the
// compact map load for a size × size map (10 000 readings by default). Straight against the
// database (DATABASE_URL, or .env): it makes a throwaway project whose readings are inserted
// directly, not analysed, then times the page's one-query column load and, when an app URL is
// given, GET /api/v1/series/{name}. Prints payload sizes and the median time per load; figures
// only, no assertions.
import { existsSync, readFileSync } from 'node:fs';
import { parseArgs, parseEnv } from 'node:util';

const { values } = parseArgs({
	options: {
		size: { type: 'string', default: '100' },
		runs: { type: 'string', default: '7' },
		url: { type: 'string' },
		keep: { type: 'boolean', default: false }
	}
});
if (existsSync('.env')) {
	for (const [k, v] of Object.entries(parseEnv(readFileSync('.env', 'utf8')))) process.env[k] ??= v;
}
if (!process.env.DATABASE_URL) {
	throw new Error('Set DATABASE_URL (or put it in .env) to the database of the app to measure.');
}
// Only the database is touched; the rest of the app's configuration just has to parse.
for (const [k, v] of Object.entries({
	S3_ENDPOINT: 'http://127.0.0.1:9',
	S3_BUCKET: 'unused',
	S3_ACCESS_KEY_ID: 'unused',
	S3_SECRET_ACCESS_KEY: 'unused',
	SMTP_URL: 'smtp://127.0.0.1:9',
	AUTH_SECRET: 'bench-map-signs-in-nobody',
	ORIGIN: values.url ?? 'http://127.0.0.1:3000'
}))
	process.env[k] ??= v;

const { eq } = await import('drizzle-orm');
const { closeDb, db } = await import('../src/lib/server/db');
const schema = await import('../src/lib/server/db/schema');
const { loadSeriesPoints } = await import('../src/lib/server/series');
const { loadMapColumns } = await import('../src/lib/server/series-map');
const { createToken } = await import('../src/lib/server/tokens');

const size = Number(values.size);
const runs = Number(values.runs);
const NAME = 'bench map';
const tag = `bench-map-${Date.now().toString(36)}`;

const median = (xs: number[]) => {
	const s = [...xs].sort((a, b) => a - b);
	return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
async function time(what: () => Promise<number>) {
	await what(); // warm-up: connections, plans, caches
	const ms: number[] = [];
	let bytes = 0;
	for (let i = 0; i < runs; i++) {
		const t0 = performance.now();
		bytes = await what();
		ms.push(performance.now() - t0);
	}
	return { median: median(ms), min: Math.min(...ms), max: Math.max(...ms), bytes };
}
const print = (label: string, r: Awaited<ReturnType<typeof time>>) =>
	console.log(
		`${label.padEnd(44)} ${String(r.bytes).padStart(9)} B   median ${r.median.toFixed(1).padStart(7)} ms  (min ${r.min.toFixed(1)}, max ${r.max.toFixed(1)}, ${runs} runs)`
	);

const [project] = await db
	.insert(schema.projects)
	.values({ slug: tag, name: `Benchmark ${tag}` })
	.returning();
try {
	await db.insert(schema.series).values({ projectId: project.id, name: NAME, kind: 'map' });
	const t0 = performance.now();
	const metadata = {
		laser_nm: 532,
		modes: [520.7],
		detector: 'photon-counting',
		lineshape: 'lorentzian',
		x_axis: 'raman-shift',
		baseline: 'none',
		c_factor: 1,
		u_c_factor: 0.02,
		coverage_factor: 2,
		series: NAME
	} as const;
	const cells = Array.from({ length: size * size }, (_, i) => ({
		x: (i % size) * 2,
		y: Math.floor(i / size) * 2
	}));
	// A hot spot in the middle of the map, as the demo's film has.
	const tAt = (x: number, y: number) =>
		300 + 150 * Math.exp(-((x - size) ** 2 + (y - size) ** 2) / (2 * (size / 4) ** 2));
	const empty = { shift: [], rate: [], usable: [] };
	for (let i = 0; i < cells.length; i += 1000) {
		const chunk = cells.slice(i, i + 1000);
		await db.transaction(async (tx) => {
			const ms = await tx
				.insert(schema.measurements)
				.values(
					chunk.map((c) => ({
						projectId: project.id,
						status: 'done' as const,
						metadata: { ...metadata, x: c.x, y: c.y },
						series: NAME,
						x: c.x,
						y: c.y,
						laserPowerMw: 5
					}))
				)
				.returning({ id: schema.measurements.id, x: schema.measurements.x });
			const as = await tx
				.insert(schema.analyses)
				.values(
					ms.map((m) => ({ measurementId: m.id, settings: metadata, status: 'done' as const }))
				)
				.returning({ id: schema.analyses.id, measurementId: schema.analyses.measurementId });
			await tx.insert(schema.readings).values(
				as.map((a, j) => {
					const t = tAt(chunk[j].x, chunk[j].y);
					const u = 1 + t / 150;
					return {
						measurementId: a.measurementId,
						analysisId: a.id,
						temperatureK: t,
						uTemperatureK: u,
						expandedUncertaintyK: 2 * u,
						coverageFactor: 2,
						worstSeverity: 'none' as const,
						flagCodes: [],
						engineVersion: 'bench',
						result: {},
						spectra: { stokes: empty, anti_stokes: empty }
					};
				})
			);
		});
	}
	console.log(
		`${size} × ${size} map: ${cells.length} measurements with readings inserted in ${((performance.now() - t0) / 1000).toFixed(1)} s (project ${tag})`
	);

	print(
		'loadMapColumns (the map page, one query)',
		await time(async () => JSON.stringify(await loadMapColumns(project.id, NAME)).length)
	);
	print(
		'loadSeriesPoints (every field, two queries)',
		await time(async () => JSON.stringify(await loadSeriesPoints(project.id, NAME)).length)
	);
	if (values.url) {
		const { secret } = await createToken(project.id, 'bench', ['measurements:read'], null);
		const url = `${values.url}/api/v1/series/${encodeURIComponent(NAME)}`;
		print(
			'GET /api/v1/series/{name} (columns, HTTP)',
			await time(async () => {
				const response = await fetch(url, { headers: { authorization: `Bearer ${secret}` } });
				if (!response.ok) throw new Error(`${url}: ${response.status} ${await response.text()}`);
				return (await response.arrayBuffer()).byteLength;
			})
		);
	}
} finally {
	if (!values.keep) await db.delete(schema.projects).where(eq(schema.projects.id, project.id));
	await closeDb();
}
