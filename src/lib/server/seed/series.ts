import { and, eq } from 'drizzle-orm';
import { db } from '../db';
import { projects, series, seriesSubscriptions } from '../db/schema';

/**
 * The demo's series were made by its uploads, with inferred kinds (map, power sweep, batch,
 * time). The owner of the pellet line adds what only people add: a description, the
 * specification the process must meet, the baseline, and a subscription to its alerts.
 */
export async function seedDemoSeries(ownerId: string) {
	const project = await db.query.projects.findFirst({
		where: eq(projects.slug, 'catalyst-bed-batches')
	});
	if (!project) return;
	const [line] = await db
		.update(series)
		.set({
			description: 'Anatase pellets from the pilot reactor; bed temperature at discharge.',
			lowerSpecK: 455,
			upperSpecK: 495,
			baselineSize: 8
		})
		.where(and(eq(series.projectId, project.id), eq(series.name, 'pilot reactor line 1')))
		.returning();
	if (line) {
		await db
			.insert(seriesSubscriptions)
			.values({ seriesId: line.id, userId: ownerId })
			.onConflictDoNothing();
	}
}
