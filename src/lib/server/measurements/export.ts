import Papa from 'papaparse';
import type { measurements, readings } from '../db/schema';
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

/** One measurement's row of the readings export (its newest or a chosen reading). */
export function csvRow(m: MeasurementRow, reading: ReadingRow | null) {
	const r = (reading?.result ?? {}) as Record<string, unknown>;
	const row: Record<(typeof CSV_COLUMNS)[number], unknown> = {
		measurement_id: m.id,
		reading_id: reading?.id ?? '',
		uploaded_at: m.createdAt.toISOString(),
		label: m.label ?? '',
		batch: m.batch ?? '',
		series: m.series ?? '',
		x: m.x ?? '',
		y: m.y ?? '',
		laser_power_mw: m.laserPowerMw ?? '',
		acquired_at: m.acquiredAt?.toISOString() ?? '',
		status: m.status,
		temperature_k: reading?.temperatureK ?? '',
		u_temperature_k: reading?.uTemperatureK ?? '',
		expanded_uncertainty_k: reading?.expandedUncertaintyK ?? '',
		coverage_factor: reading?.coverageFactor ?? '',
		method: r.method ?? '',
		exponent: r.exponent ?? '',
		lineshape: r.lineshape ?? '',
		flags: reading?.flagCodes.join(' ') ?? ''
	};
	return CSV_COLUMNS.map((c) => row[c]);
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
