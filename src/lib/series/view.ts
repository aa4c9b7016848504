/** Which view a series gets, from what its measurements carry (series have no kind yet). */
export type SeriesView = 'map' | 'power-sweep' | 'control-chart';

export const VIEW_NAME: Record<SeriesView, string> = {
	map: 'Temperature map',
	'power-sweep': 'Power sweep',
	'control-chart': 'Control chart'
};

/** Positions on most measurements make a map; two or more distinct laser powers a sweep. */
export function seriesView(c: {
	measurements: number;
	placed: number;
	powers: number;
}): SeriesView {
	if (c.placed >= 2 && c.placed * 2 >= c.measurements) return 'map';
	if (c.powers >= 2) return 'power-sweep';
	return 'control-chart';
}
