import { sql } from 'drizzle-orm';
import type { MapColumns } from '$lib/series/map-grid';
import { db } from './db';

export interface MapPayload extends MapColumns {
	/** The hottest point in full, for the headline (null when no cell has a temperature). */
	hottest: {
		id: string;
		label: string | null;
		x: number;
		y: number;
		t: number;
		u: number;
		U: number | null;
		k: number;
	} | null;
}

/**
 * A map series in columns, in one query: each placed measurement with its newest reading's
 * temperature and uncertainty. Quick for a 100 × 100 map (`npm run bench:map` measures it).
 */
export async function loadMapColumns(projectId: number, name: string): Promise<MapPayload> {
	const rows = await db.execute<{
		id: string;
		label: string | null;
		x: number;
		y: number;
		t: number | null;
		u: number | null;
		big_u: number | null;
		k: number | null;
	}>(sql`
		select m.id, m.label, m.x, m.y, r.temperature_k as t, r.u_temperature_k as u,
			r.expanded_uncertainty_k as big_u, r.coverage_factor as k
		from measurements m
		left join lateral (
			select temperature_k, u_temperature_k, expanded_uncertainty_k, coverage_factor
			from readings where readings.measurement_id = m.id
			order by readings.created_at desc limit 1
		) r on true
		where m.project_id = ${projectId} and m.series = ${name}
			and m.x is not null and m.y is not null
		order by m.y, m.x`);
	const n = rows.length;
	const out: MapPayload = {
		x: new Array(n),
		y: new Array(n),
		t: new Array(n),
		u: new Array(n),
		id: new Array(n),
		hottest: null
	};
	let hot = -1;
	for (let i = 0; i < n; i++) {
		const r = rows[i];
		out.x[i] = r.x;
		out.y[i] = r.y;
		// A reading without a standard uncertainty cannot be mapped honestly: leave the cell empty.
		const usable = r.t != null && r.u != null && r.u > 0;
		out.t[i] = usable ? r.t : null;
		out.u[i] = usable ? r.u : null;
		out.id[i] = r.id;
		if (usable && (hot < 0 || r.t! > rows[hot].t!)) hot = i;
	}
	if (hot >= 0) {
		const h = rows[hot];
		out.hottest = {
			id: h.id,
			label: h.label,
			x: h.x,
			y: h.y,
			t: h.t!,
			u: h.u!,
			U: h.big_u,
			k: h.k ?? 2
		};
	}
	return out;
}
