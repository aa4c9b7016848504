import { count, desc, eq, inArray } from 'drizzle-orm';
import { requireProject } from '$lib/server/access';
import { db } from '$lib/server/db';
import { acquisitionTokens, measurements, memberships, readings } from '$lib/server/db/schema';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const [[members], [tokens], byStatus, recent] = await Promise.all([
		db.select({ n: count() }).from(memberships).where(eq(memberships.projectId, project.id)),
		db
			.select({ n: count() })
			.from(acquisitionTokens)
			.where(eq(acquisitionTokens.projectId, project.id)),
		db
			.select({ status: measurements.status, n: count() })
			.from(measurements)
			.where(eq(measurements.projectId, project.id))
			.groupBy(measurements.status),
		db
			.select({
				id: measurements.id,
				label: measurements.label,
				status: measurements.status,
				createdAt: measurements.createdAt
			})
			.from(measurements)
			.where(eq(measurements.projectId, project.id))
			.orderBy(desc(measurements.createdAt))
			.limit(6)
	]);
	const ids = recent.map((m) => m.id);
	const latest = ids.length
		? await db
				.selectDistinctOn([readings.measurementId], {
					measurementId: readings.measurementId,
					t: readings.temperatureK,
					U: readings.expandedUncertaintyK,
					k: readings.coverageFactor,
					severity: readings.worstSeverity
				})
				.from(readings)
				.where(inArray(readings.measurementId, ids))
				.orderBy(readings.measurementId, desc(readings.createdAt))
		: [];
	return {
		counts: {
			members: members.n,
			tokens: tokens.n,
			measurements: byStatus.reduce((sum, s) => sum + s.n, 0),
			pending: byStatus
				.filter((s) => s.status === 'queued' || s.status === 'analysing')
				.reduce((sum, s) => sum + s.n, 0),
			failed: byStatus.find((s) => s.status === 'failed')?.n ?? 0
		},
		recent: recent.map((m) => ({
			...m,
			reading: latest.find((r) => r.measurementId === m.id) ?? null
		}))
	};
};
