import { and, asc, desc, eq, gte, inArray, lt, sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { db } from '../db';
import { analyses, measurementFiles, measurements, readings } from '../db/schema';
import type { Provenance } from './provenance';

export type ReadingRow = typeof readings.$inferSelect;
type MeasurementRow = typeof measurements.$inferSelect;

/**
 * The reading as the API returns it: the engine's own field names, plus where it belongs and,
 * when loaded, the instrument profile version and calibration it was made with.
 */
export function readingJson(r: ReadingRow, provenance?: Provenance) {
	return {
		id: r.id,
		measurement_id: r.measurementId,
		created_at: r.createdAt.toISOString(),
		...r.result,
		...provenance
	};
}

export function measurementJson(
	m: MeasurementRow,
	extra: {
		files: (typeof measurementFiles.$inferSelect)[];
		reading: ReadingRow | null;
		failure: { code: string; message: string } | null;
		origin: string;
	}
) {
	const self = `${extra.origin}/api/v1/measurements/${m.id}`;
	return {
		id: m.id,
		status: m.status,
		created_at: m.createdAt.toISOString(),
		label: m.label,
		batch: m.batch,
		series: m.series,
		x: m.x,
		y: m.y,
		laser_power_mw: m.laserPowerMw,
		acquired_at: m.acquiredAt?.toISOString() ?? null,
		metadata: m.metadata,
		files: extra.files.map((f) => ({
			part: f.part,
			file_name: f.fileName,
			bytes: f.bytes,
			sha256: f.sha256
		})),
		failure: m.status === 'failed' ? extra.failure : null,
		reading: extra.reading ? readingJson(extra.reading) : null,
		links: { self, reading: `${self}/reading` }
	};
}

/** A measurement of this project with its files, newest reading and newest analysis's failure. */
export async function loadMeasurement(projectId: number, id: string) {
	if (!z.uuid().safeParse(id).success) return null;
	const m = await db.query.measurements.findFirst({
		where: and(eq(measurements.id, id), eq(measurements.projectId, projectId))
	});
	if (!m) return null;
	const [files, [reading], [analysis]] = await Promise.all([
		db
			.select()
			.from(measurementFiles)
			.where(eq(measurementFiles.measurementId, id))
			.orderBy(asc(measurementFiles.id)),
		db
			.select()
			.from(readings)
			.where(eq(readings.measurementId, id))
			.orderBy(desc(readings.createdAt))
			.limit(1),
		db
			.select()
			.from(analyses)
			.where(eq(analyses.measurementId, id))
			.orderBy(desc(analyses.createdAt))
			.limit(1)
	]);
	return { measurement: m, files, reading: reading ?? null, analysis: analysis ?? null };
}

export const listFilters = z.object({
	series: z.string().max(100).optional(),
	batch: z.string().max(100).optional(),
	status: z.enum(['queued', 'analysing', 'done', 'failed']).optional(),
	flag: z.string().max(60).optional().describe('A flag code the newest reading carries.'),
	from: z.iso.datetime({ offset: true }).optional().describe('Created at or after (ISO 8601).'),
	to: z.iso.datetime({ offset: true }).optional().describe('Created before (ISO 8601).'),
	limit: z.coerce.number().int().min(1).max(500).default(50),
	cursor: z.string().max(200).optional().describe('The `next_cursor` of the previous page.')
});
export type ListFilters = z.infer<typeof listFilters>;

// A cursor is the created_at and id of the last row seen, so pages stay stable while new
// measurements arrive.
const encodeCursor = (m: MeasurementRow) =>
	Buffer.from(`${m.createdAt.toISOString()}|${m.id}`).toString('base64url');
function decodeCursor(cursor: string): { at: Date; id: string } | null {
	const [at, id] = Buffer.from(cursor, 'base64url').toString().split('|');
	const date = new Date(at);
	return Number.isNaN(date.getTime()) || !z.uuid().safeParse(id).success ? null : { at: date, id };
}

// JavaScript dates hold milliseconds, PostgreSQL microseconds: page on the millisecond value.
const createdMs = sql`date_trunc('milliseconds', ${measurements.createdAt})`;

/** The newest reading of each measurement, as a lateral join target. */
const newestReading = (measurementId: SQL | typeof measurements.id) =>
	sql`(select r.id from ${readings} r where r.measurement_id = ${measurementId} order by r.created_at desc limit 1)`;

export async function listMeasurements(projectId: number, f: ListFilters) {
	const where: (SQL | undefined)[] = [eq(measurements.projectId, projectId)];
	if (f.series) where.push(eq(measurements.series, f.series));
	if (f.batch) where.push(eq(measurements.batch, f.batch));
	if (f.status) where.push(eq(measurements.status, f.status));
	if (f.from) where.push(gte(measurements.createdAt, new Date(f.from)));
	if (f.to) where.push(lt(measurements.createdAt, new Date(f.to)));
	if (f.flag)
		where.push(
			sql`${f.flag} = any((select flag_codes from ${readings} where id = ${newestReading(measurements.id)}))`
		);
	if (f.cursor) {
		const c = decodeCursor(f.cursor);
		if (!c)
			return { error: 'The cursor is not one this API gave out; start again without it.' as const };
		where.push(
			sql`(${createdMs}, ${measurements.id}) < (${c.at.toISOString()}::timestamptz, ${c.id}::uuid)`
		);
	}
	const rows = await db
		.select()
		.from(measurements)
		.where(and(...where))
		.orderBy(desc(createdMs), desc(measurements.id))
		.limit(f.limit + 1);
	const page = rows.slice(0, f.limit);
	const ids = page.map((m) => m.id);
	const readingRows = ids.length
		? await db
				.selectDistinctOn([readings.measurementId])
				.from(readings)
				.where(inArray(readings.measurementId, ids))
				.orderBy(readings.measurementId, desc(readings.createdAt))
		: [];
	const failures = ids.length
		? await db
				.selectDistinctOn([analyses.measurementId], {
					measurementId: analyses.measurementId,
					failure: analyses.failure
				})
				.from(analyses)
				.where(inArray(analyses.measurementId, ids))
				.orderBy(analyses.measurementId, desc(analyses.createdAt))
		: [];
	return {
		items: page.map((m) => ({
			measurement: m,
			reading: readingRows.find((r) => r.measurementId === m.id) ?? null,
			failure: failures.find((a) => a.measurementId === m.id)?.failure ?? null
		})),
		nextCursor: rows.length > f.limit ? encodeCursor(page[page.length - 1]) : null
	};
}
