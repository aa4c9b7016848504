/**
 * The kind of a series decides its view: a control chart (batch), the zero-power extrapolation
 * (power-sweep), a temperature map (map) or a trend against time (time). A series named by a
 * measurement before anyone created it gets a kind guessed from what its measurements carry;
 * a member can change it afterwards.
 */
export const SERIES_KINDS = ['batch', 'power-sweep', 'map', 'time'] as const;
export type SeriesKind = (typeof SERIES_KINDS)[number];

export const KIND_NAME: Record<SeriesKind, string> = {
	batch: 'Batch control chart',
	'power-sweep': 'Power sweep',
	map: 'Temperature map',
	time: 'Time trend'
};

/** How many of a series' measurements carry each piece of metadata that hints at its kind. */
export interface SeriesProfile {
	measurements: number;
	/** With both x and y. */
	placed: number;
	/** With a batch label. */
	batched: number;
	/** Distinct laser powers. */
	powers: number;
	/** With a laser power. */
	powered: number;
	/** With an acquisition time. */
	timed: number;
}

/**
 * Positions on most measurements make a map (a map's cells usually share one laser power, so
 * this comes first); batch labels a batch series; laser powers that differ, or a power on the
 * only measurement so far, a sweep; acquisition times alone a time series; anything else batch.
 */
export function inferSeriesKind(p: SeriesProfile): SeriesKind {
	const most = (n: number) => n > 0 && n * 2 >= p.measurements;
	if (p.placed >= 1 && most(p.placed)) return 'map';
	if (most(p.batched)) return 'batch';
	if (p.powers >= 2 || (p.measurements === 1 && p.powered === 1)) return 'power-sweep';
	if (most(p.timed)) return 'time';
	return 'batch';
}
