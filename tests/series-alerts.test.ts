// Alerts of a batch series: a subscriber is e-mailed once when a new reading breaks a run rule
// (here: far beyond the 3σ limits of a five-reading baseline, and above the owner's upper
// specification limit), with an absolute link to the reading; running the alert again for the
// same reading sends nothing more, and someone who unsubscribed gets nothing.
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, db } from '../src/lib/server/db';
import { series, seriesAlerts } from '../src/lib/server/db/schema';
import { env } from '../src/lib/server/env';
import { alertSeriesSubscribers } from '../src/lib/server/series-alerts';
import { APP_URL, MAIL_CATCHER_URL, signIn, waitForMail } from './support/http';
import { postMeasurement, syntheticCsv, waitForAnalysis } from './support/pairs';
import { makeWorld, PASSWORD, type World } from './support/world';

let world: World;
const NAME = 'pellet line 3';
const page = () => `/projects/${world.project.slug}/series/${encodeURIComponent(NAME)}`;
// The baseline spreads by a few kelvin; the last batch runs 70 K hotter.
const BASELINE_K = [400, 404, 401, 403, 400];
const HOT_K = 470;

async function measure(temperatureK: number, i: number) {
	const pair = syntheticCsv({
		laserNm: 532,
		modeCm1: 520.7,
		temperatureK,
		exponent: 3,
		lineshape: 'lorentzian',
		fwhmCm1: 3.5,
		stokesCounts: 2e5,
		seed: 900 + i
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
			label: `pellet L3-${i + 1}`,
			batch: `L3-${i + 1}`,
			series: NAME,
			acquired_at: new Date(Date.UTC(2026, 10, 1 + i, 9)).toISOString()
		}
	);
	expect(response.status).toBe(202);
	const { id } = (await response.json()) as { id: string };
	const done = await waitForAnalysis(world.token, id);
	expect(done.status).toBe('done');
	return { id, reading: done.reading as { id: string; temperature_k: number } };
}

/** Every message in the catcher to an address that mentions a measurement. */
async function mailsAbout(to: string, measurementId: string) {
	const list = (await (
		await fetch(`${MAIL_CATCHER_URL}/messages?to=${encodeURIComponent(to)}`)
	).json()) as { id: string }[];
	const full = await Promise.all(
		list.map(async (m) => (await fetch(`${MAIL_CATCHER_URL}/messages/${m.id}`)).json())
	);
	return (full as { to: string[]; text: string }[]).filter(
		(m) => m.to.includes(to) && m.text.includes(measurementId)
	);
}

let hot: { id: string; reading: { id: string; temperature_k: number } };
let sentAfter = 0;

beforeAll(async () => {
	world = await makeWorld('alerts');
	const created = await fetch(`${APP_URL}/api/v1/series`, {
		method: 'POST',
		headers: { authorization: `Bearer ${world.token}`, 'content-type': 'application/json' },
		body: JSON.stringify({ name: NAME, kind: 'batch', baseline_size: BASELINE_K.length })
	});
	expect(created.status).toBe(201);
	const s = (await db.query.series.findFirst({
		where: and(eq(series.projectId, world.project.id), eq(series.name, NAME))
	}))!;
	const owner = await signIn(world.people.owner.email, PASSWORD);
	const spec = await owner.post(`/projects/${world.project.slug}/series?edit=${s.id}&/update`, {
		id: String(s.id),
		name: NAME,
		kind: 'batch',
		baseline_size: '5',
		upper_spec_k: '450'
	});
	expect(spec.status).toBe(303);

	// Any member may subscribe; the analyst subscribes and changes their mind.
	const viewer = await signIn(world.people.viewer.email, PASSWORD);
	expect((await viewer.post(`${page()}?/subscribe`)).status).toBe(200);
	const analyst = await signIn(world.people.analyst.email, PASSWORD);
	expect((await analyst.post(`${page()}?/subscribe`)).status).toBe(200);
	expect((await analyst.post(`${page()}?/unsubscribe`)).status).toBe(200);

	for (const [i, t] of BASELINE_K.entries()) await measure(t, i);
	sentAfter = Date.now();
	hot = await measure(HOT_K, BASELINE_K.length);
}, 120_000);
afterAll(closeDb);

describe('a batch series alert', () => {
	it('reaches the subscriber with the broken rules and an absolute link to the reading', async () => {
		const mail = await waitForMail(world.people.viewer.email, sentAfter, 15_000);
		expect(mail.subject).toContain(NAME);
		expect(mail.text).toContain('outside the 3σ control limits');
		expect(mail.text).toContain('outside the specification limits');
		const link = `${env().ORIGIN}/projects/${world.project.slug}/measurements/${hot.id}`;
		expect(mail.text).toContain(link);
		expect(link).toMatch(/^https?:\/\//);
		// The link opens that reading for the subscriber.
		const viewer = await signIn(world.people.viewer.email, PASSWORD);
		const opened = await viewer.get(new URL(link).pathname);
		expect(opened.status).toBe(200);
		expect(await opened.text()).toContain('pellet L3-6');
	});

	it('is sent once per reading, however often the alert runs', async () => {
		await waitForMail(world.people.viewer.email, sentAfter, 15_000);
		expect(await mailsAbout(world.people.viewer.email, hot.id)).toHaveLength(1);
		// A re-run of the finished job's alert step for the same reading sends nothing more.
		expect(await alertSeriesSubscribers(hot.reading.id)).toBe(0);
		await new Promise((r) => setTimeout(r, 500));
		expect(await mailsAbout(world.people.viewer.email, hot.id)).toHaveLength(1);
		// It is the ledger of sent alerts that holds it back: without its row the alert goes again.
		await db.delete(seriesAlerts).where(eq(seriesAlerts.readingId, hot.reading.id));
		expect(await alertSeriesSubscribers(hot.reading.id)).toBe(1);
	});

	it('is not sent to someone who unsubscribed, nor for readings inside the limits', async () => {
		expect(await mailsAbout(world.people.analyst.email, hot.id)).toHaveLength(0);
		const ledger = await db.select().from(seriesAlerts);
		const baselineAlerts = ledger.filter(
			(r) => r.userId === world.people.viewer.id && r.readingId !== hot.reading.id
		);
		expect(baselineAlerts).toEqual([]);
	});
});
