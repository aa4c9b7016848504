import { error } from '@sveltejs/kit';
import Papa from 'papaparse';
import { requireProject } from '$lib/server/access';
import { CSV_COLUMNS, csvRow } from '$lib/server/measurements/export';
import type { BudgetRow, Reading } from '$lib/thermometry/types';
import { measurementWithReading } from '../reading.server';
import type { RequestHandler } from './$types';

const BUDGET_COLUMNS = [
	'input',
	'label',
	'value',
	'unit',
	'standard_uncertainty',
	'sensitivity',
	'contribution_k',
	'variance_share'
] as const;

/**
 * One reading as CSV: first the row the project export gives it (same columns), then, after a
 * blank line, its uncertainty budget, so a spreadsheet gets both without a second file.
 */
export const GET: RequestHandler = async (event) => {
	const { project } = await requireProject(event, 'read');
	const { measurement: m, reading } = await measurementWithReading(
		project.id,
		event.params.id,
		event.url.searchParams.get('reading')
	);
	if (!reading) error(404, 'This measurement has no reading yet.');
	const r = reading.result as unknown as Reading;
	const summary = Papa.unparse({ fields: [...CSV_COLUMNS], data: [csvRow(m, reading)] });
	const budget = Papa.unparse({
		fields: [...BUDGET_COLUMNS],
		data: (r.budget ?? []).map((b: BudgetRow) => BUDGET_COLUMNS.map((c) => b[c]))
	});
	return new Response(`${summary}\r\n\r\n${budget}\r\n`, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="reading-${reading.id}.csv"`
		}
	});
};
