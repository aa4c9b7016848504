import { and, eq } from 'drizzle-orm';
import { controlChart, violationsAt } from '$lib/series/control-chart';
import { db } from './db';
import {
	measurements,
	memberships,
	projects,
	readings,
	series,
	seriesAlerts,
	seriesSubscriptions,
	users
} from './db/schema';
import { env } from './env';
import { sendMail } from './mail';
import { loadSeriesPoints } from './series';
import type { Series } from './series-store';

/** Subscriptions to a series, and the e-mail a subscriber gets when a new reading breaks a rule. */

export async function isSubscribed(seriesId: number, userId: string): Promise<boolean> {
	const row = await db.query.seriesSubscriptions.findFirst({
		where: and(eq(seriesSubscriptions.seriesId, seriesId), eq(seriesSubscriptions.userId, userId))
	});
	return row != null;
}

export async function setSubscribed(seriesId: number, userId: string, on: boolean) {
	if (on) {
		await db.insert(seriesSubscriptions).values({ seriesId, userId }).onConflictDoNothing();
	} else {
		await db
			.delete(seriesSubscriptions)
			.where(
				and(eq(seriesSubscriptions.seriesId, seriesId), eq(seriesSubscriptions.userId, userId))
			);
	}
}

/** The chart's settings for a batch series: its baseline (all readings by default) and spec. */
export const chartOptions = (s: Series, readings: number) => ({
	baseline: Math.min(s.baselineSize ?? readings, readings),
	usl: s.upperSpecK ?? undefined,
	lsl: s.lowerSpecK ?? undefined
});

/**
 * When a new reading of a batch series breaks a run rule or the specification limits, e-mail
 * each subscriber who is still a member once, with the rules and a link to the reading. The
 * series_alerts row is written before the message goes, so a job that runs again (or two
 * workers racing on one analysis) never sends a second one; a lost message is logged, not
 * retried, as for the other notices.
 */
export async function alertSeriesSubscribers(readingId: string): Promise<number> {
	try {
		const [row] = await db
			.select({ m: measurements, slug: projects.slug, project: projects.name, s: series })
			.from(readings)
			.innerJoin(measurements, eq(measurements.id, readings.measurementId))
			.innerJoin(projects, eq(projects.id, measurements.projectId))
			.innerJoin(
				series,
				and(eq(series.projectId, measurements.projectId), eq(series.name, measurements.series))
			)
			.where(eq(readings.id, readingId));
		if (!row || row.s.kind !== 'batch') return 0;
		const people = await db
			.select({ id: users.id, email: users.email })
			.from(seriesSubscriptions)
			.innerJoin(users, eq(users.id, seriesSubscriptions.userId))
			.innerJoin(
				memberships,
				and(eq(memberships.userId, users.id), eq(memberships.projectId, row.m.projectId))
			)
			.where(eq(seriesSubscriptions.seriesId, row.s.id));
		if (!people.length) return 0;

		const used = (await loadSeriesPoints(row.m.projectId, row.s.name)).filter(
			(p) => p.t != null && p.u != null && p.u > 0
		);
		const index = used.findIndex((p) => p.readingId === readingId);
		if (index < 0 || used.length < 2) return 0;
		const chart = controlChart(
			used.map((p) => p.t!),
			chartOptions(row.s, used.length)
		);
		const broken = violationsAt(chart, index);
		if (!broken.length) return 0;

		const origin = env().ORIGIN;
		const name = row.m.label ? `“${row.m.label}”` : `measurement ${row.m.id.slice(0, 8)}`;
		const url = `${origin}/projects/${row.slug}/measurements/${row.m.id}`;
		const seriesUrl = `${origin}/projects/${row.slug}/series/${encodeURIComponent(row.s.name)}`;
		const t = used[index].t!;
		let sent = 0;
		for (const person of people) {
			const [claimed] = await db
				.insert(seriesAlerts)
				.values({ readingId, userId: person.id, rules: broken.map((v) => v.rule) })
				.onConflictDoNothing()
				.returning();
			if (!claimed) continue;
			try {
				await sendMail({
					to: person.email,
					subject: `Series “${row.s.name}”: ${name} breaks ${broken.length === 1 ? 'a rule' : `${broken.length} rules`} (${row.project})`,
					text: [
						`A new reading of ${name} in the batch series “${row.s.name}” (${row.project}) is ${t.toFixed(2)} K, point #${index + 1} of ${used.length}:`,
						'',
						...broken.map((v) => `  • ${v.sentence}`),
						'',
						`Open the reading: ${url}`,
						`The control chart: ${seriesUrl}`,
						'',
						'You get these messages because you subscribed to this series; unsubscribe on its page.'
					].join('\n')
				});
				sent++;
			} catch (err) {
				console.error('mail: could not alert', person.email, (err as Error).message);
			}
		}
		return sent;
	} catch (err) {
		// An alert must not fail the analysis; the series page shows the same violations.
		console.error('series alert for reading', readingId, 'failed:', (err as Error).message);
		return 0;
	}
}
