// Series pages over HTTP: a power sweep uploaded by the acquisition PC shows its zero-power
// temperature to a member, the same numbers the engine's weighted fit gives, and nothing to an
// outsider.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb } from '../src/lib/server/db';
import { powerSweep } from '../src/lib/thermometry/power-sweep';
import { signIn } from './support/http';
import { getJson, postMeasurement, syntheticCsv, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
const SERIES = 'probe heating S1';
const POWERS = [2, 5, 8];
const path = () => `/projects/${world.project.slug}/series/${encodeURIComponent(SERIES)}`;

beforeAll(async () => {
	world = await makeWorld('series');
	// The spot warms by 4 K per mW above 300 K.
	const ids = await Promise.all(
		POWERS.map(async (p, i) => {
			const pair = syntheticCsv({
				laserNm: 532,
				modeCm1: 520.7,
				temperatureK: 300 + 4 * p,
				exponent: 3,
				lineshape: 'lorentzian',
				fwhmCm1: 3.5,
				stokesCounts: 2e5,
				seed: 60 + i
			});
			const response = await postMeasurement(
				world.token,
				{ stokes: pair.stokes, anti_stokes: pair.anti_stokes },
				{
					laser_nm: 532,
					modes: [520.7],
					x_axis: 'raman-shift',
					c_factor: 1,
					u_c_factor: 0.02,
					label: `S1 at ${p} mW`,
					series: SERIES,
					laser_power_mw: p
				}
			);
			expect(response.status).toBe(202);
			return (await response.json()).id as string;
		})
	);
	for (const id of ids) expect((await waitForAnalysis(world.token, id)).status).toBe('done');
}, 90_000);
afterAll(closeDb);

const attr = (html: string, name: string) => {
	const m = new RegExp(`${name}="([^"]+)"`).exec(html);
	if (!m) throw new Error(`no ${name} on the page`);
	return Number(m[1]);
};

describe('a power-sweep series', () => {
	it('shows a member the temperature at zero laser power', async () => {
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		const response = await viewer.get(path());
		expect(response.status).toBe(200);
		const html = await response.text();
		expect(html).toContain('Temperature at zero laser power');
		expect(html).toContain('K/mW');
		const index = await viewer.get(`/projects/${world.project.slug}/series`);
		expect(await index.text()).toContain(SERIES);
	});

	it('is not found for someone outside the project', async () => {
		const outsider = await signIn(world.people.outsider.email, PASSWORD);
		expect((await outsider.get(path())).status).toBe(404);
		expect((await outsider.get(`/projects/${world.project.slug}/series`)).status).toBe(404);
	});

	it('gives the numbers of the weighted fit on the same readings', async () => {
		const { body } = await getJson(
			world.token,
			`/api/v1/measurements?series=${encodeURIComponent(SERIES)}&limit=50`
		);
		const items = body.items as {
			laser_power_mw: number;
			reading: { temperature_k: number; u_temperature_k: number };
		}[];
		expect(items).toHaveLength(POWERS.length);
		const fit = powerSweep(
			items.map((m) => ({
				power_mw: m.laser_power_mw,
				temperature_k: m.reading.temperature_k,
				u_temperature_k: m.reading.u_temperature_k
			}))
		);
		const owner = await signIn(world.people.owner.email, PASSWORD);
		const html = await (await owner.get(path())).text();
		expect(attr(html, 'data-t0-k')).toBeCloseTo(fit.t0_k, 9);
		expect(attr(html, 'data-u-t0-k')).toBeCloseTo(fit.u_t0_k, 9);
		expect(attr(html, 'data-slope-k-per-mw')).toBeCloseTo(fit.slope_k_per_mw, 9);
		expect(attr(html, 'data-u-slope-k-per-mw')).toBeCloseTo(fit.u_slope_k_per_mw, 9);
		// And the fit finds the heating the spectra were made with, within its uncertainty.
		expect(Math.abs(fit.slope_k_per_mw - 4)).toBeLessThan(3 * fit.u_slope_k_per_mw);
	});
});
