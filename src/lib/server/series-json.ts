import { z } from 'zod';
import { SERIES_KINDS } from '$lib/series/kind';
import type { SeriesPoint } from './series';
import type { Series } from './series-store';

/** The API's view of a series (snake_case, as the rest of /api/v1), with the zod schemas the
 * OpenAPI document is generated from. */

const nullableNumber = z.number().nullable();

export const seriesResponse = z.object({
	name: z.string(),
	kind: z.enum(SERIES_KINDS),
	description: z.string(),
	baseline_size: z
		.number()
		.int()
		.nullable()
		.describe('How many first readings fix the control limits; null: all.'),
	lower_spec_k: nullableNumber.describe('Lower specification limit, K (set by an owner).'),
	upper_spec_k: nullableNumber.describe('Upper specification limit, K (set by an owner).'),
	measurements: z.number().int(),
	created_at: z.iso.datetime(),
	links: z.object({ self: z.url(), page: z.url() })
});

export const seriesList = z.object({ items: z.array(seriesResponse) });

/** One array per quantity, one entry per measurement, in series order. */
export const seriesPoints = z
	.object({
		measurement_id: z.array(z.string().uuid()),
		reading_id: z.array(z.string().uuid().nullable()),
		label: z.array(z.string().nullable()),
		batch: z.array(z.string().nullable()),
		at: z
			.array(z.iso.datetime())
			.describe('acquired_at, else the upload time: the order of the series.'),
		x_um: z.array(nullableNumber),
		y_um: z.array(nullableNumber),
		laser_power_mw: z.array(nullableNumber),
		temperature_k: z.array(nullableNumber),
		u_temperature_k: z.array(nullableNumber).describe('Standard uncertainty, K.'),
		expanded_uncertainty_k: z.array(nullableNumber),
		coverage_factor: z.array(nullableNumber),
		worst_severity: z.array(z.enum(['none', 'info', 'warning', 'error']).nullable())
	})
	.describe('Columnar: entry i of every array belongs to the same measurement.');

export const seriesDetail = seriesResponse.extend({ points: seriesPoints });

export function seriesJson(
	s: Series,
	measurements: number,
	origin: string,
	projectSlug: string
): z.infer<typeof seriesResponse> {
	const name = encodeURIComponent(s.name);
	return {
		name: s.name,
		kind: s.kind,
		description: s.description,
		baseline_size: s.baselineSize,
		lower_spec_k: s.lowerSpecK,
		upper_spec_k: s.upperSpecK,
		measurements,
		created_at: s.createdAt.toISOString(),
		links: {
			self: `${origin}/api/v1/series/${name}`,
			page: `${origin}/projects/${projectSlug}/series/${name}`
		}
	};
}

export function pointsJson(points: SeriesPoint[]): z.infer<typeof seriesPoints> {
	const col = <T>(f: (p: SeriesPoint) => T) => points.map(f);
	return {
		measurement_id: col((p) => p.id),
		reading_id: col((p) => p.readingId),
		label: col((p) => p.label),
		batch: col((p) => p.batch),
		at: col((p) => p.at),
		x_um: col((p) => p.x),
		y_um: col((p) => p.y),
		laser_power_mw: col((p) => p.powerMw),
		temperature_k: col((p) => p.t),
		u_temperature_k: col((p) => p.u),
		expanded_uncertainty_k: col((p) => p.U),
		coverage_factor: col((p) => p.k),
		worst_severity: col((p) => p.severity as 'none' | 'info' | 'warning' | 'error' | null)
	};
}
