import Papa from 'papaparse';
import { desc, eq, inArray, sql } from 'drizzle-orm';
import { z } from 'zod';
import { db } from '../db';
import { analyses, measurements, readings, signOffs, users } from '../db/schema';
import { loadSeriesPoints } from '../series';
import { findSeries } from '../series-store';
import type { SeriesKind } from '$lib/series/kind';
import { listMeasurements, type ListFilters } from './views';

export const CSV_COLUMNS = [
	'measurement_id',
	'reading_id',
	'uploaded_at',
	'label',
	'batch',
	'series',
	'x',
	'y',
	'laser_power_mw',
	'acquired_at',
	'status',
	'temperature_k',
	'u_temperature_k',
	'expanded_uncertainty_k',
	'coverage_factor',
	'method',
	'exponent',
	'lineshape',
	'flags'
] as const;

type MeasurementRow = typeof measurements.$inferSelect;
type ReadingRow = typeof readings.$inferSelect;
/** What a row needs of a reading; `result` may be only the few fields the row shows. */
type ReadingPart = Pick<
	ReadingRow,
	| 'id'
	| 'temperatureK'
	| 'uTemperatureK'
	| 'expandedUncertaintyK'
	| 'coverageFactor'
	| 'worstSeverity'
	| 'flagCodes'
> & { result: Record<string, unknown> };

/** One measurement's facts and its reading's numbers, typed (null where there is nothing). */
function readingRecord(m: MeasurementRow, reading: ReadingPart | null) {
	const r = reading?.result ?? {};
	return {
		measurement_id: m.id,
		reading_id: reading?.id ?? null,
		uploaded_at: m.createdAt.toISOString(),
		label: m.label,
		batch: m.batch,
		series: m.series,
		x: m.x,
		y: m.y,
		laser_power_mw: m.laserPowerMw,
		acquired_at: m.acquiredAt?.toISOString() ?? null,
		status: m.status,
		temperature_k: reading?.temperatureK ?? null,
		u_temperature_k: reading?.uTemperatureK ?? null,
		expanded_uncertainty_k: reading?.expandedUncertaintyK ?? null,
		coverage_factor: reading?.coverageFactor ?? null,
		method: (r.method as string | undefined) ?? null,
		exponent: (r.exponent as number | undefined) ?? null,
		lineshape: (r.lineshape as string | undefined) ?? null,
		flags: reading?.flagCodes ?? []
	};
}

/**
 * A CSV cell: empty for null, lists space-separated, numbers as JavaScript prints them (the
 * shortest text that reads back to the same double, so nothing is lost on the way).
 */
export function csvCell(v: unknown): unknown {
	if (v == null) return '';
	if (Array.isArray(v)) return v.join(' ');
	return v;
}

/** One measurement's row of the readings export (its newest or a chosen reading). */
export function csvRow(m: MeasurementRow, reading: ReadingPart | null) {
	const row = readingRecord(m, reading);
	return CSV_COLUMNS.map((c) => csvCell(row[c]));
}

/** Every reading of a project (newest reading per measurement) as CSV, page by page. */
export async function readingsCsv(
	projectId: number,
	filters: Omit<ListFilters, 'cursor' | 'limit'>
) {
	const rows: unknown[][] = [];
	let cursor: string | undefined;
	do {
		const page = await listMeasurements(projectId, { ...filters, limit: 500, cursor });
		if ('error' in page) break;
		for (const { measurement, reading } of page.items) rows.push(csvRow(measurement, reading));
		cursor = page.nextCursor ?? undefined;
	} while (cursor);
	return Papa.unparse({ fields: [...CSV_COLUMNS], data: rows });
}

// A series' readings: the project export's columns, then what a reviewer of a series needs to
// trust each number (the settings and calibration it was made with, and its sign-off).

const nullableNumber = z.number().nullable();
const nullableText = z.string().nullable();

/** One row of a series export; the JSON export gives these, the CSV the same in columns. */
export const seriesReadingRow = z.object({
	measurement_id: z.uuid(),
	reading_id: z.uuid().nullable().describe('The newest reading; null while there is none.'),
	uploaded_at: z.iso.datetime(),
	label: nullableText,
	batch: nullableText,
	series: z.string(),
	x: nullableNumber.describe('Position on the sample, x (µm).'),
	y: nullableNumber.describe('Position on the sample, y (µm).'),
	laser_power_mw: nullableNumber,
	acquired_at: z.iso.datetime().nullable(),
	status: z.enum(['queued', 'analysing', 'done', 'failed']),
	temperature_k: nullableNumber.describe('null when the data cannot support a temperature.'),
	u_temperature_k: nullableNumber.describe('Standard uncertainty u(T), K.'),
	expanded_uncertainty_k: nullableNumber.describe('Expanded uncertainty U = k·u, K.'),
	coverage_factor: nullableNumber,
	method: nullableText.describe('The estimator, e.g. `joint-fit`.'),
	exponent: nullableNumber.describe('3 for photon counting, 4 for energy detection.'),
	lineshape: nullableText,
	flags: z.array(z.string()).describe('Flag codes of the reading (space-separated in CSV).'),
	worst_severity: z.enum(['none', 'info', 'warning', 'error']).nullable(),
	laser_nm: nullableNumber.describe('Laser wavelength the analysis used, nm.'),
	detector: z.enum(['photon-counting', 'energy']).nullable(),
	modes_cm1: z.array(z.number()).describe('Bands fitted, cm⁻¹ (space-separated in CSV).'),
	c_factor: nullableNumber.describe('Response ratio C the analysis used.'),
	u_c_factor: nullableNumber.describe('Standard uncertainty of C.'),
	calibration_id: z.number().int().nullable().describe('The response calibration C came from.'),
	profile_version_id: z
		.number()
		.int()
		.nullable()
		.describe('The instrument profile version the settings came from.'),
	sign_off: z.enum(['approved', 'returned']).nullable().describe('The newest decision, if any.'),
	signed_off_at: z.iso.datetime().nullable(),
	signed_off_by: nullableText
});
export type SeriesReadingRow = z.infer<typeof seriesReadingRow>;

export const SERIES_COLUMNS = Object.keys(seriesReadingRow.shape) as (keyof SeriesReadingRow)[];

/**
 * The newest reading of each measurement in a series, in the series' own order (from
 * `loadSeriesPoints`, so the export lists what the series page shows), or null when the project
 * has no series of that name. Heavy columns (spectra, the full result) are left in the database.
 */
export async function seriesReadings(
	projectId: number,
	name: string
): Promise<{ kind: SeriesKind; rows: SeriesReadingRow[] } | null> {
	const series = await findSeries(projectId, name);
	if (!series) return null;
	const ids = (await loadSeriesPoints(projectId, name)).map((p) => p.id);
	if (!ids.length) return { kind: series.kind, rows: [] };
	const [ms, rs] = await Promise.all([
		db.select().from(measurements).where(inArray(measurements.id, ids)),
		db
			.selectDistinctOn([readings.measurementId], {
				measurementId: readings.measurementId,
				id: readings.id,
				temperatureK: readings.temperatureK,
				uTemperatureK: readings.uTemperatureK,
				expandedUncertaintyK: readings.expandedUncertaintyK,
				coverageFactor: readings.coverageFactor,
				worstSeverity: readings.worstSeverity,
				flagCodes: readings.flagCodes,
				result: sql<Record<string, unknown>>`jsonb_build_object(
					'method', ${readings.result}->'method',
					'exponent', ${readings.result}->'exponent',
					'lineshape', ${readings.result}->'lineshape',
					'laser_nm', ${readings.result}->'laser_nm',
					'modes', jsonb_path_query_array(${readings.result}, '$.modes[*].mode_cm1'))`,
				settings: analyses.settings,
				calibrationId: analyses.calibrationId,
				profileVersionId: analyses.profileVersionId
			})
			.from(readings)
			.innerJoin(analyses, eq(analyses.id, readings.analysisId))
			.where(inArray(readings.measurementId, ids))
			.orderBy(readings.measurementId, desc(readings.createdAt))
	]);
	const decisions = rs.length
		? await db
				.selectDistinctOn([signOffs.readingId], {
					readingId: signOffs.readingId,
					decision: signOffs.decision,
					decidedAt: signOffs.decidedAt,
					name: users.name,
					email: users.email
				})
				.from(signOffs)
				.leftJoin(users, eq(users.id, signOffs.reviewerId))
				.where(
					inArray(
						signOffs.readingId,
						rs.map((r) => r.id)
					)
				)
				.orderBy(signOffs.readingId, desc(signOffs.decidedAt), desc(signOffs.id))
		: [];
	const byId = new Map(ms.map((m) => [m.id, m]));
	const readingOf = new Map(rs.map((r) => [r.measurementId, r]));
	const decisionOf = new Map(decisions.map((d) => [d.readingId, d]));
	const rows = ids.map((id) => {
		const m = byId.get(id)!;
		const r = readingOf.get(id) ?? null;
		const d = r ? decisionOf.get(r.id) : undefined;
		// Settings as analysed; without a reading, as uploaded (what an analysis would use).
		const settings = r?.settings ?? m.metadata;
		return {
			...readingRecord(m, r),
			series: m.series ?? name,
			worst_severity: r?.worstSeverity ?? null,
			laser_nm: (r?.result.laser_nm as number | undefined) ?? settings.laser_nm,
			detector: settings.detector ?? null,
			modes_cm1: (r?.result.modes as number[] | undefined) ?? settings.modes ?? [],
			c_factor: settings.c_factor ?? null,
			u_c_factor: settings.u_c_factor ?? null,
			calibration_id: r?.calibrationId ?? null,
			profile_version_id: r?.profileVersionId ?? null,
			sign_off: d?.decision ?? null,
			signed_off_at: d?.decidedAt.toISOString() ?? null,
			signed_off_by: d ? (d.name ?? d.email ?? null) : null
		} as SeriesReadingRow;
	});
	return { kind: series.kind, rows };
}

/** A series export as a download: CSV (one header line, one row per measurement) or JSON. */
export function seriesDownload(
	{ kind, rows }: { kind: SeriesKind; rows: SeriesReadingRow[] },
	format: 'csv' | 'json',
	at: { project: string; series: string }
): Response {
	// File names keep to letters, digits and dashes so every browser and shell takes them.
	const stem = `${at.project}-${at.series}`.replace(/[^A-Za-z0-9._-]+/g, '-');
	const disposition = `attachment; filename="${stem}-readings.${format}"`;
	if (format === 'json') {
		const body = { project: at.project, series: at.series, kind, readings: rows };
		return new Response(JSON.stringify(body), {
			headers: { 'content-type': 'application/json', 'content-disposition': disposition }
		});
	}
	const csv = Papa.unparse({
		fields: SERIES_COLUMNS,
		data: rows.map((row) => SERIES_COLUMNS.map((c) => csvCell(row[c])))
	});
	return new Response(csv, {
		headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': disposition }
	});
}
