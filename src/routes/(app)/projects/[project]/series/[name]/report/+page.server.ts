import { requireProject } from '$lib/server/access';
import { seriesReadings } from '$lib/server/measurements/export';
import { load as seriesPage } from '../+page.server';
import type { PageData as SeriesPageData } from '../$types';
import type { PageServerLoad } from './$types';

/** Rows beyond this are left to the CSV export: a printed table of a 100 × 100 map is no use. */
const TABLE_ROWS = 500;

/**
 * The printable report of a series: the series page's own figures (its load, so report and page
 * never disagree) and the rows of the readings export.
 */
export const load: PageServerLoad = async (event) => {
	const { project } = await requireProject(event, 'read');
	const [figures, found] = await Promise.all([
		// The same route parameters; the page's load guards access and 404s an unknown series.
		seriesPage(event as unknown as Parameters<typeof seriesPage>[0]) as Promise<SeriesPageData>,
		seriesReadings(project.id, event.params.name)
	]);
	// What only the page's forms need stays out of the report.
	const { candidates: _candidates, subscribed: _subscribed, ...shown } = figures;
	return {
		...shown,
		rows: (found?.rows ?? []).slice(0, TABLE_ROWS),
		printedAt: new Date()
	};
};
