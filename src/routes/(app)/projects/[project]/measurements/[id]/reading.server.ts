import { error } from '@sveltejs/kit';
import { and, desc, eq } from 'drizzle-orm';
import { z } from 'zod';
import { db } from '$lib/server/db';
import { acquisitionTokens, analyses, readings, users } from '$lib/server/db/schema';
import { loadMeasurement } from '$lib/server/measurements/views';
import type { Reading } from '$lib/thermometry/types';

/**
 * A measurement with the reading a person asked for (`?reading=<id>`, else the newest), the
 * settings that reading was made with, and every reading of the measurement, newest first.
 * Shared by the reading page and its JSON/CSV downloads so they always show the same reading.
 */
export async function measurementWithReading(
	projectId: number,
	id: string,
	readingId: string | null
) {
	const found = await loadMeasurement(projectId, id);
	if (!found) error(404, 'Not found');
	let reading = found.reading;
	if (readingId && readingId !== reading?.id) {
		if (!z.uuid().safeParse(readingId).success) error(404, 'This measurement has no such reading.');
		[reading] = await db
			.select()
			.from(readings)
			.where(and(eq(readings.id, readingId), eq(readings.measurementId, id)));
		if (!reading) error(404, 'This measurement has no such reading.');
	}
	return { ...found, reading, latestReadingId: found.reading?.id ?? null };
}

export async function readingHistory(measurementId: string) {
	return db
		.select({
			id: readings.id,
			createdAt: readings.createdAt,
			temperatureK: readings.temperatureK,
			expandedUncertaintyK: readings.expandedUncertaintyK,
			coverageFactor: readings.coverageFactor,
			worstSeverity: readings.worstSeverity,
			settings: analyses.settings,
			byName: users.name,
			byEmail: users.email,
			byToken: acquisitionTokens.name
		})
		.from(readings)
		.innerJoin(analyses, eq(analyses.id, readings.analysisId))
		.leftJoin(users, eq(users.id, analyses.requestedBy))
		.leftJoin(acquisitionTokens, eq(acquisitionTokens.id, analyses.requestedByToken))
		.where(eq(readings.measurementId, measurementId))
		.orderBy(desc(readings.createdAt));
}

type Found = Awaited<ReturnType<typeof measurementWithReading>>;

/** What the reading page and the printable report both show of the measurement itself. */
export function measurementFacts(m: Found['measurement']) {
	return {
		id: m.id,
		status: m.status,
		label: m.label,
		batch: m.batch,
		series: m.series,
		x: m.x,
		y: m.y,
		laserPowerMw: m.laserPowerMw,
		acquiredAt: m.acquiredAt,
		createdAt: m.createdAt,
		metadata: m.metadata
	};
}

/** The shown reading for a page: its engine result, plot windows and when it was made. */
export function readingFacts(reading: NonNullable<Found['reading']>) {
	return {
		id: reading.id,
		createdAt: reading.createdAt,
		result: reading.result as unknown as Reading,
		spectra: reading.spectra
	};
}
