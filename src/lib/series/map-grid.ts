/**
 * A map series travels as columns — one array per quantity, one entry per placed measurement —
 * so 10 000 readings are one payload of plain numbers. The page lays them on the grid of
 * distinct x and y here.
 */
export interface MapColumns {
	x: number[];
	y: number[];
	/** Newest reading's temperature and standard uncertainty (K); null without a temperature. */
	t: (number | null)[];
	u: (number | null)[];
	id: string[];
}

export interface MapGrid {
	xs: number[];
	ys: number[];
	/** Row by row (y outer), xs.length × ys.length cells; null where nothing was measured. */
	t: (number | null)[];
	u: (number | null)[];
	ids: (string | null)[];
}

export function mapGrid(c: MapColumns): MapGrid {
	const xs = [...new Set(c.x)].sort((a, b) => a - b);
	const ys = [...new Set(c.y)].sort((a, b) => a - b);
	const ix = new Map(xs.map((x, i) => [x, i]));
	const iy = new Map(ys.map((y, i) => [y, i]));
	const cells = xs.length * ys.length;
	const t: (number | null)[] = Array(cells).fill(null);
	const u: (number | null)[] = Array(cells).fill(null);
	const ids: (string | null)[] = Array(cells).fill(null);
	for (let i = 0; i < c.id.length; i++) {
		const cell = iy.get(c.y[i])! * xs.length + ix.get(c.x[i])!;
		ids[cell] = c.id[i];
		t[cell] = c.t[i];
		u[cell] = c.u[i];
	}
	return { xs, ys, t, u, ids };
}
