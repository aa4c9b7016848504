import { eq } from 'drizzle-orm';
import type { MeasurementMetadata, MeasurementRequest } from '../../measurement-metadata';
import { syntheticPair, type SyntheticSpec } from '../../thermometry/synthetic';
import { db } from '../db';
import { analyses, projects } from '../db/schema';
import { ingestMeasurement } from '../measurements/ingest';
import { runAnalysis } from '../worker/analyse';
import { DEMO_PROFILE, seedDemoInstruments } from './instruments';

/**
 * Demo measurements made by the engine's own synthetic generator (seeded Poisson counts of a
 * known temperature), uploaded and analysed like real ones. All of it is invented: the films,
 * the pellets, the batches and the temperatures.
 */

interface DemoCase {
	spec: SyntheticSpec;
	metadata: Partial<MeasurementRequest>;
}

const csv = (shift: Float64Array, counts: Float64Array) =>
	'# synthetic demo spectrum (Phonotherm seed)\nraman_shift_cm-1,counts\n' +
	Array.from(shift, (x, i) => `${x.toFixed(3)},${Math.round(counts[i])}`).join('\n');

function silicon(t: number, seed: number, extra: Partial<SyntheticSpec> = {}): SyntheticSpec {
	return {
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK: t,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 8e4,
		exposureS: { stokes: 1, antiStokes: 4 },
		window: { halfRangeCm1: 120, points: 1200 },
		baseline: { level: 40, slope: 1e-3, antiStokesFraction: 0.05 },
		seed,
		...extra
	};
}

// The laser, detector and C of these come from the bench's profile and its calibration.
const ON_PROFILE: Partial<MeasurementRequest> = {
	profile: DEMO_PROFILE,
	laser_nm: undefined,
	detector: undefined,
	c_factor: undefined,
	u_c_factor: undefined
};

function filmCases(): DemoCase[] {
	const cases: DemoCase[] = [];
	// A 5 × 4 map across film A1 with a hot spot near (40, 20) µm.
	let seed = 100;
	for (let ix = 0; ix < 5; ix++) {
		for (let iy = 0; iy < 4; iy++) {
			const x = ix * 20;
			const y = iy * 20;
			const t = 305 + 165 * Math.exp(-((x - 40) ** 2 + (y - 20) ** 2) / (2 * 18 ** 2));
			cases.push({
				spec: silicon(t, seed++),
				metadata: {
					...ON_PROFILE,
					label: `film A1 (${x}, ${y}) µm`,
					series: 'film A1 map',
					x,
					y,
					laser_power_mw: 5
				}
			});
		}
	}
	// Probe-heating sweep on film A2: the spot warms by about 4 K per mW.
	for (const p of [2, 4, 6, 8, 10]) {
		cases.push({
			spec: silicon(297 + 4.1 * p, seed++, { stokesCounts: 2e4 * p }),
			metadata: {
				...ON_PROFILE,
				label: `film A2 at ${p} mW`,
				series: 'film A2 probe heating',
				laser_power_mw: p
			}
		});
	}
	// A diamond heat spreader under the same device, at 633 nm.
	cases.push({
		spec: {
			laserNm: 633,
			modeCm1: 1332.5,
			temperatureK: 420,
			exponent: 3,
			lineshape: 'lorentzian',
			fwhmCm1: 2.2,
			stokesCounts: 3e5,
			exposureS: { stokes: 1, antiStokes: 10 },
			window: { halfRangeCm1: 100, points: 1200 },
			seed
		},
		metadata: { label: 'spreader D1', laser_nm: 633, modes: [1332.5], exposure_anti_stokes_s: 10 }
	});
	return cases;
}

function batchCases(): DemoCase[] {
	// Twelve pilot-reactor batches of the pellet line, drifting warmer towards the end.
	return Array.from({ length: 12 }, (_, i) => ({
		spec: silicon(468 + 2.2 * i + (i === 9 ? 14 : 0), 300 + i, { stokesCounts: 1.2e5 }),
		metadata: {
			label: `pellet B-26${String(i + 1).padStart(2, '0')}`,
			batch: `B-26${String(i + 1).padStart(2, '0')}`,
			series: 'pilot reactor line 1',
			acquired_at: new Date(Date.UTC(2026, 10, 2 + 2 * i, 9, 30)).toISOString()
		}
	}));
}

function coolDownCases(): DemoCase[] {
	// Film A3 cooling after the anneal, read every 20 minutes: a time series.
	return Array.from({ length: 8 }, (_, i) => ({
		spec: silicon(300 + 160 * Math.exp(-i / 2.5), 400 + i),
		metadata: {
			...ON_PROFILE,
			label: `film A3 cool-down +${20 * i} min`,
			series: 'film A3 cool-down',
			acquired_at: new Date(Date.UTC(2026, 10, 20, 14, 20 * i)).toISOString()
		}
	}));
}

const BASE: MeasurementMetadata = {
	laser_nm: 532,
	modes: [520.7],
	detector: 'photon-counting',
	lineshape: 'lorentzian',
	exposure_stokes_s: 1,
	exposure_anti_stokes_s: 4,
	x_axis: 'raman-shift',
	baseline: 'none',
	c_factor: 1,
	u_c_factor: 0.02,
	coverage_factor: 2
};

async function seedProject(
	slug: string,
	cases: DemoCase[],
	actor: { userId?: string; tokenId?: number }
) {
	const project = await db.query.projects.findFirst({ where: eq(projects.slug, slug) });
	if (!project) return 0;
	for (const c of cases) {
		const pair = syntheticPair(c.spec);
		const { measurement } = await ingestMeasurement({
			projectId: project.id,
			actor,
			metadata: { ...BASE, ...c.metadata },
			files: [
				{
					part: 'stokes',
					fileName: 'stokes.csv',
					contentType: 'text/csv',
					bytes: new TextEncoder().encode(csv(pair.stokes.raw.shift, pair.stokes.raw.counts))
				},
				{
					part: 'anti_stokes',
					fileName: 'anti-stokes.csv',
					contentType: 'text/csv',
					bytes: new TextEncoder().encode(
						csv(pair.antiStokes.raw.shift, pair.antiStokes.raw.counts)
					)
				}
			]
		});
		// Analyse now, so the demo opens on finished readings; the queued job then finds it done.
		const [analysis] = await db
			.select({ id: analyses.id })
			.from(analyses)
			.where(eq(analyses.measurementId, measurement.id));
		await runAnalysis(analysis.id);
	}
	return cases.length;
}

export async function seedDemoMeasurements(people: {
	ownerId: string;
	analystId: string;
	tokenId: number;
}) {
	const film = await db.query.projects.findFirst({
		where: eq(projects.slug, 'thin-film-hot-spots')
	});
	if (film) await seedDemoInstruments(film.id, people.ownerId);
	const a = await seedProject('thin-film-hot-spots', [...filmCases(), ...coolDownCases()], {
		tokenId: people.tokenId
	});
	const b = await seedProject('catalyst-bed-batches', batchCases(), { userId: people.analystId });
	return a + b;
}
